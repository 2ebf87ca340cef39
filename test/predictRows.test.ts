import { describe, expect, it } from "vitest";
import { predictRows } from "../src/engine/predictRows";
import type { MixtureFit } from "../src/engine/mixtureTypes";

/** A hand-built fit (invented demo values) with only the fields prediction reads filled in meaningfully. */
function handFit(model: "plain" | "joint"): MixtureFit {
  const joint = model === "joint";
  return {
    k: 2, n: 0, p: 1, q: 2, intercept: true, model,
    components: [
      { weight: 0.25, sigma: 1, coefficients: Float64Array.from([1, 2]), ...(joint ? { xMean: Float64Array.from([0]), xCovariance: Float64Array.from([1]) } : {}) },
      { weight: 0.75, sigma: 2, coefficients: Float64Array.from([-1, 0.5]), ...(joint ? { xMean: Float64Array.from([4]), xCovariance: Float64Array.from([1]) } : {}) },
    ],
    memberships: new Float64Array(0), labels: new Int32Array(0), logLikelihood: 0, parameterCount: 0, bic: 0, icl: 0,
    warmStart: { converged: true, method: "hand", certificate: NaN, startsTried: 0, disagreement: 0 },
    refinement: { converged: true, iterations: 0, logLikelihoodPath: [] }, warnings: [], seed: 1,
  };
}

describe("predictRows", () => {
  it("plain model: memberships are the weights; prediction and spread follow the mixture formulas (derivation in the test)", () => {
    const prediction = predictRows(handFit("plain"), Float64Array.from([2]), 1);
    // Component predictions at x = 2: 1 + 2·2 = 5 and −1 + 0.5·2 = 0.
    expect(Array.from(prediction.perComponent)).toEqual([5, 0]);
    expect(Array.from(prediction.memberships)).toEqual([0.25, 0.75]);
    // Weighted: 0.25·5 + 0.75·0 = 1.25; spread² = 0.25(1 + 3.75²) + 0.75(4 + 1.25²) = 8.6875.
    expect(prediction.weighted[0]).toBeCloseTo(1.25, 12);
    expect(prediction.spread[0]).toBeCloseTo(Math.sqrt(0.25 * (1 + 3.75 ** 2) + 0.75 * (4 + 1.25 ** 2)), 12);
  });

  it("joint model: P(k | x) ∝ π_k φ(x; μ_k, Σ_k) (derivation in the test)", () => {
    const prediction = predictRows(handFit("joint"), Float64Array.from([2, 0, 40]), 3);
    // x = 2 is midway between the means 0 and 4 with equal variances, so the densities are
    // equal and P(k | x) = π_k.
    expect(prediction.memberships[0]).toBeCloseTo(0.25, 12);
    // x = 0: ratio P1/P2 = (0.25/0.75) · exp(−0/2 + 16/2) = e⁸/3.
    const ratio = prediction.memberships[2] / prediction.memberships[3];
    expect(ratio).toBeCloseTo(Math.exp(8) / 3, 6);
    // x = 40 is 36 SDs from component 2 and 40 from component 1: log space keeps it finite.
    expect(prediction.memberships[5]).toBeCloseTo(1, 12);
    expect(Number.isFinite(prediction.weighted[2])).toBe(true);
    expect(prediction.weighted[2]).toBeCloseTo(-1 + 0.5 * 40, 9);
  });

  it("rejects a new-row block of the wrong size with a message naming the counts", () => {
    expect(() => predictRows(handFit("plain"), Float64Array.from([1, 2, 3]), 2)).toThrow(/3 values/);
  });
});
