import type { MixtureParameters } from "./mixtureParameters";
import type { MixtureWorkspace } from "./mixtureWorkspace";
import { choleskyScratchLength, scaledCholeskyLower, scaledCholeskySolve } from "../cholesky";
import { constrainedVariances } from "./constrainedVariances";
import { accumulateGramBlock, accumulateRowBlock, dot, rowBlock } from "../weightedGram";

/** What an M-step changed beyond the parameters themselves. */
export interface MStepReport {
  /** Components with fewer than the minimum size or a failed solve; the driver re-seeds them. */
  collapsed: number[];
  /** Whether the variance floor or the Hathaway ratio bound was active. */
  varianceBoundActive: boolean;
}

export interface Guards {
  /** Smallest effective size Σ_i τ_ik a component may keep (q + 1). */
  minimumSize: number;
  /** Absolute variance floor (relative floor × variance of y). */
  varianceFloor: number;
  /** Hathaway bound on the smallest / largest component variance. */
  varianceRatioBound: number;
  /** Ridge added to each x covariance in the joint model, relative to each predictor's variance. */
  covarianceRidge: number;
}

/**
 * Memberships below this are left out of the Gram sums: each such row moves XᵀW_kX by less
 * than 1e-12 of one row's outer product, far below what changes a coefficient, and skipping
 * them saves most of the work once the components separate (sparse EM, Neal & Hinton 1998,
 * "A view of the EM algorithm that justifies incremental, sparse, and other variants").
 */
export const NEGLIGIBLE_MEMBERSHIP = 1e-12;

/**
 * M-step for the weights, coefficients and (joint model) x means and covariances
 * (Dempster, Laird & Rubin 1977; for the regression part DeSarbo & Cron 1988):
 * π_k = n_k / n, β_k = argmin Σ_i τ_ik (y_i − x_iᵀβ)², solved from XᵀW_kX β = XᵀW_k y.
 *
 * Memory layout: the row-major design is read once per M-step, a block of rows at a time.
 * Each block is copied into a small buffer that stays in cache (only the rows the component
 * holds): column by column, so every Gram entry is a dot product over contiguous memory (about
 * four times faster than adding each row's outer product into the Gram matrix, which is bound
 * by stores to a q x q array), or, where the kernel's SIMD path runs, row by row straight into
 * the module's memory (weightedGram.ts, rowBlock). Both give the same sums to the bit.
 */
