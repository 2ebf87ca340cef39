import { describe, expect, it } from "vitest";
import { scaledCholeskySolve, choleskyScratchLength } from "../src/engine/cholesky";
import { constrainedVariances } from "../src/engine/mixture/constrainedVariances";
import { leastSquares } from "../src/engine/leastSquares";
import { createRandom } from "../src/engine/random";
import { createWorkspace } from "../src/engine/mixture/mixtureWorkspace";
import { createParameters } from "../src/engine/mixture/mixtureParameters";
import { mStepCoefficients, mStepVariances, mStepVariancesFromGram } from "../src/engine/mixture/mStep";
import { computeResiduals } from "../src/engine/mixture/eStep";
import { generateProblem } from "../src/synthetic/generateProblems";
import { ConcentrationSteps } from "../src/engine/mixture/concentrationSteps";
import { enoughRows, exactComponentsOf } from "../src/engine/mixture/exactComponents";
import { parametersFromCoefficients } from "../src/engine/mixture/starts";
import { createGuards } from "../src/engine/mixture/mixtureSettings";
import type { RegressionData } from "../src/engine/mixtureTypes";

describe("weighted least squares by scaled Cholesky of XᵀWX", () => {
  it("agrees with the Householder QR core to 1e-10 on a weighted design with columns of very different scale", () => {
    // Reference: the QR core (checked against NIST Longley in leastSquares.test.ts). Invented
    // demo data; the column scales 1, 1e3 and 1e-3 test the equilibration.
    const random = createRandom(9);
    const n = 500;
    const q = 4;
    const scales = [1, 1, 1e3, 1e-3];
    const x = new Float64Array(n * q);
    const y = new Float64Array(n);
    const w = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      x[i * q] = 1;
      for (let j = 1; j < q; j++) x[i * q + j] = scales[j] * random.normal();
      y[i] = 2 + x[i * q + 1] - 3e-3 * x[i * q + 2] + 500 * x[i * q + 3] + 0.1 * random.normal();
      w[i] = random.next();
    }
    const gram = new Float64Array(q * q);
    const rhs = new Float64Array(q);
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < q; j++) {
        rhs[j] += w[i] * x[i * q + j] * y[i];
        for (let l = j; l < q; l++) gram[j * q + l] += w[i] * x[i * q + j] * x[i * q + l];
      }
    }
    const solution = new Float64Array(q);
    expect(scaledCholeskySolve(gram, rhs, q, solution, new Float64Array(choleskyScratchLength(q)))).toBe(true);
    const reference = leastSquares(x, n, q, y, { weights: w }).coefficients;
    for (let j = 0; j < q; j++) expect(Math.abs(solution[j] - reference[j]) / Math.abs(reference[j])).toBeLessThan(1e-10);
  });

  it("recovers noiseless coefficients to 1e-12 (normal equations on a well-conditioned design)", () => {
    // Derivation: y = Xβ exactly, so the least-squares solution is β; the error left is
    // rounding times the condition number of XᵀX (about 10 here).
    const random = createRandom(10);
    const n = 200;
    const q = 5;
    const beta = [0.5, -1.25, 2, 0.75, -0.3];
    const gram = new Float64Array(q * q);
    const rhs = new Float64Array(q);
    const row = new Float64Array(q);
    for (let i = 0; i < n; i++) {
      let yi = 0;
      for (let j = 0; j < q; j++) {
        row[j] = random.normal();
        yi += row[j] * beta[j];
      }
      for (let j = 0; j < q; j++) {
        rhs[j] += row[j] * yi;
        for (let l = j; l < q; l++) gram[j * q + l] += row[j] * row[l];
      }
    }
    const solution = new Float64Array(q);
    scaledCholeskySolve(gram, rhs, q, solution, new Float64Array(choleskyScratchLength(q)));
    for (let j = 0; j < q; j++) expect(Math.abs(solution[j] - beta[j])).toBeLessThan(1e-12);
  });
});

