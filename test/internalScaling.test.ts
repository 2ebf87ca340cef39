import { describe, expect, it } from "vitest";
import { fitMixture } from "../src/engine/fitMixture";
import { standardErrors } from "../src/engine/standardErrors";
import { checkSeparation } from "../src/engine/checkSeparation";
import { scanComponents } from "../src/engine/scanComponents";
import { findStrayRows } from "../src/engine/strayRows";
import { isExactFit } from "../src/engine/exactFit";
import { createRandom } from "../src/engine/random";
import type { MixtureFit, RegressionData } from "../src/engine/mixtureTypes";

/** Invented: two lines, y = 1 + 2x and y = 8 − 1.5x (noise SD 0.3), 80 rows each, x in [0, 10]. */
function twoLines(): RegressionData {
  const random = createRandom(5);
  const n = 160;
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    x[i] = 10 * random.next();
    y[i] = (i < 80 ? 1 + 2 * x[i] : 8 - 1.5 * x[i]) + 0.3 * random.normal();
  }
  return { x, y, n, p: 1 };
}

function times(data: RegressionData, yFactor: number, xFactor: number): RegressionData {
  return { ...data, y: data.y.map((v) => v * yFactor), x: data.x.map((v) => v * xFactor) };
}

function allFinite(fit: MixtureFit): boolean {
  const numbers = [fit.logLikelihood, fit.bic, fit.icl, ...fit.components.flatMap((c) => [c.weight, c.sigma, ...c.coefficients])];
  return numbers.every(Number.isFinite);
}

