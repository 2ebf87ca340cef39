import { referenceVariance } from "../referenceVariance";
import type { RegressionData } from "../mixtureTypes";
import { choleskyScratchLength } from "../cholesky";
import type { BackgroundComponent } from "./backgroundComponent";

/**
 * One data set (the full data or a subsample) prepared for EM, with every scratch array the
 * phases need allocated once. Memory: n·(q + 2k + 1) doubles plus n·p in the joint model,
 * linear in rows × (predictors + components).
 */
export interface MixtureWorkspace {
  n: number;
  p: number;
  q: number;
  k: number;
  intercept: boolean;
  joint: boolean;
  /** Row-major n x q design, a leading 1 per row when intercept. */
  design: Float64Array;
  y: Float64Array;
  /** Row-major n x p predictors (the joint model's x). */
  predictors: Float64Array;
  /** n x k memberships τ_ik. */
  memberships: Float64Array;
  /** n x k residuals y_i − x_iᵀβ_k at the current coefficients. */
  residuals: Float64Array;
  /** Per-row log mixture density at the last E-step. */
  rowLogLikelihood: Float64Array;
  /** Variance of y over these rows (the data scale the floors refer to). */
  yVariance: number;
  /** Variance of each predictor over these rows (the scale of the joint model's ridge). */
  predictorVariances: Float64Array;
  /** M-step scratch: k Gram matrices (q x q), k right-hand sides, k weight sums. */
  grams: Float64Array;
  rightHandSides: Float64Array;
  sizes: Float64Array;
  choleskyScratch: Float64Array;
  /** M-step block buffers: rows per block, then q x blockRows column-major copies. */
  blockRows: number;
  blockColumns: Float64Array;
  blockWeighted: Float64Array;
  blockY: Float64Array;
  /** XᵀX and Xᵀy over all rows, filled by the first M-step. */
  totalGram: Float64Array | null;
  totalRightHandSide: Float64Array | null;
  /** Σ y² over all rows (with totalGram). */
  totalSquares: number;
  /** Σ_i τ_ik y_i² per component, from the last M-step. */
  weightedSquares: Float64Array;
  /** Per-row scratch of length k + 1 (the background's term last). */
  rowScratch: Float64Array;
  /** Per-row scratch of length p (joint model). */
  predictorScratch: Float64Array;
  /** The flat background component (Banfield & Raftery 1993) when the fit has one, else null. */
  background: BackgroundComponent | null;
}

export function createWorkspace(data: RegressionData, k: number, intercept: boolean, joint: boolean, rows?: Int32Array): MixtureWorkspace {
  const p = data.p;
  const q = intercept ? p + 1 : p;
  const n = rows ? rows.length : data.n;
  const design = new Float64Array(n * q);
  const y = new Float64Array(n);
  // The full data's predictors are used in place; a subsample gets its own copy.
  const predictors = rows ? new Float64Array(n * p) : data.x.subarray(0, n * p);
  // Copied value by value: a subarray view per row would allocate an object per row.
  const x = data.x;
  for (let i = 0; i < n; i++) {
    const source = rows ? rows[i] : i;
    y[i] = data.y[source];
    const from = source * p;
    const offset = i * q;
    if (intercept) design[offset] = 1;
    const to = intercept ? offset + 1 : offset;
    for (let j = 0; j < p; j++) design[to + j] = x[from + j];
    if (rows) for (let j = 0; j < p; j++) predictors[i * p + j] = x[from + j];
  }
  // Two passes over the rows (means, then centred squares: Chan, Golub & LeVeque 1983), each
  // reading rows in order rather than one strided sweep per predictor.
  const predictorMeans = new Float64Array(p);
  for (let i = 0; i < n; i++) for (let j = 0; j < p; j++) predictorMeans[j] += predictors[i * p + j];
  for (let j = 0; j < p; j++) predictorMeans[j] /= n;
  const predictorVariances = new Float64Array(p);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < p; j++) {
      const d = predictors[i * p + j] - predictorMeans[j];
      predictorVariances[j] += d * d;
    }
  }
  for (let j = 0; j < p; j++) predictorVariances[j] /= n;
  // Two q x blockRows buffers of doubles fit in about 256 KB, a typical L2 cache.
  const blockRows = Math.max(32, Math.floor(BLOCK_DOUBLES / Math.max(q, 1)));
  return {
    n,
    p,
    q,
    k,
    intercept,
    joint,
    design,
    y,
    predictors,
    memberships: new Float64Array(n * k),
    residuals: new Float64Array(n * k),
    rowLogLikelihood: new Float64Array(n),
    yVariance: referenceVariance(y, n),
    predictorVariances,
    grams: new Float64Array(k * q * q),
    rightHandSides: new Float64Array(k * q),
    sizes: new Float64Array(k),
    choleskyScratch: new Float64Array(choleskyScratchLength(q)),
    blockRows,
    blockColumns: new Float64Array(blockRows * Math.max(q, 1)),
    blockWeighted: new Float64Array(blockRows * Math.max(q, 1)),
    blockY: new Float64Array(blockRows),
    totalGram: null,
    totalRightHandSide: null,
    totalSquares: 0,
    weightedSquares: new Float64Array(k),
    rowScratch: new Float64Array(k + 1),
    predictorScratch: new Float64Array(p),
    background: null,
  };
}

/** Doubles per M-step block buffer (16384 x 8 bytes = 128 KB each). */
const BLOCK_DOUBLES = 16384;

