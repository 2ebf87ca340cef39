import { describe, expect, it } from "vitest";
import { scaledCholeskySolve, scaledCholeskyLower, choleskyScratchLength } from "../src/engine/cholesky";
import { CholeskyDecomposition, Matrix } from "ml-matrix";
import { constrainedVariances } from "../src/engine/mixture/constrainedVariances";
import { leastSquares } from "../src/engine/leastSquares";
import { createRandom } from "../src/engine/random";
import { allowSimdKernel } from "../src/engine/weightedGram";
import { createWorkspace } from "../src/engine/mixture/mixtureWorkspace";
import { createParameters } from "../src/engine/mixture/mixtureParameters";
import { mStepCoefficients, mStepVariances, mStepVariancesFromGram } from "../src/engine/mixture/mStep";
import { computeResiduals, eStep } from "../src/engine/mixture/eStep";
import { generateProblem } from "../src/synthetic/generateProblems";
import { ConcentrationSteps } from "../src/engine/mixture/concentrationSteps";
import { peelOrder, restructure } from "../src/engine/mixture/restructure";
import type { Incumbent } from "../src/engine/mixture/refineBest";
import { peelComponent, peelExactComponents } from "../src/engine/mixture/restructuringMoves";
import { enoughRows, exactComponentsOf, exactTolerance, isNoiseless, PEEL_SNAP_ROUNDS, runWhileFalling, snapComponents, stopOnExactGain, stopOnExactPlateau, thinRows, watchSmallestVariance } from "../src/engine/mixture/exactComponents";
import type { FitContext } from "../src/engine/mixture/fitContext";
import { runEm } from "../src/engine/mixture/runEm";
import { briefIterations, startSources, type ScreenState } from "../src/engine/mixture/screenStarts";
import { parametersFromCoefficients } from "../src/engine/mixture/starts";
import { createGuards } from "../src/engine/mixture/mixtureSettings";
import type { RegressionData } from "../src/engine/mixtureTypes";

/**
 * Invented noiseless rows: one random line (coefficient vector) in p standard normal
 * predictors per entry of `counts`, and that many rows on it, in order, with no intercept.
 */
function noiselessLines(random: ReturnType<typeof createRandom>, p: number, counts: number[]): { lines: Float64Array[]; data: RegressionData } {
  const lines = counts.map(() => Float64Array.from({ length: p }, () => random.normal()));
  const n = counts.reduce((sum, count) => sum + count, 0);
  const x = new Float64Array(n * p);
  const y = new Float64Array(n);
  let i = 0;
  counts.forEach((count, line) => {
    for (let r = 0; r < count; r++, i++) {
      for (let j = 0; j < p; j++) {
        x[i * p + j] = random.normal();
        y[i] += x[i * p + j] * lines[line][j];
      }
    }
  });
  return { lines, data: { x, y, n, p } };
}

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

/** A random symmetric positive definite matrix (BᵀB of a 3q x q Gaussian B), full. */
function positiveDefinite(q: number, seed: number): Float64Array {
  const random = createRandom(seed);
  const b = Array.from({ length: 3 * q * q }, () => random.normal());
  const g = new Float64Array(q * q);
  for (let r = 0; r < 3 * q; r++) for (let a = 0; a < q; a++) for (let c = 0; c < q; c++) g[a * q + c] += b[r * q + a] * b[r * q + c];
  return g;
}

describe("the Cholesky factor, odd and even sizes", () => {

  it.each([7, 8])("matches ml-matrix's CholeskyDecomposition to 1e-12 at q = %i, with ln det", (q) => {
    // Reference: ml-matrix (a general-purpose library) factors the same matrix.
    const g = positiveDefinite(q, 20 + q);
    const lower = new Float64Array(q * q);
    const logDet = scaledCholeskyLower(g, q, lower, new Float64Array(choleskyScratchLength(q)), false);
    const reference = new CholeskyDecomposition(new Matrix(Array.from({ length: q }, (_, a) => Array.from(g.subarray(a * q, a * q + q))))).lowerTriangularMatrix;
    let referenceLogDet = 0;
    for (let a = 0; a < q; a++) {
      referenceLogDet += 2 * Math.log(reference.get(a, a));
      for (let c = 0; c < q; c++) expect(Math.abs(lower[a * q + c] - reference.get(a, c))).toBeLessThan(1e-12 * Math.sqrt(g[a * q + a]));
    }
    expect(Math.abs(logDet - referenceLogDet)).toBeLessThan(1e-10);
  });

  it.each([7, 8])("at q = %i reports a rank-deficient matrix without the ridge and solves it with the ridge", (q) => {
    // Derivation: copying column and row 2 into 3 makes G singular (two equal columns), so a
    // pivot is zero up to rounding; the ridge then makes the scaled matrix definite.
    const g = positiveDefinite(q, 40 + q);
    for (let a = 0; a < q; a++) g[a * q + 3] = g[a * q + 2];
    for (let c = 0; c < q; c++) g[3 * q + c] = g[2 * q + c];
    const rhs = Float64Array.from({ length: q }, (_, a) => g[a * q + 2]);
    const solution = new Float64Array(q);
    expect(scaledCholeskySolve(g, rhs, q, solution, new Float64Array(choleskyScratchLength(q)), false)).toBe(false);
    expect(solution.every((v) => v === 0)).toBe(true);
    expect(scaledCholeskySolve(g, rhs, q, solution, new Float64Array(choleskyScratchLength(q)))).toBe(true);
    // G s = column 2 of G: any s with s_2 + s_3 = 1 and the rest 0; the ridge picks about the
    // smallest-norm one, s_2 = s_3 = 0.5.
    for (let a = 0; a < q; a++) expect(Math.abs(solution[a] - (a === 2 || a === 3 ? 0.5 : 0))).toBeLessThan(1e-4);
  });
});

