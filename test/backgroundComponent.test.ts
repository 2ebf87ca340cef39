import { describe, expect, it } from "vitest";
import { fitMixture } from "../src/engine/fitMixture";
import { scanComponents } from "../src/engine/scanComponents";
import { createRandom } from "../src/engine/random";
import type { RegressionData } from "../src/engine/mixtureTypes";
import { backgroundLogDensity } from "../src/engine/mixture/backgroundComponent";

/**
 * Invented data: two groups of n / 2 rows each (y = 2 + 3x on odd rows and y = 20 − x on even
 * ones, noise SD about 0.4), x uniform on [0, 10].
 */
function twoGroups(n: number, seed: number): RegressionData {
  const random = createRandom(seed);
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    x[i] = 10 * random.next();
    const noise = (random.next() + random.next() + random.next() - 1.5) * 0.8;
    y[i] = i % 2 === 1 ? 2 + 3 * x[i] + noise : 20 - x[i] + noise;
  }
  return { x, y, n, p: 1 };
}

/** twoGroups on 300 rows, `typoRow`'s y replaced by 1,000,000 as a typing slip would. */
function twoGroupsWithTypo(typoRow: number | null, seed = 11): RegressionData {
  const data = twoGroups(300, seed);
  if (typoRow !== null) data.y[typoRow] = 1_000_000;
  return data;
}