export function mStepCoefficients(ws: MixtureWorkspace, params: MixtureParameters, guards: Guards): MStepReport {
  const { n, q, k, y, memberships, grams, rightHandSides, sizes } = ws;
  const { blockRows } = ws;
  const weightedSquares = ws.weightedSquares;
  grams.fill(0);
  rightHandSides.fill(0);
  sizes.fill(0);
  weightedSquares.fill(0);
  for (let i = 0; i < n; i++) for (let c = 0; c < k; c++) sizes[c] += memberships[i * k + c];
  // The largest component's Gram matrix is the total XᵀX (computed once per data set) minus
  // the others', since Σ_k τ_ik = 1: one component fewer to accumulate. Taking the largest keeps
  // the cancellation small: the error is about rounding × n / n_largest ≤ rounding × k.
  const total = totalGram(ws);
  // With a background component the memberships of the K regressions no longer sum to 1.
  const complement = k > 1 && ws.background === null;
  let largest = 0;
  for (let c = 1; c < k; c++) if (sizes[c] > sizes[largest]) largest = c;
  // Where the weighted-Gram kernel's SIMD path runs, the rows go straight into its memory,
  // row-major (rowBlock); elsewhere into column-major buffers.
  const block = rowBlock(q, blockRows);
  const gatheredY = block ? block.y : ws.blockY;
  for (let start = 0; start < n; start += blockRows) {
    const end = Math.min(n, start + blockRows);
    for (let c = 0; c < k; c++) {
      if (c === largest && complement) continue;
      // Gather the rows this component holds.
      let m = 0;
      for (let i = start; i < end; i++) {
        const w = memberships[i * k + c];
        if (w < NEGLIGIBLE_MEMBERSHIP) continue;
        if (block) gatherRow(ws, i, w, block.plain, block.weighted, m * block.qp, block.qp);
        else gatherColumn(ws, i, w, m);
        gatheredY[m] = y[i];
        weightedSquares[c] += w * y[i] * y[i];
        m++;
      }
      if (m === 0) continue;
      const gramOffset = c * q * q;
      if (block) {
        accumulateRowBlock(block, m, grams, gramOffset, rightHandSides, c * q);
      } else {
        for (let j = 0; j < q; j++) rightHandSides[c * q + j] += dot(ws.blockWeighted, j * blockRows, gatheredY, 0, m);
        accumulateGramBlock(ws.blockWeighted, ws.blockColumns, blockRows, m, q, grams, gramOffset);
      }
    }
  }
  if (complement) {
    const offset = largest * q * q;
    for (let j = 0; j < q; j++) {
      let rhs = total.rightHandSide[j];
      for (let c = 0; c < k; c++) if (c !== largest) rhs -= rightHandSides[c * q + j];
      rightHandSides[largest * q + j] = rhs;
      if (j === 0) {
        let squares = total.squares;
        for (let c = 0; c < k; c++) if (c !== largest) squares -= weightedSquares[c];
        weightedSquares[largest] = squares;
      }
      for (let l = j; l < q; l++) {
        let value = total.gram[j * q + l];
        for (let c = 0; c < k; c++) if (c !== largest) value -= grams[c * q * q + j * q + l];
        grams[offset + j * q + l] = value;
      }
    }
  }
  const collapsed: number[] = [];
  const solution = new Float64Array(q);
  for (let c = 0; c < k; c++) {
    params.weights[c] = sizes[c] / n;
    if (sizes[c] < guards.minimumSize) {
      collapsed.push(c);
      continue;
    }
    const solved = scaledCholeskySolve(grams.subarray(c * q * q, (c + 1) * q * q), rightHandSides.subarray(c * q, (c + 1) * q), q, solution, ws.choleskyScratch);
    if (solved) params.coefficients.set(solution, c * q);
    else collapsed.push(c);
  }
  if (ws.joint) mStepPredictorModel(ws, params, guards);
  return { collapsed, varianceBoundActive: false };
}

/**
 * Design row i into a row block at `base` (qp values, zero-padded) and w times it beside it.
 * Column j of the design is rowValues[i·rowStride − implicitOnes + j] after the implicit 1s
 * (mixtureWorkspace.ts).
 */
function gatherRow(ws: MixtureWorkspace, i: number, w: number, plain: Float64Array, weighted: Float64Array, base: number, qp: number): void {
  const { q, implicitOnes, rowValues, rowStride } = ws;
  const rowOffset = i * rowStride - implicitOnes;
  for (let j = 0; j < implicitOnes; j++) {
    plain[base + j] = 1;
    weighted[base + j] = w;
  }
  for (let j = implicitOnes; j < q; j++) {
    const value = rowValues[rowOffset + j];
    plain[base + j] = value;
    weighted[base + j] = w * value;
  }
  for (let j = q; j < qp; j++) {
    plain[base + j] = 0;
    weighted[base + j] = 0;
  }
}

/** Design row i into slot m of the workspace's column-major block buffers, and w times it beside it. */
function gatherColumn(ws: MixtureWorkspace, i: number, w: number, m: number): void {
  const { q, implicitOnes, rowValues, rowStride, blockRows, blockColumns, blockWeighted } = ws;
  const rowOffset = i * rowStride - implicitOnes;
  for (let j = 0; j < q; j++) {
    const value = j < implicitOnes ? 1 : rowValues[rowOffset + j];
    blockColumns[j * blockRows + m] = value;
    blockWeighted[j * blockRows + m] = w * value;
  }
}