describe("the Cholesky factor on the SIMD module", () => {
  it.each([8, 9, 33, 64])("gives the JavaScript factor, ln det and solution to the bit at q = %i, and the same refusals", (q) => {
    // Reference: the JavaScript path of the same kernel (allowSimdKernel(false)).
    const random = createRandom(60 + q);
    const g = positiveDefinite(q, 80 + q);
    const singular = g.slice();
    for (let a = 0; a < q; a++) singular[Math.min(a, 5) * q + Math.max(a, 5)] = singular[Math.min(a, 4) * q + Math.max(a, 4)];
    const rhs = Float64Array.from({ length: q }, () => random.normal());
    const results: Array<{ lower: number[]; logDet: number; solution: number[]; refused: boolean; ridged: number[] }> = [];
    for (const allowed of [false, true]) {
      allowSimdKernel(allowed);
      const lower = new Float64Array(q * q);
      const logDet = scaledCholeskyLower(g, q, lower, new Float64Array(choleskyScratchLength(q)), false);
      const solution = new Float64Array(q);
      scaledCholeskySolve(g, rhs, q, solution, new Float64Array(choleskyScratchLength(q)));
      const refused = !scaledCholeskySolve(singular, rhs, q, new Float64Array(q), new Float64Array(choleskyScratchLength(q)), false);
      const ridged = new Float64Array(q);
      scaledCholeskySolve(singular, rhs, q, ridged, new Float64Array(choleskyScratchLength(q)));
      results.push({ lower: Array.from(lower), logDet, solution: Array.from(solution), refused, ridged: Array.from(ridged) });
    }
    allowSimdKernel(true);
    expect(results[1]).toEqual(results[0]);
    expect(results[0].refused).toBe(true);
    expect(Number.isFinite(results[0].logDet) && results[0].ridged.every(Number.isFinite)).toBe(true);
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

  it("counts two components on the same rows once, keeping the first", () => {
    const { data, a, b } = threeLines();
    const q = data.p;
    const ws = createWorkspace(data, 3, false, false);
    const coefficients = new Float64Array(3 * q);
    // b, then a twice: components 1 and 2 fit the same 40 rows exactly.
    coefficients.set(b, 0);
    coefficients.set(a, q);
    coefficients.set(a, 2 * q);
    expect(exactComponentsOf(ws, parametersFromCoefficients(ws, coefficients, createGuards(q, ws.yVariance)))).toEqual([0, 1]);
  });

  it("counts two components that share rows as two only when each fits enoughRows(q) rows of its own", () => {
    // Invented noiseless data: lines a and a2 differ only in the first coefficient, so the 20
    // rows whose first predictor is 0 lie on both; 40 more rows lie on a alone and `own` on a2
    // alone. enoughRows(5) = 8.
    function sharedRows(own: number): { data: RegressionData; a: Float64Array; a2: Float64Array } {
      const random = createRandom(47);
      const p = 5;
      const a = Float64Array.from({ length: p }, () => random.normal());
      const a2 = a.slice();
      a2[0] += 1;
      const groups: [Float64Array, number, boolean][] = [[a, 40, false], [a2, own, false], [a, 20, true]];
      const n = 60 + own;
      const x = new Float64Array(n * p);
      const y = new Float64Array(n);
      let row = 0;
      for (const [line, count, onBoth] of groups) {
        for (let r = 0; r < count; r++, row++) {
          for (let j = 0; j < p; j++) {
            x[row * p + j] = j === 0 && onBoth ? 0 : random.normal();
            y[row] += x[row * p + j] * line[j];
          }
        }
      }
      return { data: { x, y, n, p }, a, a2 };
    }
    const exactOf = (own: number): number[] => {
      const { data, a, a2 } = sharedRows(own);
      const ws = createWorkspace(data, 2, false, false);
      const coefficients = new Float64Array(2 * data.p);
      coefficients.set(a2, 0);
      coefficients.set(a, data.p);
      return exactComponentsOf(ws, parametersFromCoefficients(ws, coefficients, createGuards(data.p, ws.yVariance)));
    };
    // a2 fits 20 + 12 rows, 12 of them its own: both count.
    expect(exactOf(12)).toEqual([0, 1]);
    // a2 fits 20 + 7 rows, 7 of them its own: it counts as a copy of a (60 rows), which is kept.
    expect(exactOf(7)).toEqual([1]);
  });
});

describe("snapping a component counted exact onto all of its rows", () => {
  // Invented noiseless data: 300 rows on y = xᵀa and 200 on y = xᵀb, x standard normal in 6
  // dimensions, and one more row of b that the estimate of a below misses by 0.9 of the exact
  // tolerance (a stray row).
  function nearExactStart(): { data: RegressionData; a: Float64Array; estimate: Float64Array; q: number } {
    const random = createRandom(47);
    const q = 6;
    const n = 501;
    const a = Float64Array.from({ length: q }, () => random.normal());
    const b = Float64Array.from({ length: q }, () => random.normal());
    // The estimate of a: off by 2e-5 of |a| in one coordinate, so that only the few rows with
    // a small value there fall within the exact tolerance, as when a component of many
    // coefficients has just come near exact.
    const estimate = a.slice();
    estimate[0] += 2e-5 * Math.hypot(...a);
    const x = new Float64Array(n * q);
    const y = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const beta = i < 300 ? a : b;
      for (let j = 0; j < q; j++) x[i * q + j] = random.normal();
      if (i === n - 1) {
        // Move the row along d = b − estimate until xᵀb − xᵀestimate is 0.9 of the tolerance
        // (1e-6 of SD(y), here taken from the other rows).
        const mean = y.subarray(0, i).reduce((sum, v) => sum + v, 0) / i;
        const sd = Math.sqrt(y.subarray(0, i).reduce((sum, v) => sum + (v - mean) ** 2, 0) / i);
        const d = b.map((v, j) => v - estimate[j]);
        const dd = d.reduce((sum, v) => sum + v * v, 0);
        const gap = d.reduce((sum, v, j) => sum + v * x[i * q + j], 0);
        for (let j = 0; j < q; j++) x[i * q + j] += ((0.9e-6 * sd - gap) / dd) * d[j];
      }
      for (let j = 0; j < q; j++) y[i] += x[i * q + j] * beta[j];
    }
    return { data: { x, y, n, p: q }, a, estimate, q };
  }

  function rowsWithin(ws: ReturnType<typeof createWorkspace>, c: Float64Array, width: number): number {
    let count = 0;
    for (let i = 0; i < ws.n; i++) {
      let fitted = 0;
      for (let j = 0; j < ws.q; j++) fitted += ws.design[i * ws.q + j] * c[j];
      if (Math.abs(ws.y[i] - fitted) <= width) count++;
    }
    return count;
  }

  it("ends exact on all 300 rows of a though a row of b lay within the tolerance at the start", () => {
    const { data, a, estimate, q } = nearExactStart();
    const ws = createWorkspace(data, 1, false, false);
    const tolerance = exactTolerance(ws);
    const guards = createGuards(q, ws.yVariance);
    const start = parametersFromCoefficients(ws, estimate, guards);
    const before = rowsWithin(ws, estimate, tolerance);
    // The start fits some of a's rows and the stray row within the tolerance, not all of them.
    expect(before).toBeGreaterThanOrEqual(enoughRows(q));
    expect(before).toBeLessThan(300);
    // One refit keeps the stray row and stays off a (the reason for the further rounds; here
    // the rows within the tolerance grow 15, 17, 20, 22, 69, then all 300).
    const once = snapComponents(ws, start, [0], () => tolerance, guards, 1)!;
    expect(rowsWithin(ws, once.coefficients, tolerance)).toBeLessThan(300);
    const snapped = snapComponents(ws, start, [0], () => tolerance, guards, PEEL_SNAP_ROUNDS)!;
    expect(rowsWithin(ws, snapped.coefficients, tolerance)).toBe(300);
    for (let j = 0; j < q; j++) expect(Math.abs(snapped.coefficients[j] - a[j])).toBeLessThan(1e-12);
  });
});

/** Invented noiseless data: 40 rows on y = xᵀa and 30 on y = xᵀb, x standard normal in 4 dimensions (no intercept). */
function twoExactLines(seed: number) {
  const random = createRandom(seed);
  const p = 4;
  const [a, b] = [0, 1].map(() => Float64Array.from({ length: p }, () => random.normal()));
  const n = 70;
  const x = new Float64Array(n * p);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < p; j++) {
      x[i * p + j] = random.normal();
      y[i] += x[i * p + j] * (i < 40 ? a : b)[j];
    }
  }
  const ws = createWorkspace({ x, y, n, p }, 2, false, false);
  const guards = createGuards(p, ws.yVariance);
  // a exact, b 10% off.
  const coefficients = new Float64Array(2 * p);
  coefficients.set(a, 0);
  coefficients.set(b.map((v) => v * 1.1), p);
  return { ws, p, a, b, params: parametersFromCoefficients(ws, coefficients, guards) };
}