describe("variances under the Hathaway ratio bound", () => {
  const objective = (s: number[], n: number[], v: number[]): number => s.reduce((t, sk, k) => t + n[k] * (Math.log(v[k]) + sk / v[k]), 0);

  it("leaves variances alone when the bound holds", () => {
    const out = new Float64Array(3);
    expect(constrainedVariances(Float64Array.from([1, 2, 0.5]), Float64Array.from([10, 10, 10]), 0.01, 1e-12, out)).toBe(false);
    expect(Array.from(out)).toEqual([1, 2, 0.5]);
  });

  it("meets the bound and beats every feasible clipping on a fine grid of lower ends", () => {
    // Derivation: the constrained M-step minimises Σ n_k (ln v_k + s_k / v_k) over
    // v_k ∈ [a, a/c]; for fixed a the best v_k is s_k clipped into [a, a/c] (Hathaway 1985),
    // so a grid over a bounds the optimum from above.
    const s = [1e-9, 0.5, 2, 4];
    const n = [5, 40, 30, 25];
    const c = 1e-3;
    const out = new Float64Array(4);
    expect(constrainedVariances(Float64Array.from(s), Float64Array.from(n), c, 1e-15, out)).toBe(true);
    const v = Array.from(out);
    expect(Math.min(...v) / Math.max(...v)).toBeGreaterThanOrEqual(c * (1 - 1e-12));
    const found = objective(s, n, v);
    for (let e = -6; e <= 1; e += 0.001) {
      const a = 10 ** e;
      const clipped = s.map((sk) => Math.min(Math.max(sk, a), a / c));
      expect(found).toBeLessThanOrEqual(objective(s, n, clipped) + 1e-9);
    }
  });
});

describe("M-step variances from the Gram identity", () => {
  it("match the explicit residual pass to 1e-9 on noisy data", () => {
    // Derivation: Σ τ r² = Σ τ y² − 2βᵀXᵀWy + βᵀXᵀWXβ holds exactly for any β; at the WLS
    // solution the two ways differ only by rounding. Invented demo data (seeded).
    const problem = generateProblem({ n: 2000, p: 4, k: 3, seed: 12, sigma: 0.3, intercept: true, meanShift: 0.5 });
    const ws = createWorkspace(problem.data, 3, true, false);
    const random = createRandom(4);
    for (let i = 0; i < ws.n; i++) {
      let total = 0;
      for (let c = 0; c < 3; c++) total += ws.memberships[i * 3 + c] = random.next();
      for (let c = 0; c < 3; c++) ws.memberships[i * 3 + c] /= total;
    }
    const guards = { minimumSize: 6, varianceFloor: 1e-20, varianceRatioBound: 1e-6, covarianceRidge: 1e-6 };
    const params = createParameters(3, 5, 4, false);
    mStepCoefficients(ws, params, guards);
    expect(mStepVariancesFromGram(ws, params, guards)).toBe(true);
    const fromGram = params.variances.slice();
    computeResiduals(ws, params);
    mStepVariances(ws, params, guards);
    for (let c = 0; c < 3; c++) expect(Math.abs(fromGram[c] - params.variances[c]) / params.variances[c]).toBeLessThan(1e-9);
  });
});