/** XᵀX and Xᵀy over all rows of the workspace, accumulated on first use. */
function totalGram(ws: MixtureWorkspace): { gram: Float64Array; rightHandSide: Float64Array; squares: number } {
  if (ws.totalGram && ws.totalRightHandSide) return { gram: ws.totalGram, rightHandSide: ws.totalRightHandSide, squares: ws.totalSquares };
  const { n, q, rowValues, rowStride, implicitOnes, y, blockRows, blockColumns, blockY } = ws;
  const gram = new Float64Array(q * q);
  const rightHandSide = new Float64Array(q);
  for (let start = 0; start < n; start += blockRows) {
    const m = Math.min(n, start + blockRows) - start;
    for (let r = 0; r < m; r++) {
      const rowOffset = (start + r) * rowStride - implicitOnes;
      for (let j = 0; j < q; j++) blockColumns[j * blockRows + r] = j < implicitOnes ? 1 : rowValues[rowOffset + j];
      blockY[r] = y[start + r];
    }
    for (let j = 0; j < q; j++) {
      rightHandSide[j] += dot(blockColumns, j * blockRows, blockY, 0, m);
      for (let l = j; l < q; l++) gram[j * q + l] += dot(blockColumns, j * blockRows, blockColumns, l * blockRows, m);
    }
  }
  let squares = 0;
  for (let i = 0; i < n; i++) squares += y[i] * y[i];
  ws.totalGram = gram;
  ws.totalRightHandSide = rightHandSide;
  ws.totalSquares = squares;
  return { gram, rightHandSide, squares };
}

/**
 * M-step for the variances from the residuals at the new coefficients and the memberships of
 * the last E-step: s_k = Σ_i τ_ik r_ik² / n_k, then the floor and Hathaway bound
 * (constrainedVariances). Call after computeResiduals. Components listed in `reseeded` were
 * replaced after the last E-step and keep the variance their re-seeding gave them.
 */
export function mStepVariances(ws: MixtureWorkspace, params: MixtureParameters, guards: Guards, reseeded: readonly number[] = []): boolean {
  const { n, k, residuals, memberships } = ws;
  const sizes = ws.sizes.slice();
  const sums = new Float64Array(k);
  for (let i = 0; i < n; i++) {
    const offset = i * k;
    for (let c = 0; c < k; c++) {
      const r = residuals[offset + c];
      sums[c] += memberships[offset + c] * r * r;
    }
  }
  const unconstrained = new Float64Array(k);
  for (let c = 0; c < k; c++) unconstrained[c] = sizes[c] > 0 ? sums[c] / sizes[c] : guards.varianceFloor;
  // A re-seeded component keeps the variance of its seed fit; its memberships are stale.
  for (const c of reseeded) {
    unconstrained[c] = params.variances[c];
    sizes[c] = params.weights[c] * n;
  }
  return constrainedVariances(unconstrained, sizes, guards.varianceRatioBound, guards.varianceFloor, params.variances);
}

/**
 * Residual sums Σ τ r² below this fraction of Σ τ y² are not trusted from the Gram identity
 * (the subtraction loses about rounding × Σ τ y² / RSS of relative accuracy: 1e-8 leaves 8
 * digits); noiseless fits then take the explicit residual pass.
 */
const GRAM_RSS_RELIABLE = 1e-8;

/**
 * M-step variances without another sweep of the rows, from the sums the coefficient M-step
 * already holds: Σ_i τ_ik r_ik² = Σ τ y² − 2 βᵀ(XᵀW y) + βᵀ(XᵀWX)β (the normal-equations
 * identity). Returns false, changing nothing, when some component's sum is too small to trust
 * (see GRAM_RSS_RELIABLE); the caller then uses computeResiduals and mStepVariances.
 */
export function mStepVariancesFromGram(ws: MixtureWorkspace, params: MixtureParameters, guards: Guards): boolean {
  const { q, k, grams, rightHandSides, sizes, weightedSquares } = ws;
  const unconstrained = new Float64Array(k);
  for (let c = 0; c < k; c++) {
    const beta = params.coefficients.subarray(c * q, c * q + q);
    const gram = grams.subarray(c * q * q, (c + 1) * q * q);
    let quadratic = 0;
    let linear = 0;
    for (let j = 0; j < q; j++) {
      linear += beta[j] * rightHandSides[c * q + j];
      let row = gram[j * q + j] * beta[j];
      for (let l = j + 1; l < q; l++) row += 2 * gram[j * q + l] * beta[l];
      quadratic += beta[j] * row;
    }
    const sum = weightedSquares[c] - 2 * linear + quadratic;
    if (!(sum > GRAM_RSS_RELIABLE * weightedSquares[c]) || !(sizes[c] > 0)) return false;
    unconstrained[c] = sum / sizes[c];
  }
  constrainedVariances(unconstrained, sizes, guards.varianceRatioBound, guards.varianceFloor, params.variances);
  return true;
}