describe("a run that stops once it has fitted more components exactly", () => {
  it("stops 30 iterations after the count rose, counting every 10 iterations, and not before", () => {
    const { ws, p, b, params } = twoExactLines(53);
    const stop = stopOnExactGain(ws, params);
    const ask = (iteration: number): boolean => stop(0, Infinity, iteration);
    // Only a is exact: no gain, however long the run.
    for (let iteration = 1; iteration <= 60; iteration++) expect(ask(iteration)).toBe(false);
    // The run (which updates params in place) lands b: the count rises at the next check
    // (iteration 70) and must then hold for 30 iterations (checks at 80, 90, 100).
    params.coefficients.set(b, p);
    const answers: boolean[] = [];
    for (let iteration = 61; iteration <= 100; iteration++) answers.push(ask(iteration));
    expect(answers.slice(0, 39).every((answer) => !answer)).toBe(true);
    expect(answers[39]).toBe(true);
  });
});

describe("a run in a sub-problem that expects exact rows", () => {
  it("stops once one or more exact components have stayed the same for 30 iterations", () => {
    const { ws, p, a, b, params } = twoExactLines(53);
    const stop = stopOnExactPlateau(ws, params, 500)!;
    const ask = (iteration: number): boolean => stop(0, Infinity, iteration);
    // Counts at 10, 20, ...: a alone is exact from the first count, so the count has held
    // for 30 iterations at the count at iteration 40, and not before.
    const answers: boolean[] = [];
    for (let iteration = 1; iteration <= 40; iteration++) answers.push(ask(iteration));
    expect(answers.slice(0, 39).every((answer) => !answer)).toBe(true);
    expect(answers[39]).toBe(true);
    // A change of the count starts the wait again: b lands at iteration 21 (counted at 30),
    // so the wait ends at the count at iteration 60.
    const again = stopOnExactPlateau(ws, params, 500)!;
    const later: boolean[] = [];
    for (let iteration = 1; iteration <= 70; iteration++) {
      if (iteration === 21) params.coefficients.set(b, p);
      later.push(again(0, Infinity, iteration));
    }
    expect(later.indexOf(true)).toBe(60 - 1);
    // No exact component: the run is never stopped this way.
    params.coefficients.set(a.map((v) => v * 1.1), 0);
    params.coefficients.set(b.map((v) => v * 1.1), p);
    const none = stopOnExactPlateau(ws, params, 500)!;
    for (let iteration = 1; iteration <= 300; iteration++) expect(none(0, Infinity, iteration)).toBe(false);
  });

  it("leaves runs of at most 60 iterations unwatched", () => {
    const { ws, params } = twoExactLines(53);
    expect(stopOnExactPlateau(ws, params, 15)).toBeNull();
    expect(stopOnExactPlateau(ws, params, 60)).toBeNull();
    expect(stopOnExactPlateau(ws, params, 61)).not.toBeNull();
  });
});