describe("background component (uniform noise component, Banfield & Raftery 1993)", () => {
  const typoRow = 137;
  const data = twoGroupsWithTypo(typoRow);

  it("a one-component fit with it that stops early says so like any other fit, naming no control the host may lack", () => {
    const fit = fitMixture(data, { k: 1, seed: 1, background: true, maxIterations: 1 });
    expect(fit.refinement.converged).toBe(false);
    const warning = fit.warnings.find((w) => /stopped after/.test(w));
    // Hosts recognise "Not converged:" and add their own control (--max-iterations, the max_iterations setting).
    expect(warning).toMatch(/^Not converged: the fit stopped after 1 iteration /);
    expect(warning).not.toMatch(/max_iterations|tolerance/);
  });

  it("without it, the one typed-in value takes a component (the failure it exists for)", () => {
    const fit = fitMixture(data, { k: 2, seed: 1 });
    const smallest = Math.min(...fit.components.map((c) => c.weight));
    expect(smallest * data.n).toBeLessThan(3);
  });

  it("with it, K = 2 recovers both groups and gives the typo to the background", () => {
    const fit = fitMixture(data, { k: 2, seed: 1, background: true });
    const slopes = fit.components.map((c) => c.coefficients[1]).sort((a, b) => a - b);
    // The invented truth: slopes −1 and 3.
    expect(slopes[0]).toBeCloseTo(-1, 1);
    expect(slopes[1]).toBeCloseTo(3, 1);
    expect(fit.background).toBeDefined();
    expect(fit.background!.memberships[typoRow]).toBeGreaterThan(0.99);
    // About one row in 300 is background; the weights and π₀ sum to 1.
    expect(fit.background!.weight).toBeGreaterThan(0.5 / 300);
    expect(fit.background!.weight).toBeLessThan(5 / 300);
    const total = fit.components.reduce((s, c) => s + c.weight, 0) + fit.background!.weight;
    expect(total).toBeCloseTo(1, 9);
    // Every row's memberships, background included, sum to 1.
    for (let i = 0; i < data.n; i++) {
      const rowTotal = fit.memberships[2 * i] + fit.memberships[2 * i + 1] + fit.background!.memberships[i];
      expect(rowTotal).toBeCloseTo(1, 12);
    }
  });

  it("counts one more free parameter (π₀) in the BIC", () => {
    const plain = fitMixture(data, { k: 2, seed: 1 });
    const withBackground = fitMixture(data, { k: 2, seed: 1, background: true });
    expect(withBackground.parameterCount).toBe(plain.parameterCount + 1);
    expect(withBackground.bic).toBeCloseTo(-2 * withBackground.logLikelihood + withBackground.parameterCount * Math.log(data.n), 6);
  });

  it("the scan suggests K = 2 with the background and K = 1 without it", () => {
    expect(scanComponents(data, { kMax: 4, seed: 1 }).chosenK).toBe(1);
    expect(scanComponents(data, { kMax: 4, seed: 1, background: true }).chosenK).toBe(2);
  });

  it('"auto" adds the background only when the fit without it shows far-off rows, keeping the smaller BIC', () => {
    const auto = fitMixture(data, { k: 2, seed: 1, background: "auto" });
    expect(auto.background).toBeDefined();
    expect(auto.background!.memberships[typoRow]).toBeGreaterThan(0.99);
    expect(scanComponents(data, { kMax: 4, seed: 1, background: "auto" }).chosenK).toBe(2);
    // Clean data: exactly the fit without a background (same log-likelihood, no background).
    const clean = twoGroupsWithTypo(null);
    const plain = fitMixture(clean, { k: 2, seed: 1 });
    const cleanAuto = fitMixture(clean, { k: 2, seed: 1, background: "auto" });
    expect(cleanAuto.background).toBeUndefined();
    expect(cleanAuto.logLikelihood).toBe(plain.logLikelihood);
  });

  it('"auto" ends a trial with the background once it cannot come below the plain fit\'s BIC, and makes the choice a full trial makes', () => {
    // Invented sheets: the two groups on n rows, row 7 moved `shift` off its own line (about
    // 4.7, 5.5 and 7.5 noise SDs, and a typing slip); all are stray rows, so "auto" tries the
    // background, which wins by BIC on the last two only.
    const sheet = (n: number, shift: number): RegressionData => {
      const data = twoGroups(n, 5);
      data.y[7] = 2 + 3 * data.x[7] + shift;
      return data;
    };
    const chosen: boolean[] = [];
    for (const shift of [1.9, 2.2, 3, 1e6]) {
      const data = sheet(3000, shift);
      const auto = fitMixture(data, { k: 2, seed: 1, background: "auto" });
      const plain = fitMixture(data, { k: 2, seed: 1, background: false });
      const full = fitMixture(data, { k: 2, seed: 1, background: true });
      const fullChoice = full.bic < plain.bic ? full : plain;
      chosen.push(auto.background !== undefined);
      expect(auto.background !== undefined).toBe(fullChoice.background !== undefined);
      // The same fit; a leader's run the trial ended early may leave the last bits different.
      expect(Math.abs(auto.logLikelihood - fullChoice.logLikelihood)).toBeLessThan(1e-9 * Math.abs(fullChoice.logLikelihood));
    }
    expect(chosen).toEqual([false, false, true, true]);
    // On 20,000 rows the trial's refinement is ended: the plain fit is kept as it was.
    const large = sheet(20000, 2);
    const plain = fitMixture(large, { k: 2, seed: 1, background: false });
    const trial = fitMixture(large, { k: 2, seed: 1, background: true, mattersBelowBic: { bic: plain.bic, reason: "test" } });
    expect(trial.refinement.stopped).toBe("test");
    const auto = fitMixture(large, { k: 2, seed: 1, background: "auto" });
    expect(auto.background).toBeUndefined();
    expect(auto.logLikelihood).toBe(plain.logLikelihood);
  });

  it("K = 1 with a background is a weighted least-squares fit that ignores the typo", () => {
    const oneGroup = twoGroupsWithTypo(typoRow);
    // Keep only the first group (even rows) and the typo.
    const rows = Array.from({ length: oneGroup.n }, (_, i) => i).filter((i) => i % 2 === 0 || i === typoRow);
    const subset: RegressionData = { x: Float64Array.from(rows, (i) => oneGroup.x[i]), y: Float64Array.from(rows, (i) => oneGroup.y[i]), n: rows.length, p: 1 };
    const fit = fitMixture(subset, { k: 1, background: true });
    expect(fit.components[0].coefficients[1]).toBeCloseTo(-1, 1);
    expect(fit.components[0].sigma).toBeLessThan(1);
    expect(Number.isFinite(fit.logLikelihood)).toBe(true);
  });

  it("on clean data the background stays nearly empty and the components hardly move", () => {
    const clean = twoGroupsWithTypo(null);
    const plain = fitMixture(clean, { k: 2, seed: 1 });
    const withBackground = fitMixture(clean, { k: 2, seed: 1, background: true });
    expect(withBackground.background!.weight).toBeLessThan(0.01);
    for (let c = 0; c < 2; c++) {
      expect(withBackground.components[c].coefficients[1]).toBeCloseTo(plain.components[c].coefficients[1], 1);
    }
  });

  it("its flat density is one over the range of y (times each predictor's range in the joint model)", () => {
    const y = Float64Array.from([3, -1, 7]);
    const x = Float64Array.from([0, 1, 2, 10, 4, 5]);
    // Ranges: y 8; predictor 1 from 0, 2, 4 = 4; predictor 2 from 1, 10, 5 = 9.
    expect(backgroundLogDensity(y, 3, null, 2)).toBeCloseTo(-Math.log(8), 12);
    expect(backgroundLogDensity(y, 3, x, 2)).toBeCloseTo(-Math.log(8 * 4 * 9), 12);
  });
});
