import { referenceVariance } from "../referenceVariance";
import type { RegressionData } from "../mixtureTypes";
import { choleskyScratchLength } from "../cholesky";
import { blockRowsFor } from "../weightedGram";
import { shareableArray } from "../helperThread";
import type { BackgroundComponent } from "./backgroundComponent";

/**
 * One data set (the full data or a subsample) prepared for EM, with every scratch array the
 * phases need allocated once. Memory: n·(2k + 1) doubles on all rows (the data's own x and y
 * are read in place; n·q more once the design is asked for), n·(q + 2k + 2) on a subsample plus
 * n·p for its predictors when kept: linear in rows × (predictors + components).
 */
export interface MixtureWorkspace {
  n: number;
  p: number;
  q: number;
  k: number;
  intercept: boolean;
  joint: boolean;
  /**
   * Row-major n x q design, a leading 1 per row when intercept. On the full data it is made
   * on first use only (the EM kernels read `rowValues` instead), so a large fit that never
   * needs it saves the copy.
   */
  readonly design: Float64Array;
  /**
   * What the EM kernels read, row by row: `rowStride` values per row in `rowValues`, after
   * `implicitOnes` leading 1s (the intercept column). The full data's own predictors when the
   * workspace holds all rows (stride p, one implicit 1 with an intercept); a subsample's copied
   * design otherwise (stride q, none). Column j of row i is 1 for j < implicitOnes, else
   * rowValues[i·rowStride + j − implicitOnes].
   */
  rowValues: Float64Array;
  rowStride: number;
  implicitOnes: number;
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
  /** Rows per block of the M-step's sums (the weighted-Gram kernel's row blocks). */
  blockRows: number;
  /** XᵀX and Xᵀy over all rows, filled by the first M-step. */
  totalGram: Float64Array | null;
  totalRightHandSide: Float64Array | null;
  /** Σ y² over all rows (with totalGram). */
  totalSquares: number;
  /** Σ_i τ_ik y_i² per component, from the last M-step. */
  weightedSquares: Float64Array;
  /** Rows each component's Gram sums gathered at the last M-step (the helper thread's split). */
  heldRows: Float64Array;
  /** Per-row scratch of length k + 1 (the background's term last). */
  rowScratch: Float64Array;
  /** Per-row scratch of length p (joint model). */
  predictorScratch: Float64Array;
  /** The flat background component (Banfield & Raftery 1993) when the fit has one, else null. */
  background: BackgroundComponent | null;
}

/** What a job on the helper thread reads of a workspace's rows (helperThread.ts), as plain values and shared arrays. */
export type WorkspaceRows = Pick<MixtureWorkspace, "n" | "q" | "k" | "rowStride" | "implicitOnes" | "blockRows" | "rowValues" | "y">;

/** The workspace's WorkspaceRows alone (a job must not carry the whole workspace to the other thread). */
export function workspaceRows(ws: MixtureWorkspace): WorkspaceRows {
  const { n, q, k, rowStride, implicitOnes, blockRows, rowValues, y } = ws;
  return { n, q, k, rowStride, implicitOnes, blockRows, rowValues, y };
}

/**
 * @param rows the rows of `data` this workspace holds (a subsample), or all rows in order
 * @param copyPredictors whether a subsample keeps its own n x p copy of the predictors (the
 *   joint model's x, location seeding and the moment warm start read it); a workspace only
 *   EM runs on in the plain model does without (empty), which saves a large fresh array
 */