describe("the start screen's order and brief runs", () => {
  /**
   * The starts a screen would try, as "method:iterations of its brief run", read off the plan
   * without making any (k components, p predictors and an intercept: K·q = k·(p + 1)).
   */
  function plannedStarts(k: number, p: number, expectExact: boolean): string[] {
    const random = createRandom(5);
    const n = 3 * k;
    const data: RegressionData = { x: Float64Array.from({ length: n * p }, () => random.normal()), y: Float64Array.from({ length: n }, () => random.normal()), n, p };
    const ws = createWorkspace(data, k, true, false);
    const ctx = {
      working: ws, guards: createGuards(ws.q, 1), random, expectExact,
      settings: { k, intercept: true, restarts: 10 },
      inherited: expectExact ? new Float64Array(k * ws.q) : undefined,
    } as unknown as FitContext;
    const screen: ScreenState = { moment: null, exactSeen: false, partitionsWithoutExact: 0, peeled: [] };
    return Array.from(startSources(ctx, screen, false), (source) => `${source.method}:${briefIterations(ctx, source)}`);
  }
  const partitions = (count: number, iterations: number) => Array.from({ length: count }, () => `random-partition:${iterations}`);

  it("gives the first three random partitions 60 iterations in a fit of 500 coefficients or more, 15 below", () => {
    // K·q = 5 · 101 = 505 and 5 · 51 = 255.
    expect(plannedStarts(5, 100, false)).toEqual(["moment-subspace:15", "residual-seeding:15", "location-seeding:15", ...partitions(3, 60), ...partitions(7, 15)]);
    expect(plannedStarts(5, 50, false)).toEqual(["moment-subspace:15", "residual-seeding:15", "location-seeding:15", ...partitions(10, 15)]);
  });

  it("tries the random partitions before the moment start in a large sub-problem of rows expected to be exact, not in a smaller one", () => {
    expect(plannedStarts(5, 100, true)).toEqual(["inherited:15", ...partitions(10, 60), "moment-subspace:60", "residual-seeding:60", "location-seeding:60"]);
    expect(plannedStarts(5, 50, true)).toEqual(["inherited:15", "moment-subspace:60", "residual-seeding:60", "location-seeding:60", ...partitions(10, 60)]);
  });
});

