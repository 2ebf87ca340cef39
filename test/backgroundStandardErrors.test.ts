import { describe, expect, it } from "vitest";
import { fitMixture } from "../src/engine/fitMixture";
import { standardErrors } from "../src/engine/standardErrors";
import { createRandom } from "../src/engine/random";
import { selectRows } from "../src/engine/rowSubset";
import type { RegressionData } from "../src/engine/mixtureTypes";

/**
 * Invented data: two groups of 150 rows each (y = 2 + 3x and y = 20 − 2x, noise SD about
 * 0.5), x uniform on [0, 10]; row 137's y replaced by 1,000,000 as a typing slip would.
 */
function twoGroupsWithTypo(): RegressionData {
  const n = 300;
  const random = createRandom(5);
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    x[i] = 10 * random.next();
    const noise = (random.next() + random.next() + random.next() - 1.5) * 1;
    y[i] = i % 2 === 1 ? 2 + 3 * x[i] + noise : 20 - 2 * x[i] + noise;
  }
  y[137] = 1_000_000;
  return { x, y, n, p: 1 };
}

describe("standard errors of a fit with a background component", () => {
  const data = twoGroupsWithTypo();
  const withBackground = fitMixture(data, { k: 2, seed: 1, background: true });
  const kept = Int32Array.from({ length: data.n - 1 }, (_, i) => (i < 137 ? i : i + 1));
  const rest = selectRows(data, kept);
  const withoutRow = fitMixture(rest, { k: 2, seed: 1, background: false });

  it("the row the background owns adds no information: the errors match the fit without that row", () => {
    expect(withBackground.background!.memberships[137]).toBeGreaterThan(0.99);
    const a = standardErrors(data, withBackground);
    const b = standardErrors(rest, withoutRow);
    // Match components by slope (the invented truth: 3 and −2).
    const order = (fit: typeof withBackground): number[] => fit.components.map((_, c) => c).sort((c, d) => fit.components[c].coefficients[1] - fit.components[d].coefficients[1]);
    const oa = order(withBackground);
    const ob = order(withoutRow);
    for (let m = 0; m < 2; m++) {
      const ca = oa[m];
      const cb = ob[m];
      // Before the background's share was counted, the typo's squared residual made the noise
      // SD of its nearest component look known to 1e-7 (about 6e-7 against 0.07).
      expect(a.sigmas[ca] / b.sigmas[cb]).toBeGreaterThan(0.95);
      expect(a.sigmas[ca] / b.sigmas[cb]).toBeLessThan(1.05);
      for (let j = 0; j < 2; j++) {
        expect(a.coefficients[ca][j] / b.coefficients[cb][j]).toBeGreaterThan(0.95);
        expect(a.coefficients[ca][j] / b.coefficients[cb][j]).toBeLessThan(1.05);
      }
      expect(a.weights[ca] / b.weights[cb]).toBeGreaterThan(0.95);
      expect(a.weights[ca] / b.weights[cb]).toBeLessThan(1.05);
    }
  });
});
