import type { MixtureParameters } from "./mixtureParameters";
import { workspaceRows, type MixtureWorkspace, type WorkspaceRows } from "./mixtureWorkspace";
import { backgroundLogTerm } from "./backgroundComponent";
import { reserve, simdKernel } from "../weightedGram";
import { ROW_MULTIPLY_ADDS_PER_MICROSECOND, ROW_TERM_MULTIPLY_ADDS, allShared, helperFor, helperShare, shareWork, type HelperJob } from "../helperThread";

import { gaussianLogDensity, componentLogConstant, residualMemberships, rowMemberships, type ConstantTerm } from "../logDensities";
import { paddedCoefficients, rowResiduals } from "../rowResiduals";

/**
 * Residuals r_ik = y_i − x_iᵀβ_k for every row and component, stored n x k. The M-step's
 * variances and the next E-step both read them, so each iteration sweeps the design for
 * residuals once.
 */
export function computeResiduals(ws: MixtureWorkspace, params: MixtureParameters): void {
  byRows(rowsJob(ws, params, true, null));
}

/**
 * Rows [from, to) of a residual pass or an E-step, the part of either that another thread can
 * run (helperThread.ts): the plain model's arrays, the coefficients, and for an E-step each
 * component's log constant and curvature (`terms`; null for residuals only).
 */
export interface RowsJob extends HelperJob, WorkspaceRows {
  kind: "rows";
  from: number;
  to: number;
  residuals: Float64Array;
  coefficients: Float64Array;
  /** Compute the residuals at the coefficients first (else read the stored ones). */
  withResiduals: boolean;
  terms: { constant: Float64Array; curvature: Float64Array; memberships: Float64Array; rowLogLikelihood: Float64Array; extra?: ConstantTerm } | null;
}

function rowsJob(ws: MixtureWorkspace, params: MixtureParameters, withResiduals: boolean, terms: RowsJob["terms"]): RowsJob {
  const { n, q, k, residuals } = ws;
  return { kind: "rows", ...workspaceRows(ws), from: 0, to: n, residuals, coefficients: params.coefficients.slice(0, k * q), withResiduals, terms };
}

/**
 * Runs the job, its later rows on the helper thread when one is installed, the arrays are
 * shared and the work is enough for two; every row's values are the same either way. Returns
 * the E-step's rows' values added in row order when one thread ran them all, null when the
 * two shared them (the caller then adds rowLogLikelihood in row order: the same sum).
 */
function byRows(job: RowsJob): number | null {
  const { from, to, q, k } = job;
  const arrays = job.terms ? [job.rowValues, job.y, job.residuals, job.terms.memberships, job.terms.rowLogLikelihood] : [job.rowValues, job.y, job.residuals];
  if (job.terms?.extra) arrays.push(job.terms.extra.memberships);
  const helper = allShared(...arrays) ? helperFor(rowsMicroseconds(to - from, k, q, job.withResiduals, job.terms !== null)) : null;
  if (!helper) return stepRows(job);
  const middle = from + Math.round((to - from) * (1 - helperShare(job.kind)));
  const theirs: RowsJob = { ...job, from: middle };
  shareWork(helper, theirs, middle - from, to - middle, () => stepRows({ ...job, to: middle }), () => stepRows(theirs));
  return null;
}

/** Estimated microseconds of a pass over `rows` rows: their residuals, the E-step's terms, or both. */
export function rowsMicroseconds(rows: number, k: number, q: number, withResiduals: boolean, withTerms: boolean): number {
  return (rows * k * ((withResiduals ? q : 0) + (withTerms ? ROW_TERM_MULTIPLY_ADDS : 0))) / ROW_MULTIPLY_ADDS_PER_MICROSECOND;
}

/**
 * The job's rows: residuals (on the SIMD module where it runs), then the E-step's memberships
 * when asked for; returns the rows' values added in row order (0 without the E-step).
 */
export function stepRows(job: RowsJob): number {
  const { from, to, q, k, rowValues, rowStride, implicitOnes, y, residuals, terms } = job;
  if (job.withResiduals && !residualsInModule(job)) {
    const padded = paddedCoefficients(job.coefficients, k, q);
    for (let i = from; i < to; i++) rowResiduals(rowValues, i * rowStride - implicitOnes, implicitOnes, q, padded, k, y[i], residuals, i * k);
  }
  return terms ? residualMemberships(residuals, from, to, k, terms.constant, terms.curvature, terms.memberships, terms.rowLogLikelihood, terms.extra) : 0;
}

/**
 * The job's residuals on the SIMD module where it runs (false, doing nothing, elsewhere): a
 * block of rows and their responses copied into its memory at a time, two components to a
 * lane pair, each sum in rowResiduals' order, so the residuals are the same to the bit.
 */