describe("a start run on while its smallest variance falls fast", () => {
  // Two lines, 40 and 30 rows of 4 predictors (twoExactLines), noiseless or with noise SD
  // 0.3; the start has both components 10% off and runs `brief` EM iterations. Its recorded
  // smallest variances are then set to fall fast (the last a third of the one five
  // iterations before), as after a brief run heading for an exact fit.
  function startFalling(noise: number, brief: number) {
    const { ws, p, a, b } = twoExactLines(53);
    if (noise > 0) {
      const random = createRandom(54);
      for (let i = 0; i < ws.n; i++) ws.y[i] += noise * random.normal();
    }
    const guards = createGuards(p, ws.yVariance);
    const coefficients = new Float64Array(2 * p);
    coefficients.set(a.map((v) => v * 1.1), 0);
    coefficients.set(b.map((v) => v * 1.1), p);
    const params = parametersFromCoefficients(ws, coefficients, guards);
    const ctx = { working: ws, guards, tolerance: 1e-8, random: createRandom(1), trialRandom: createRandom(2), runStop: null } as unknown as FitContext;
    const watch = watchSmallestVariance(params);
    runEm(ws, params, ctx, brief, null, { stop: watch.stop });
    const last = Math.min(...params.variances);
    watch.smallest.splice(0, watch.smallest.length, 3 * last, 3 * last, 3 * last, 3 * last, 3 * last, last);
    return { ws, params, ctx, watch };
  }

  it("lands a component of a noiseless start exactly, leaving the start itself as it was", () => {
    // No brief run: three iterations from this start already fit both lines exactly.
    const { ws, params, ctx, watch } = startFalling(0, 0);
    const before = params.coefficients.slice();
    const fell = runWhileFalling(ctx, params, watch, 45);
    expect(fell).not.toBeNull();
    expect(exactComponentsOf(ws, fell!.params).length).toBeGreaterThanOrEqual(1);
    expect(fell!.run.iterations).toBeLessThanOrEqual(45);
    expect(Array.from(params.coefficients)).toEqual(Array.from(before));
  });

  it("gives up on a noisy start and puts the workspace and the generator back as they were", () => {
    const { ws, params, ctx, watch } = startFalling(0.3, 3);
    const snapshot = [ws.memberships.slice(), ws.residuals.slice(), ws.rowLogLikelihood.slice()];
    const before = params.coefficients.slice();
    expect(runWhileFalling(ctx, params, watch, 45)).toBeNull();
    expect(Array.from(params.coefficients)).toEqual(Array.from(before));
    [ws.memberships, ws.residuals, ws.rowLogLikelihood].forEach((now, t) => expect(Array.from(now)).toEqual(Array.from(snapshot[t])));
    // The run drew nothing from the fit's own generator: its next draw is a fresh twin's.
    expect(ctx.random.next()).toBe(createRandom(1).next());
  });

  it("is not tried when the variance settles, or with no iterations to spare", () => {
    const { params, ctx, watch } = startFalling(0, 0);
    expect(runWhileFalling(ctx, params, watch, 0)).toBeNull();
    const settling = watchSmallestVariance(params, [1, 1, 1, 1, 1, 0.6]);
    expect(runWhileFalling(ctx, params, settling, 45)).toBeNull();
  });

  it("runs on a steady fall when given a slower ratio (a large fit's landing partitions), and lands it", () => {
    // The same noiseless start with a fall to 0.6 of itself in five iterations: not fast by the
    // default ratio (0.5), steady by 0.8.
    const { ws, params, ctx } = startFalling(0, 0);
    const steady = () => watchSmallestVariance(params, [1, 1, 1, 1, 1, 0.6]);
    expect(runWhileFalling(ctx, params, steady(), 45)).toBeNull();
    const fell = runWhileFalling(ctx, params, steady(), 45, 0.8);
    expect(fell).not.toBeNull();
    expect(exactComponentsOf(ws, fell!.params).length).toBeGreaterThanOrEqual(1);
  });
});