export function createWorkspace(data: RegressionData, k: number, intercept: boolean, joint: boolean, rows?: Int32Array, copyPredictors = true): MixtureWorkspace {
  const p = data.p;
  const q = intercept ? p + 1 : p;
  const n = rows ? rows.length : data.n;
  const layout = rows ? subsampleRows(data, rows, q, intercept, copyPredictors || joint) : allRows(data, n, intercept);
  let design = layout.design;
  const { y, predictors, rowValues, rowStride, implicitOnes } = layout;
  const predictorVariances = predictorVariancesOf(rowValues, n, p, rowStride);
  const blockRows = blockRowsFor(q);
  return {
    n,
    p,
    q,
    k,
    intercept,
    joint,
    get design(): Float64Array {
      design ??= designFromPredictors(data.x, n, p, intercept);
      return design;
    },
    rowValues,
    rowStride,
    implicitOnes,
    y,
    predictors,
    memberships: shareableArray(n * k),
    residuals: shareableArray(n * k),
    rowLogLikelihood: shareableArray(n),
    yVariance: referenceVariance(y, n),
    predictorVariances,
    grams: shareableArray(k * q * q),
    rightHandSides: shareableArray(k * q),
    sizes: new Float64Array(k),
    choleskyScratch: new Float64Array(choleskyScratchLength(q)),
    blockRows,
    totalGram: null,
    totalRightHandSide: null,
    totalSquares: 0,
    weightedSquares: shareableArray(k),
    heldRows: shareableArray(k),
    rowScratch: new Float64Array(k + 1),
    predictorScratch: new Float64Array(p),
    background: null,
  };
}

/**
 * The workspace's rows: the arrays that hold them and where the EM kernels read them (see
 * MixtureWorkspace.rowValues).
 */
interface RowLayout {
  /** The subsample's copied design, or null on all rows (made on first use). */
  design: Float64Array | null;
  y: Float64Array;
  predictors: Float64Array;
  rowValues: Float64Array;
  rowStride: number;
  implicitOnes: number;
}

/**
 * All rows: the data's own responses and predictors, used in place (no fresh n-sized copies:
 * on this kind of machine the first touch of new memory costs more than a pass over it).
 */
function allRows(data: RegressionData, n: number, intercept: boolean): RowLayout {
  const predictors = data.x.subarray(0, n * data.p);
  return { design: null, y: data.y.subarray(0, n), predictors, rowValues: predictors, rowStride: data.p, implicitOnes: intercept ? 1 : 0 };
}

/**
 * A subsample copies its rows' design (and predictors when `copy`), value by value: a subarray
 * view per row would allocate an object per row.
 */
function subsampleRows(data: RegressionData, rows: Int32Array, q: number, intercept: boolean, copy: boolean): RowLayout {
  const p = data.p;
  const n = rows.length;
  const ones = intercept ? 1 : 0;
  const design = shareableArray(n * q);
  const y = shareableArray(n);
  const predictors = new Float64Array(copy ? n * p : 0);
  const x = data.x;
  for (let i = 0; i < n; i++) {
    const from = rows[i] * p;
    const offset = i * q;
    y[i] = data.y[rows[i]];
    if (intercept) design[offset] = 1;
    for (let j = 0; j < p; j++) design[offset + ones + j] = x[from + j];
    if (copy) for (let j = 0; j < p; j++) predictors[i * p + j] = x[from + j];
  }
  return { design, y, predictors, rowValues: design, rowStride: q, implicitOnes: 0 };
}

/**
 * Each predictor's variance over the rows, in two passes (means, then centred squares: Chan,
 * Golub & LeVeque 1983), each reading rows in order rather than one strided sweep per predictor.
 */
function predictorVariancesOf(rowValues: Float64Array, n: number, p: number, rowStride: number): Float64Array {
  const first = rowStride - p;
  const predictorMeans = new Float64Array(p);
  for (let i = 0; i < n; i++) for (let j = 0; j < p; j++) predictorMeans[j] += rowValues[i * rowStride + first + j];
  for (let j = 0; j < p; j++) predictorMeans[j] /= n;
  const predictorVariances = new Float64Array(p);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < p; j++) {
      const d = rowValues[i * rowStride + first + j] - predictorMeans[j];
      predictorVariances[j] += d * d;
    }
  }
  for (let j = 0; j < p; j++) predictorVariances[j] /= n;
  return predictorVariances;
}

/** The n x q design of the first n rows: a leading 1 per row when intercept, then the p predictors. */
function designFromPredictors(x: Float64Array, n: number, p: number, intercept: boolean): Float64Array {
  const q = intercept ? p + 1 : p;
  const ones = q - p;
  const design = shareableArray(n * q);
  for (let i = 0; i < n; i++) {
    if (intercept) design[i * q] = 1;
    for (let j = 0; j < p; j++) design[i * q + ones + j] = x[i * p + j];
  }
  return design;
}