describe("internal scaling of values far from 1", () => {
  const base = twoLines();
  const fit = fitMixture(base, { k: 2, seed: 3 });

  for (const factor of [1e150, 1e-150]) {
    it(`a problem multiplied by ${factor} gives the same labels and the coefficients, SDs and log-likelihood mapped back`, () => {
      const scaled = fitMixture(times(base, factor, factor), { k: 2, seed: 3 });
      expect(allFinite(scaled)).toBe(true);
      expect(Array.from(scaled.labels)).toEqual(Array.from(fit.labels));
      for (let c = 0; c < 2; c++) {
        // Slopes keep their value (y and x scaled alike); intercepts and SDs scale with y.
        expect(scaled.components[c].coefficients[1]).toBeCloseTo(fit.components[c].coefficients[1], 6);
        expect(scaled.components[c].coefficients[0] / factor).toBeCloseTo(fit.components[c].coefficients[0], 6);
        expect(scaled.components[c].sigma / factor).toBeCloseTo(fit.components[c].sigma, 6);
      }
      // ln L changes by −n ln(factor) (the Jacobian of y ↦ factor·y), BIC by twice the opposite.
      expect(scaled.logLikelihood).toBeCloseTo(fit.logLikelihood - base.n * Math.log(factor), 4);
      expect(scaled.bic).toBeCloseTo(fit.bic + 2 * base.n * Math.log(factor), 4);
    });
  }

  it("standard errors and separation come back in the data's units (1e150) or unchanged (gaps)", () => {
    const big = times(base, 1e150, 1e150);
    const bigFit = fitMixture(big, { k: 2, seed: 3 });
    const errors = standardErrors(big, bigFit);
    const reference = standardErrors(base, fit);
    for (let c = 0; c < 2; c++) {
      expect(errors.coefficients[c][0] / 1e150).toBeCloseTo(reference.coefficients[c][0], 6);
      expect(errors.coefficients[c][1]).toBeCloseTo(reference.coefficients[c][1], 6);
      expect(errors.sigmas[c] / 1e150).toBeCloseTo(reference.sigmas[c], 6);
      expect(errors.weights[c]).toBeCloseTo(reference.weights[c], 6);
    }
    expect(checkSeparation(big, bigFit).minGap).toBeCloseTo(checkSeparation(base, fit).minGap, 6);
  });

  it("values from 1e-300 to 1e300 never crash and never give an infinite log-likelihood", () => {
    for (const factor of [1e300, 1e-300, 1e200]) {
      for (const k of [1, 2, 3]) {
        const data = times(base, factor, 1);
        const result = fitMixture(data, { k, seed: 1, background: "auto" });
        expect(allFinite(result)).toBe(true);
        expect(Number.isFinite(checkSeparation(data, result).misclassification)).toBe(true);
      }
    }
    // Predictors spanning 1e-300 to 1e300 in one design.
    const mixed = { ...base, p: 2, x: Float64Array.from({ length: base.n * 2 }, (_, i) => (i % 2 === 0 ? base.x[i >> 1] * 1e300 : base.x[i >> 1] * 1e-300 + (i % 7) * 1e-301)) };
    expect(allFinite(fitMixture(mixed, { k: 2, seed: 1 }))).toBe(true);
  });

  it("one y of 1e154 among ordinary values: no crash at K >= 2, finite log-likelihood at K = 1, and the row named as stray", () => {
    const data = { ...base, y: base.y.slice() };
    data.y[17] = 1e154;
    for (const k of [1, 2, 3]) {
      expect(allFinite(fitMixture(data, { k, seed: 1 }))).toBe(true);
      const result = fitMixture(data, { k, seed: 1, background: "auto" });
      expect(allFinite(result)).toBe(true);
      if (k === 2) expect(findStrayRows(data, result).rows.map((r) => r.row)).toContain(17);
    }
    const scan = scanComponents(data, { kMax: 3, seed: 1, background: "auto" });
    expect(scan.rows.every((row) => Number.isFinite(row.bic))).toBe(true);
  });
  it("one y of 1e154 among ordinary values: K = 2 with a background still finds both invented lines and their noise, not an exact fit", () => {
    const data = { ...base, y: base.y.slice() };
    data.y[17] = 1e154;
    const result = fitMixture(data, { k: 2, seed: 1, background: "auto" });
    // The invented truth: slopes 2 and −1.5, noise SD 0.3. Before, the 1e154 set the scale
    // and the floors, and both components came out as one line with noise "about 0".
    const slopes = result.components.map((c) => c.coefficients[1]).sort((a, b) => a - b);
    expect(slopes[0]).toBeCloseTo(-1.5, 1);
    expect(slopes[1]).toBeCloseTo(2, 1);
    for (const component of result.components) {
      expect(component.sigma).toBeGreaterThan(0.2);
      expect(component.sigma).toBeLessThan(0.4);
    }
    expect(isExactFit(result, data.y)).toBe(false);
    expect(result.background!.memberships[17]).toBeGreaterThan(0.99);
  });

  it("one y of 1e154 with a background: standard errors as without that row, and the row's distance in the fit's own noise SDs", () => {
    const data = { ...base, y: base.y.slice() };
    data.y[17] = 1e154;
    const result = fitMixture(data, { k: 2, seed: 1, background: "auto" });
    const errors = standardErrors(data, result);
    // Before, the 1e154 row made every standard error "not available" (0 times an overflowed
    // square is NaN), with a warning that the fit was not at a clear peak.
    expect(errors.warnings).toEqual([]);
    const kept = Int32Array.from({ length: data.n - 1 }, (_, i) => (i < 17 ? i : i + 1));
    const rest: RegressionData = { n: data.n - 1, p: 1, x: Float64Array.from(kept, (i) => data.x[i]), y: Float64Array.from(kept, (i) => data.y[i]) };
    const restFit = fitMixture(rest, { k: 2, seed: 1, background: false });
    const restErrors = standardErrors(rest, restFit);
    const bySlope = (fit: MixtureFit) => [0, 1].sort((a, b) => fit.components[a].coefficients[1] - fit.components[b].coefficients[1]);
    const [a, b] = [bySlope(result), bySlope(restFit)];
    for (let m = 0; m < 2; m++) {
      expect(errors.sigmas[a[m]] / restErrors.sigmas[b[m]]).toBeCloseTo(1, 1);
      for (let j = 0; j < 2; j++) expect(errors.coefficients[a[m]][j] / restErrors.coefficients[b[m]][j]).toBeCloseTo(1, 1);
    }
    // 1e154 away from lines near 10 with noise SD 0.3: about 3e154 noise SDs (before, a floor
    // set by the plain spread of y, 1e143, made it 1e11).
    const stray = findStrayRows(data, result).rows.find((r) => r.row === 17)!;
    expect(stray.distance).toBeGreaterThan(1e154);
  });

  it("y near 1e200 throughout with ordinary relative noise is not an exact fit (its variance overflows)", () => {
    const data = times(base, 1e200, 1);
    const result = fitMixture(data, { k: 2, seed: 3 });
    // Noise SD about 0.3e200 against a spread of about 5e200: far from exact. Before, the
    // plain variance of y was Infinity and every noise SD counted as "about 0".
    expect(isExactFit(result, data.y)).toBe(false);
  });
});
