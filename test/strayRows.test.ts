import { describe, expect, it } from "vitest";
import { findStrayRows, strayBound, strayRowsRule, upperNormalQuantile } from "../src/engine/strayRows";
import { fitMixture } from "../src/engine/fitMixture";
import { createRandom } from "../src/engine/random";
import type { MixtureFit, RegressionData } from "../src/engine/mixtureTypes";

describe("the stray-row bound", () => {
  it("is the upper normal quantile of standard tables", () => {
    // Standard normal table values: z(0.025) = 1.959964, z(0.005) = 2.575829, z(0.05) = 1.644854.
    expect(upperNormalQuantile(0.025)).toBeCloseTo(1.959964, 5);
    expect(upperNormalQuantile(0.005)).toBeCloseTo(2.575829, 5);
    expect(upperNormalQuantile(0.05)).toBeCloseTo(1.644854, 5);
  });

  it("is the Bonferroni bound z(0.05 / 2n), growing slowly with n", () => {
    expect(strayBound(1)).toBeCloseTo(1.959964, 5);
    // z(0.05 / 20) = z(0.0025) = 2.807034 (standard normal table).
    expect(strayBound(10)).toBeCloseTo(2.807034, 5);
    expect(strayBound(300)).toBeGreaterThan(3.7);
    expect(strayBound(300)).toBeLessThan(3.8);
    expect(strayBound(1e6)).toBeLessThan(6);
    expect(strayRowsRule(300)).toContain("more than 3.76 noise SDs from every component");
  });
});

/** Invented: y = 1 + 2x + noise (SD 0.5) on 200 rows, x in [0, 10]. */
function oneLine(seed: number): RegressionData {
  const n = 200;
  const random = createRandom(seed);
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    x[i] = 10 * random.next();
    y[i] = 1 + 2 * x[i] + 0.5 * random.normal();
  }
  return { x, y, n, p: 1 };
}

describe("findStrayRows", () => {
  it("names a typed-in value at K = 1 and nothing else", () => {
    const data = oneLine(3);
    data.y[42] = 1e6;
    const report = findStrayRows(data, fitMixture(data, { k: 1 }));
    expect(report.rows.map((r) => r.row)).toEqual([42]);
    expect(report.rows[0].distance).toBeGreaterThan(report.bound);
  });

  it("finds none in most clean samples (the bound holds the familywise rate near 5%)", () => {
    let flagged = 0;
    for (let seed = 1; seed <= 20; seed++) {
      const data = oneLine(seed);
      if (findStrayRows(data, fitMixture(data, { k: 1 })).rows.length > 0) flagged++;
    }
    // About 1 in 20 clean samples is expected to show one; 4 or more would be 1 in 60 (binomial).
    expect(flagged).toBeLessThanOrEqual(3);
  });

  it("a row must be far from every component, and an exact component explains only its own rows", () => {
    const data: RegressionData = { x: Float64Array.from([0, 1, 2, 3]), y: Float64Array.from([0, 1, 2, 30]), n: 4, p: 1 };
    const fit = {
      k: 2,
      components: [
        { weight: 0.5, sigma: 0, coefficients: Float64Array.from([0, 1]) },
        { weight: 0.5, sigma: 1, coefficients: Float64Array.from([28, 0]) },
      ],
    } as unknown as MixtureFit;
    const report = findStrayRows(data, fit);
    // Rows 0-2 lie on the exact line; row 3 is 2 SDs from component 2 (within the bound 2.50 for n = 4).
    expect(report.rows).toEqual([]);
    data.y[3] = 40;
    expect(findStrayRows(data, fit).rows).toEqual([{ row: 3, distance: 12, nearest: 1 }]);
  });

  it("does not overflow for values near the largest doubles", () => {
    const data: RegressionData = { x: Float64Array.from([1e300, -1e300]), y: Float64Array.from([1.5e308, -1.5e308]), n: 2, p: 1 };
    const fit = { k: 1, components: [{ weight: 1, sigma: 1e307, coefficients: Float64Array.from([0, 1.5e8]) }] } as unknown as MixtureFit;
    const report = findStrayRows(data, fit);
    expect(report.rows).toEqual([]);
  });
});