/**
 * Joint model (cluster-weighted model: Gershenfeld 1997; Ingrassia, Minotti & Vittadini 2012):
 * μ_k = Σ τ_ik x_i / n_k, Σ_k = Σ τ_ik (x_i − μ_k)(x_i − μ_k)ᵀ / n_k + ridge. Centred in a second
 * sweep rather than from the Gram matrix, so predictors with large means (years, say) keep
 * their digits. The ridge (a multiple of each predictor's overall variance) keeps Σ_k
 * invertible when a component's x lie on a lower-dimensional set, such as a dummy that is
 * constant within the component.
 */
export function mStepPredictorModel(ws: MixtureWorkspace, params: MixtureParameters, guards: Guards): void {
  const { n, p, k, predictors, memberships, sizes } = ws;
  const means = params.xMeans as Float64Array;
  const covariances = params.xCovariances as Float64Array;
  means.fill(0);
  covariances.fill(0);
  for (let i = 0; i < n; i++) {
    for (let c = 0; c < k; c++) {
      const w = memberships[i * k + c];
      if (w === 0) continue;
      for (let j = 0; j < p; j++) means[c * p + j] += w * predictors[i * p + j];
    }
  }
  for (let c = 0; c < k; c++) {
    const size = sizes[c] > 0 ? sizes[c] : 1;
    for (let j = 0; j < p; j++) means[c * p + j] /= size;
  }
  const centred = ws.predictorScratch;
  for (let i = 0; i < n; i++) {
    for (let c = 0; c < k; c++) {
      const w = memberships[i * k + c];
      if (w === 0) continue;
      for (let j = 0; j < p; j++) centred[j] = predictors[i * p + j] - means[c * p + j];
      const offset = c * p * p;
      for (let j = 0; j < p; j++) {
        const weighted = w * centred[j];
        for (let l = 0; l <= j; l++) covariances[offset + j * p + l] += weighted * centred[l];
      }
    }
  }
  for (let c = 0; c < k; c++) {
    const size = sizes[c] > 0 ? sizes[c] : 1;
    const offset = c * p * p;
    for (let j = 0; j < p; j++) {
      for (let l = 0; l <= j; l++) {
        const value = covariances[offset + j * p + l] / size;
        covariances[offset + j * p + l] = value;
        covariances[offset + l * p + j] = value;
      }
      covariances[offset + j * p + j] += guards.covarianceRidge * (ws.predictorVariances[j] > 0 ? ws.predictorVariances[j] : 1);
    }
  }
  factorPredictorCovariances(params);
}

/** Lower Cholesky factors (the Cholesky kernel, ridge retry on) and log determinants of every component's x covariance. */
export function factorPredictorCovariances(params: MixtureParameters): void {
  const { p, k } = params;
  const covariances = params.xCovariances as Float64Array;
  const factors = params.xCholesky as Float64Array;
  const logDeterminants = params.xLogDeterminants as Float64Array;
  const scratch = new Float64Array(choleskyScratchLength(p));
  for (let c = 0; c < k; c++) {
    const offset = c * p * p;
    // The covariance ridge of the M-step keeps the matrix positive definite; a non-finite
    // input fails the factorisation and leaves a unit factor with an infinite log
    // determinant: a density of zero.
    const factor = factors.subarray(offset, offset + p * p);
    const logDeterminant = scaledCholeskyLower(covariances.subarray(offset, offset + p * p), p, factor, scratch);
    if (Number.isNaN(logDeterminant)) {
      factor.fill(0);
      for (let j = 0; j < p; j++) factor[j * p + j] = 1;
    }
    logDeterminants[c] = Number.isNaN(logDeterminant) ? Infinity : logDeterminant;
  }
}
