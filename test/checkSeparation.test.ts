import { describe, expect, it } from "vitest";
import { checkSeparation, OVERLAP_GAP } from "../src/engine/checkSeparation";
import { formatNumber } from "../src/report/formatNumber";
import type { MixtureComponent, MixtureFit, RegressionData } from "../src/engine/mixtureTypes";

/** A hand-built fit (invented demo values) over the given memberships. */
function handFit(components: MixtureComponent[], memberships: number[], n: number): MixtureFit {
  const k = components.length;
  return {
    k, n, p: 1, q: 2, intercept: true, model: "plain", components,
    memberships: Float64Array.from(memberships), labels: new Int32Array(n), logLikelihood: 0, parameterCount: 0, bic: 0, icl: 0,
    warmStart: { converged: true, method: "hand", certificate: NaN, startsTried: 0, disagreement: 0 },
    refinement: { converged: true, iterations: 0, logLikelihoodPath: [] }, warnings: [], seed: 1,
  };
}

// x = −1, 1, −1, 1: Ê[(1, x)(1, x)ᵀ] = I (derivation: mean x = 0, mean x² = 1).
const data: RegressionData = { y: Float64Array.from([0, 0, 0, 0]), x: Float64Array.from([-1, 1, -1, 1]), n: 4, p: 1 };

describe("checkSeparation", () => {
  it("gap, misclassification and normalised entropy follow their formulas (derivations in the test)", () => {
    const fit = handFit(
      [
        { weight: 0.5, sigma: 1, coefficients: Float64Array.from([0, 1]) },
        { weight: 0.5, sigma: Math.sqrt(7), coefficients: Float64Array.from([3, 5]) },
      ],
      [1, 0, 0, 1, 0.75, 0.25, 0.5, 0.5],
      4,
    );
    const report = checkSeparation(data, fit);
    // Gap: Δβ = (3, 4), Ê[xxᵀ] = I → sqrt(9 + 16) = 5; noise sqrt((1 + 7)/2) = 2 → 2.5.
    expect(report.pairs).toHaveLength(1);
    expect(report.pairs[0].gap).toBeCloseTo(2.5, 12);
    expect(report.minGap).toBeCloseTo(2.5, 12);
    // Misclassification (Basford & McLachlan 1985): 1 − mean(1, 1, 0.75, 0.5) = 0.1875.
    expect(report.misclassification).toBeCloseTo(0.1875, 12);
    // EN = −(0.75 ln 0.75 + 0.25 ln 0.25) − ln 0.5; normalised 1 − EN / (4 ln 2).
    const entropy = -(0.75 * Math.log(0.75) + 0.25 * Math.log(0.25)) + Math.log(2);
    expect(report.normalisedEntropy).toBeCloseTo(1 - entropy / (4 * Math.log(2)), 12);
    expect(report.smallestWeight).toBe(0.5);
    // 18.75% > 10%: the labels warning; gap 2.5 ≥ 2: no overlap warning.
    expect(report.warnings.some((w) => /Misassigned rows are estimated at/.test(w))).toBe(true);
    expect(report.warnings.some((w) => /overlap/.test(w))).toBe(false);
  });

  it("warns in plain words when two components overlap (gap below the stated threshold)", () => {
    const fit = handFit(
      [
        { weight: 0.5, sigma: 1, coefficients: Float64Array.from([0, 1]) },
        { weight: 0.5, sigma: 1, coefficients: Float64Array.from([1, 1]) },
      ],
      [0.6, 0.4, 0.4, 0.6, 0.6, 0.4, 0.4, 0.6],
      4,
    );
    const report = checkSeparation(data, fit);
    // Gap 1 (Δβ = (1, 0), noise 1) is below OVERLAP_GAP = 2.
    expect(report.minGap).toBeCloseTo(1, 12);
    expect(report.minGap).toBeLessThan(OVERLAP_GAP);
    expect(report.warnings.find((w) => /Components 1 and 2 overlap/.test(w))).toMatch(/fewer components/);
    // The gap reads as in the checks beside it (four significant digits), not at a second precision.
    expect(report.warnings.find((w) => /Components 1 and 2 overlap/.test(w))).toContain(`only ${formatNumber(report.minGap)} noise SDs`);
  });

  it("flags a component with too few rows: weight·n below q + 2 rows", () => {
    // 100 rows; component 2 holds 3 of them for q = 2 coefficients (3 < 2 + 2).
    const n = 100;
    const memberships: number[] = [];
    for (let i = 0; i < n; i++) memberships.push(i < 97 ? 1 : 0, i < 97 ? 0 : 1);
    const x = Float64Array.from({ length: n }, (_, i) => (i % 2 === 0 ? -1 : 1));
    const fit = handFit(
      [
        { weight: 0.97, sigma: 1, coefficients: Float64Array.from([0, 1]) },
        { weight: 0.03, sigma: 1, coefficients: Float64Array.from([10, 1]) },
      ],
      memberships,
      n,
    );
    const report = checkSeparation({ y: new Float64Array(n), x, n, p: 1 }, fit);
    expect(report.smallestWeight).toBe(0.03);
    expect(report.warnings.find((w) => /Too few rows: component 2/.test(w))).toBeDefined();
  });

  it("one component: minGap Infinity, normalised entropy 1, no warnings (definitions in trustTypes)", () => {
    const fit = handFit([{ weight: 1, sigma: 1, coefficients: Float64Array.from([0, 1]) }], [1, 1, 1, 1], 4);
    const report = checkSeparation(data, fit);
    expect(report.minGap).toBe(Infinity);
    expect(report.normalisedEntropy).toBe(1);
    expect(report.misclassification).toBe(0);
    expect(report.warnings).toEqual([]);
  });
});