describe("concentration steps (least trimmed squares C-steps)", () => {
  // Invented noiseless two-line data: 300 rows of y = xᵀa, 200 of y = xᵀb, x standard normal
  // in 6 dimensions.
  function twoLines(): { design: Float64Array; y: Float64Array; n: number; q: number; a: Float64Array; b: Float64Array } {
    const random = createRandom(41);
    const q = 6;
    const n = 500;
    const a = Float64Array.from({ length: q }, () => random.normal());
    const b = Float64Array.from({ length: q }, () => random.normal());
    const design = new Float64Array(n * q);
    const y = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const c = i < 300 ? a : b;
      for (let j = 0; j < q; j++) {
        design[i * q + j] = random.normal();
        y[i] += design[i * q + j] * c[j];
      }
    }
    return { design, y, n, q, a, b };
  }

  it("lands on the exact component from a start 10% away and counts all its rows (Rousseeuw & Van Driessen 2006)", () => {
    const { design, y, n, q, a } = twoLines();
    const start = a.map((v, j) => v + 0.1 * Math.abs(v) * (j % 2 === 0 ? 1 : -1));
    const result = new ConcentrationSteps(design, n, q, y).run(start, 100, 20, 1e-9);
    expect(result.exactRows).toBe(300);
    for (let j = 0; j < q; j++) expect(Math.abs(result.coefficients[j] - a[j])).toBeLessThan(1e-12);
  });

  it("never raises the trimmed objective from one step to the next (Theorem 1 of Rousseeuw & Van Driessen 2006)", () => {
    const { design, y, n, q, a, b } = twoLines();
    const h = 100;
    const trimmed = (c: Float64Array): number => {
      const squares = Array.from({ length: n }, (_, i) => {
        let fitted = 0;
        for (let j = 0; j < q; j++) fitted += design[i * q + j] * c[j];
        return (y[i] - fitted) ** 2;
      }).sort((u, v) => u - v);
      return squares.slice(0, h).reduce((sum, v) => sum + v, 0);
    };
    // A start between the two lines: the steps must still go downhill, step by step.
    const start = a.map((v, j) => 0.6 * v + 0.4 * b[j]);
    const steps = new ConcentrationSteps(design, n, q, y);
    const path = [trimmed(start)];
    for (let s = 1; s <= 6; s++) path.push(trimmed(steps.run(start, h, s, 1e-9).coefficients));
    for (let s = 1; s < path.length; s++) expect(path[s]).toBeLessThanOrEqual(path[s - 1] * (1 + 1e-12));
    expect(path[path.length - 1]).toBeLessThan(path[0]);
  });
});

describe("exact components (the one tolerance and the one enough-rows rule)", () => {
  // Invented noiseless data: 40 rows on y = xᵀa, 30 on y = xᵀb, and 6 rows on y = xᵀc, x
  // standard normal in 5 dimensions (no intercept).
  function threeLines(): { data: RegressionData; a: Float64Array; b: Float64Array; c: Float64Array } {
    const random = createRandom(43);
    const p = 5;
    const [a, b, c] = [0, 1, 2].map(() => Float64Array.from({ length: p }, () => random.normal()));
    const sizes = [40, 30, 6];
    const n = sizes.reduce((s, v) => s + v, 0);
    const x = new Float64Array(n * p);
    const y = new Float64Array(n);
    let row = 0;
    sizes.forEach((size, group) => {
      const beta = [a, b, c][group];
      for (let r = 0; r < size; r++, row++) {
        for (let j = 0; j < p; j++) {
          x[row * p + j] = random.normal();
          y[row] += x[row * p + j] * beta[j];
        }
      }
    });
    return { data: { x, y, n, p }, a, b, c };
  }

  it("counts a component as exact only when it fits enoughRows(q) rows within the tolerance", () => {
    const { data, a, b, c } = threeLines();
    const q = data.p;
    const ws = createWorkspace(data, 3, false, false);
    const coefficients = new Float64Array(3 * q);
    // a exactly; b 1% off (fits none of its rows exactly); c exactly but with only 6 rows,
    // fewer than enoughRows(5) = 8: any 5 rows are fitted exactly by some vector.
    coefficients.set(a, 0);
    coefficients.set(b.map((v) => v * 1.01), q);
    coefficients.set(c, 2 * q);
    expect(enoughRows(q)).toBe(8);
    const params = parametersFromCoefficients(ws, coefficients, createGuards(q, ws.yVariance));
    expect(exactComponentsOf(ws, params)).toEqual([0]);
    coefficients.set(b, q);
    expect(exactComponentsOf(ws, parametersFromCoefficients(ws, coefficients, createGuards(q, ws.yVariance)))).toEqual([0, 1]);
  });
});