function residualsInModule(job: RowsJob): boolean {
  const kernel = simdKernel();
  if (!kernel) return false;
  const { from, to, q, k, rowValues, rowStride, implicitOnes, y, residuals, blockRows, coefficients } = job;
  const pairs = (k + 1) >> 1;
  // Memory in doubles: the staged rows, their responses, the coefficients by pairs, the output.
  const yAt = blockRows * rowStride;
  const coefficientsAt = yAt + blockRows;
  const outAt = coefficientsAt + 2 * pairs * q;
  reserve(kernel, (outAt + blockRows * k) * 8);
  const heap = kernel.heap;
  for (let p = 0; p < pairs; p++) {
    for (let j = 0; j < q; j++) {
      heap[coefficientsAt + 2 * (p * q + j)] = coefficients[2 * p * q + j];
      heap[coefficientsAt + 2 * (p * q + j) + 1] = 2 * p + 1 < k ? coefficients[(2 * p + 1) * q + j] : 0;
    }
  }
  for (let start = from; start < to; start += blockRows) {
    const m = Math.min(to, start + blockRows) - start;
    heap.set(rowValues.subarray(start * rowStride, (start + m) * rowStride), 0);
    heap.set(y.subarray(start, start + m), yAt);
    kernel.residuals(0, rowStride, implicitOnes, q, coefficientsAt * 8, yAt * 8, m, k, outAt * 8);
    residuals.set(heap.subarray(outAt, outAt + m * k), start * k);
  }
  return true;
}

/**
 * E-step (Dempster, Laird & Rubin 1977) from the stored residuals, in log space:
 * log τ_ik = log π_k + log φ(y_i; x_iᵀβ_k, σ_k²) [+ log φ(x_i; μ_k, Σ_k) in the joint model,
 * Gershenfeld 1997] − logsumexp over k, through the E-step kernel (logDensities.ts).
 *
 * @param withResiduals compute the residuals at the current coefficients first (on the SIMD
 *   module where it runs, else row by row) instead of reading those computeResiduals stored
 * @returns the log-likelihood Σ_i log Σ_k π_k φ_ik; the per-row terms go to ws.rowLogLikelihood
 */
export function eStep(ws: MixtureWorkspace, params: MixtureParameters, withResiduals = false): number {
  const { n, k, memberships, rowLogLikelihood } = ws;
  // Per-component constants: log π_k − ½ ln(2π σ_k²) and −1/(2σ_k²).
  const constant = new Float64Array(k);
  const curvature = new Float64Array(k);
  for (let c = 0; c < k; c++) {
    constant[c] = componentLogConstant(params.weights[c], params.variances[c]);
    curvature[c] = -0.5 / params.variances[c];
  }
  // The flat background (Banfield & Raftery 1993) is one more term, the same for every row,
  // its memberships in the background's own array.
  const background = ws.background;
  const extra = background ? { term: backgroundLogTerm(background), memberships: background.memberships } : undefined;
  if (ws.joint && params.xMeans !== null) return jointEStep(ws, params, withResiduals, constant, curvature, extra);
  const total = byRows(rowsJob(ws, params, withResiduals, { constant, curvature, memberships, rowLogLikelihood, extra }));
  if (total !== null) return total;
  let shared = 0;
  for (let i = 0; i < n; i++) shared += rowLogLikelihood[i];
  return shared;
}

/** The joint model's E-step, with its x densities (and the background's term when it has one), row by row on the calling thread. */
function jointEStep(ws: MixtureWorkspace, params: MixtureParameters, withResiduals: boolean, constant: Float64Array, curvature: Float64Array, extra: ConstantTerm | undefined): number {
  const { n, k, residuals, memberships, rowLogLikelihood } = ws;
  if (withResiduals) computeResiduals(ws, params);
  // k terms a row, and room for the background's.
  const logTerm = ws.rowScratch;
  const xMeans = params.xMeans as Float64Array;
  const xFactors = params.xCholesky as Float64Array;
  const xLogDeterminants = params.xLogDeterminants as Float64Array;
  let total = 0;
  for (let i = 0; i < n; i++) {
    const offset = i * k;
    for (let c = 0; c < k; c++) {
      const r = residuals[offset + c];
      logTerm[c] = constant[c] + curvature[c] * r * r + gaussianLogDensity(ws.predictors, i * ws.p, xMeans, c * ws.p, xFactors, c * ws.p * ws.p, xLogDeterminants[c], ws.p, ws.predictorScratch);
    }
    rowLogLikelihood[i] = rowMemberships(logTerm, k, memberships, offset, extra, i);
    total += rowLogLikelihood[i];
  }
  return total;
}