describe("exact peeling", () => {
  it("below a noisy peel, fits the rest exactly though a few rows of a line outside the fit lie among them (the sub-problem's background takes those)", () => {
    // Invented noiseless rows: lines a (40 rows) and b (40 rows) in 4 predictors, and 4 rows of
    // a third line c that the fit (K = 2) has no component for, as a peel of a noisy fit further
    // up can leave among a sub-problem's rows. a is exact in the fit, b 10% off: the exact
    // peel removes a's rows and fits one component to the other 44. By least squares those 4
    // rows pull it off b; with the background they go there and b is fitted exactly.
    const p = 4;
    const { lines: [a, b], data } = noiselessLines(createRandom(61), p, [40, 40, 4]);
    const { x, y } = data;
    const ws = createWorkspace(data, 2, false, false);
    const guards = createGuards(p, ws.yVariance);
    const start = new Float64Array(2 * p);
    start.set(a, 0);
    start.set(b.map((v) => v * 1.1), p);
    const params = parametersFromCoefficients(ws, start, guards);
    const settings = { k: 2, seed: 1, intercept: false, model: "plain", restarts: 10, tolerance: 1e-8, maxIterations: 500, background: false };
    // These rows as a sub-problem below a noisy peel (strays possible).
    const ctx = { data, settings, guards, random: createRandom(62), depth: 1, expectExact: false, strays: true } as unknown as FitContext;
    const peeled = peelExactComponents(ctx, ws, params, null);
    expect(peeled).not.toBeNull();
    // The kept component first, then the sub-problem's.
    for (let j = 0; j < p; j++) {
      expect(Math.abs(peeled!.coefficients[j] - a[j])).toBeLessThan(1e-9);
      expect(Math.abs(peeled!.coefficients[p + j] - b[j])).toBeLessThan(1e-9);
    }
    // The least-squares fit of those 44 rows is far from b: the check above could not pass by
    // least squares. It is what the peel gives where no strays can be (rows that only exact
    // fits have narrowed, as in the user's own fit): no background there.
    const rest = leastSquares(x.subarray(40 * p), 44, p, y.subarray(40));
    expect(Math.max(...b.map((v, j) => Math.abs(rest.coefficients[j] - v)))).toBeGreaterThan(1e-3);
    const closed = peelExactComponents({ ...ctx, strays: false, random: createRandom(62) } as FitContext, ws, parametersFromCoefficients(ws, start, guards), null);
    for (let j = 0; j < p; j++) expect(Math.abs(closed!.coefficients[p + j] - rest.coefficients[j])).toBeLessThan(1e-9);
  });

  // Invented noiseless rows: lines a, b and c (`rows` each) in p predictors, and exact peeling
  // of fits with a exact and b, c off, given a list of the row sets peeled before.
  function peelTwice(p: number, rows: number): { first: unknown; again: unknown; other: unknown; peeledBefore: number[][] } {
    const { lines: [a, b, c], data } = noiselessLines(createRandom(63), p, [rows, rows, rows]);
    const ws = createWorkspace(data, 3, false, false);
    const guards = createGuards(p, ws.yVariance);
    const fitWith = (lines: Float64Array[]): ReturnType<typeof parametersFromCoefficients> => {
      const coefficients = new Float64Array(3 * p);
      lines.forEach((line, slot) => coefficients.set(line, slot * p));
      return parametersFromCoefficients(ws, coefficients, guards);
    };
    const settings = { k: 3, seed: 1, intercept: false, model: "plain", restarts: 2, tolerance: 1e-8, maxIterations: 200, background: false };
    const ctx = { data, settings, guards, random: createRandom(64), depth: 0, expectExact: false, strays: false } as unknown as FitContext;
    const peeledBefore: number[][] = [];
    const first = peelExactComponents(ctx, ws, fitWith([a, b.map((v) => v * 1.1), c.map((v) => v * 0.9)]), null, { peeledBefore });
    // The same rows again (a exact), from another start.
    const again = peelExactComponents(ctx, ws, fitWith([a, c.map((v) => v * 1.2), b.map((v) => v * 0.8)]), null, { peeledBefore });
    // Other rows (b exact).
    const other = peelExactComponents(ctx, ws, fitWith([a.map((v) => v * 1.1), b, c.map((v) => v * 0.9)]), null, { peeledBefore });
    return { first, again, other, peeledBefore };
  }

  it("hands rows to a sub-problem of 100 coefficients or more once when told the row sets peeled before", () => {
    // 2 components of 50 coefficients left: 100.
    const { first, again, other, peeledBefore } = peelTwice(50, 130);
    expect(first).not.toBeNull();
    expect(again).toBeNull();
    expect(other).not.toBeNull();
    expect(peeledBefore.length).toBe(2);
    expect(peeledBefore[0]).toEqual(Array.from({ length: 260 }, (_, i) => 130 + i));
  });

  it("hands rows to a smaller sub-problem every time", () => {
    // 2 components of 4 coefficients left: 8.
    const { first, again, other, peeledBefore } = peelTwice(4, 30);
    expect(first).not.toBeNull();
    expect(again).not.toBeNull();
    expect(other).not.toBeNull();
    expect(peeledBefore).toEqual([]);
  });
});

describe("the components peeling may keep", () => {
  it("are the exact ones when some component is exact, else the smallest noise SDs first", () => {
    const params = createParameters(4, 2, 2, false);
    params.variances.set([0.3, 1e-2, 1e-20, 0.05]);
    // Component 1 has the second smallest SD but is not exact: in noiseless data its rows are
    // several groups', so it is not tried while component 2 is exact.
    expect(peelOrder(params, [2])).toEqual([2]);
    expect(peelOrder(params, [])).toEqual([2, 1]);
    expect(peelOrder(params, [0, 2])).toEqual([2, 0]);
  });
});

/**
 * Overlapping components (noise SD 1 on slopes of about unit size), where EM converges
 * slowly: each change is a large fraction of the one before. A start 30% off the truth, and a
 * context whose runs stop at `tolerance`.
 */
function slowOverlappingRun(tolerance: number, k = 3, seed = 1) {
  const problem = generateProblem({ n: 2000, p: 2, k, seed, sigma: 1, intercept: true });
  const ws = createWorkspace(problem.data, k, true, false);
  const guards = createGuards(ws.q, ws.yVariance);
  const start = new Float64Array(k * ws.q);
  problem.coefficients.forEach((c, j) => c.forEach((v, t) => (start[j * ws.q + t] = 0.7 * v + 0.3)));
  const ctx = { working: ws, guards, tolerance, random: createRandom(1), trialRandom: createRandom(2), runStop: null } as unknown as FitContext;
  return { ws, guards, start, ctx };
}

describe("a run that may stop once the gain still to come is small (enoughGain)", () => {
  // On the slow problem far more than the last change is still to come. The run's own limit
  // is the same run to a tolerance of 1e-15.
  const { ws, guards, start, ctx } = slowOverlappingRun(1e-15);
  const enoughGain = 0.01;

  it("ends within about enoughGain of the run's limit, where a change below enoughGain comes far earlier", () => {
    const path: number[] = [];
    runEm(ws, parametersFromCoefficients(ws, start, guards), ctx, 5000, path, { plain: true });
    const limit = path[path.length - 1];
    // The data are as slow as meant: the first change below enoughGain leaves more than ten
    // times enoughGain to come (stopping there was the rule before).
    const firstSmallChange = path.findIndex((value, i) => i > 0 && Math.abs(value - path[i - 1]) <= enoughGain);
    expect(limit - path[firstSmallChange]).toBeGreaterThan(10 * enoughGain);
    const stopped: number[] = [];
    const run = runEm(ws, parametersFromCoefficients(ws, start, guards), ctx, 5000, stopped, { enoughGain, plain: true });
    expect(run.converged).toBe(true);
    expect(stopped.length).toBeGreaterThan(firstSmallChange + 1);
    // Aitken's estimate is close, not exact: within twice the bound.
    expect(limit - run.logLikelihood).toBeLessThan(2 * enoughGain);
    expect(limit - run.logLikelihood).toBeGreaterThanOrEqual(0);
  });
});

describe("a slow run accelerated by SQUAREM (Varadhan & Roland 2008)", () => {
  // The same overlapping problem as above, where plain EM converges slowly.
  const { ws, guards, start, ctx } = slowOverlappingRun(1e-12);

  it("reaches plain EM's limit in far fewer iterations, and ln L never falls from step to step", () => {
    const plainPath: number[] = [];
    const plain = runEm(ws, parametersFromCoefficients(ws, start, guards), ctx, 5000, plainPath, { plain: true });
    const path: number[] = [];
    const params = parametersFromCoefficients(ws, start, guards);
    const accelerated = runEm(ws, params, ctx, 5000, path);
    expect(plain.converged && accelerated.converged).toBe(true);
    // The same maximum: ln L within the tolerance's scale (1e-12 · n per step, far below
    // 1e-6 nats in all), the coefficients to 1e-4 (the likelihood is flat in them near its
    // maximum, so the two stopping points differ in the coefficients more than in ln L).
    expect(Math.abs(accelerated.logLikelihood - plain.logLikelihood)).toBeLessThan(1e-6);
    const plainParams = parametersFromCoefficients(ws, start, guards);
    runEm(ws, plainParams, ctx, 5000, null, { plain: true });
    for (let j = 0; j < params.coefficients.length; j++) expect(Math.abs(params.coefficients[j] - plainParams.coefficients[j])).toBeLessThan(1e-4);
    // Each SQUAREM cycle counts its three EM iterations (and up to three more when a step is
    // shortened); plain EM needs several times as many here.
    expect(accelerated.iterations * 3).toBeLessThan(plain.iterations);
    for (let t = 1; t < path.length; t++) expect(path[t]).toBeGreaterThanOrEqual(path[t - 1] - 1e-9 * Math.abs(path[t - 1]));
  });

  it("keeps to the run's iteration limit when a cycle shortens its step", () => {
    // The slow problem at K = 4 (seed 3), where cycles near these limits shorten their steps: each step
    // costs an EM iteration, and without a bound on them these runs ended 1-2 past the limit.
    const slow = slowOverlappingRun(1e-15, 4, 3);
    for (const limit of [94, 119, 126]) {
      const run = runEm(slow.ws, parametersFromCoefficients(slow.ws, slow.start, slow.guards), slow.ctx, limit);
      expect(run.iterations).toBeLessThanOrEqual(limit);
      expect(run.converged).toBe(false);
    }
  });

  it("leaves runs that converge fast, and brief runs, as plain EM to the bit", () => {
    // A well-separated problem (noise SD 0.05): the changes shrink fast from the start.
    const quick = generateProblem({ n: 600, p: 2, k: 2, seed: 3, sigma: 0.05, intercept: true });
    const quickWs = createWorkspace(quick.data, 2, true, false);
    const quickGuards = createGuards(quickWs.q, quickWs.yVariance);
    const quickCtx = { ...ctx, working: quickWs, guards: quickGuards } as unknown as FitContext;
    const quickStart = new Float64Array(2 * quickWs.q);
    quick.coefficients.forEach((c, j) => c.forEach((v, t) => (quickStart[j * quickWs.q + t] = 0.9 * v + 0.1)));
    const a = parametersFromCoefficients(quickWs, quickStart, quickGuards);
    const b = parametersFromCoefficients(quickWs, quickStart, quickGuards);
    const runA = runEm(quickWs, a, quickCtx, 500);
    const runB = runEm(quickWs, b, quickCtx, 500, null, { plain: true });
    expect(runA.iterations).toBe(runB.iterations);
    expect(Array.from(a.coefficients)).toEqual(Array.from(b.coefficients));
    // On the slow problem, a run of at most 60 iterations (the brief runs that rank starts) is plain EM.
    const briefA = parametersFromCoefficients(ws, start, guards);
    const briefB = parametersFromCoefficients(ws, start, guards);
    runEm(ws, briefA, ctx, 60);
    runEm(ws, briefB, ctx, 60, null, { plain: true });
    expect(Array.from(briefA.coefficients)).toEqual(Array.from(briefB.coefficients));
  });
});

describe("peeling a component of a noisy fit", () => {
  /**
   * Invented noiseless rows on two lines a and b in 4 predictors (q = 4), `rowsOfA` of a and
   * `rowsOfB` of b, fitted with K = 2 from the exact coefficients: component 0 is a, so its band
   * (rows within 2.5 noise SDs) holds exactly a's rows.
   */
  function peelOfA(rowsOfA: number, rowsOfB: number) {
    const p = 4;
    const { lines: [a, b], data } = noiselessLines(createRandom(71), p, [rowsOfA, rowsOfB]);
    const ws = createWorkspace(data, 2, false, false);
    const guards = createGuards(p, ws.yVariance);
    const start = new Float64Array(2 * p);
    start.set(a, 0);
    start.set(b, p);
    const settings = { k: 2, seed: 1, intercept: false, model: "plain", restarts: 3, tolerance: 1e-8, maxIterations: 500, background: false };
    const ctx = { data, settings, guards, random: createRandom(72), depth: 0, expectExact: false, strays: false } as unknown as FitContext;
    return peelComponent(ctx, ws, parametersFromCoefficients(ws, start, guards), 0, null);
  }

  it("skips a component near exact on fewer than 3q rows when the rows are not thin", () => {
    // 10 rows of a among 90: above enoughRows(4) = 7, so only the shrunk-component rule stops
    // it (10 < 3q = 12; 90 rows > 8 · K · q = 64, not thin; a is exact, so near exact).
    expect(enoughRows(4)).toBe(7);
    expect(thinRows(90, 2, 4)).toBe(false);
    expect(peelOfA(10, 80)).toBeNull();
  });

  it("peels a component on 3q rows or more, or on thin rows", () => {
    // 40 rows of a among 120 (40 >= 3q); 10 rows of a among 20 (under 3q, but thin rows).
    expect(thinRows(20, 2, 4)).toBe(true);
    for (const [rowsOfA, rowsOfB] of [[40, 80], [10, 10]]) {
      const peeled = peelOfA(rowsOfA, rowsOfB);
      expect(peeled).not.toBeNull();
      expect(peeled!.k).toBe(2);
    }
  });
});

describe("restructuring a fit with a component left near exact", () => {
  it("snaps it onto its rows and peels it exactly, and the fit ends exact on every row", () => {
    // Invented noiseless rows on three lines in 4 predictors, 60 rows each. The incumbent has
    // line a off by 1e-5 in each coefficient (near exact: SD far below 1e-3 of SD(y), but no
    // row within the exact tolerance of 1e-6 SD(y)) and two components halfway between b and c
    // (rows of both): the fit the refinement can leave when EM approaches an exact fit slowly.
    const p = 4;
    const { lines: [a, b, c], data } = noiselessLines(createRandom(81), p, [60, 60, 60]);
    const ws = createWorkspace(data, 3, false, false);
    const guards = createGuards(p, ws.yVariance);
    const start = new Float64Array(3 * p);
    start.set(a.map((v) => v + 1e-5), 0);
    start.set(b.map((v, j) => 0.5 * (v + c[j]) + 0.05), p);
    start.set(b.map((v, j) => 0.5 * (v + c[j]) - 0.05), 2 * p);
    const params = parametersFromCoefficients(ws, start, guards);
    // Component 0's noise SD as EM would have it: its own 60 rows' residuals.
    let squares = 0;
    for (let i = 0; i < 60; i++) squares += ws.residuals[i * 3] ** 2;
    params.variances[0] = squares / 60;
    const logLikelihood = eStep(ws, params, true);
    const sd = Math.sqrt(ws.yVariance);
    expect(Math.sqrt(params.variances[0])).toBeLessThan(1e-3 * sd);
    expect(exactComponentsOf(ws, params)).toEqual([]);
    const settings = { k: 3, seed: 1, intercept: false, model: "plain", restarts: 3, tolerance: 1e-8, maxIterations: 500, background: false };
    const ctx = {
      data, settings, guards, random: createRandom(83), trialRandom: createRandom(84), full: ws, working: ws, subsampleRows: null,
      depth: 0, expectExact: false, strays: false, annealing: null, runStop: null, tolerance: 1e-8, unwanted: null,
    } as unknown as FitContext;
    const incumbent: Incumbent = { best: { method: "moment-subspace", params, logLikelihood }, run: { logLikelihood, iterations: 1, converged: true, reseeds: 0, varianceBoundActive: false }, path: [], disagreement: 0 };
    expect(restructure(ctx, incumbent)).toBe(0);
    expect(incumbent.best.method).toBe("exact-peeling");
    expect(isNoiseless(incumbent.best.params, ws)).toBe(true);
    // Every line recovered to rounding, in some order.
    const found = [a, b, c].map((line) => Math.min(...[0, 1, 2].map((k) => Math.max(...line.map((v, j) => Math.abs(incumbent.best.params.coefficients[k * p + j] - v))))));
    for (const error of found) expect(error).toBeLessThan(1e-9);
  });
});
