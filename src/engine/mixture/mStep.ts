import type { MixtureParameters } from "./mixtureParameters";
import { workspaceRows, type MixtureWorkspace, type WorkspaceRows } from "./mixtureWorkspace";
import { choleskyScratchLength, scaledCholeskyLower, scaledCholeskySolve } from "../cholesky";
import { constrainedVariances } from "./constrainedVariances";
import { columnSums } from "../rowKernels";
import { addBlockDots, addBlockGram, finishGramSum, gatherRows, holdRows, rowBlock, stageMemberships, stageRows, startGramSums, weighBlock } from "../weightedGram";
import { GRAM_MULTIPLY_ADDS_PER_MICROSECOND, allShared, helperFor, helperShare, shareWork, type HelperJob } from "../helperThread";

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
 * Memory layout: the row-major design is read once per M-step, a block of rows at a time. The
 * rows a component holds are copied into the weighted-Gram kernel's row block, which stays in
 * cache (weightedGram.ts: in the SIMD module's memory where that runs, so the sums need no
 * further copy), with w·x beside each row.
 */
export function mStepCoefficients(ws: MixtureWorkspace, params: MixtureParameters, guards: Guards): MStepReport {
  const { n, q, k, memberships, grams, rightHandSides, sizes } = ws;
  columnSums(memberships, n, k, sizes);
  // The largest component's Gram matrix is the total XᵀX (computed once per data set) minus
  // the others', since Σ_k τ_ik = 1: one component fewer to accumulate. Taking the largest keeps
  // the cancellation small: the error is about rounding × n / n_largest ≤ rounding × k. With a
  // background component the memberships of the K regressions no longer sum to 1.
  let largest = 0;
  for (let c = 1; c < k; c++) if (sizes[c] > sizes[largest]) largest = c;
  const complement = k > 1 && ws.background === null ? largest : -1;
  accumulateComponentSums(ws, complement);
  if (complement >= 0) complementSums(ws, complement);
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
 * Σ τ x xᵀ, Σ τ x y and Σ τ y² of every component but `skipped` (−1: none) into the
 * workspace's grams, rightHandSides and weightedSquares. With a helper thread (helperThread.ts)
 * and enough work, the components are split between the two threads by the rows each holds
 * (each thread sums whole components, every sum in the same order as on one thread).
 */
function accumulateComponentSums(ws: MixtureWorkspace, skipped: number): void {
  const { q, k, memberships, grams, rightHandSides, weightedSquares, heldRows } = ws;
  // componentSums sets each summed component's slots afresh; the skipped one's Gram is zeroed
  // here (complementSums then writes its upper triangle, right-hand side and Σ τ y²).
  if (skipped >= 0) grams.fill(0, skipped * q * q, (skipped + 1) * q * q);
  const job: ComponentSumsJob = { kind: "componentSums", ...workspaceRows(ws), memberships, grams, rightHandSides, weightedSquares, heldRows, components: [] };
  const summed: number[] = [];
  for (let c = 0; c < k; c++) if (c !== skipped) summed.push(c);
  // The rows each component gathered at the last M-step (its size before the first): the
  // memberships move little from one step to the next, and counting them again costs a sweep.
  const held = summed.length > 1 && allShared(ws.rowValues, ws.y, memberships, grams, rightHandSides, weightedSquares, heldRows) ? Float64Array.from(ws.sizes, (size, c) => (heldRows[c] > 0 ? heldRows[c] : size)) : null;
  const helper = held ? helperFor(heldWork(held, summed, q) / GRAM_MULTIPLY_ADDS_PER_MICROSECOND) : null;
  if (!helper || !held) {
    componentSums({ ...job, components: summed });
    return;
  }
  const [mine, theirs] = splitByRows(summed, held, helperShare(job.kind));
  const handed: ComponentSumsJob = { ...job, components: theirs };
  shareWork(helper, handed, heldWork(held, mine, q), heldWork(held, theirs, q), () => componentSums({ ...job, components: mine }), () => componentSums(handed));
}

/** Half an M-step's sums for the helper thread: the components listed, over every row of the arrays. */
export interface ComponentSumsJob extends HelperJob, WorkspaceRows {
  kind: "componentSums";
  memberships: Float64Array;
  grams: Float64Array;
  rightHandSides: Float64Array;
  weightedSquares: Float64Array;
  /** Out: the rows each listed component gathered (membership at least NEGLIGIBLE_MEMBERSHIP). */
  heldRows: Float64Array;
  components: number[];
}

/**
 * The sums of the components listed, into their slots of the job's arrays (set afresh, so a
 * share a failed helper left half done is simply made again), a block of rows at a time: the
 * block's rows, memberships and responses are staged once (in the SIMD module's memory where
 * that runs), each component picks the rows it holds from there (holdRows, which also adds
 * their Σ τ y²) and gathers them with their response and membership beside them; the kernel
 * weighs and sums them.
 */
export function componentSums(job: ComponentSumsJob): void {
  const { n, q, k, y, memberships, grams, rightHandSides, weightedSquares, heldRows, blockRows, rowValues, rowStride, implicitOnes, components } = job;
  for (const c of components) {
    grams.fill(0, c * q * q, (c + 1) * q * q);
    rightHandSides.fill(0, c * q, (c + 1) * q);
    weightedSquares[c] = 0;
    heldRows[c] = 0;
  }
  const block = rowBlock(q, blockRows, 2, rowStride, components.length, k);
  startGramSums(block);
  for (let start = 0; start < n; start += blockRows) {
    const end = Math.min(n, start + blockRows);
    stageRows(block, rowValues, start, end);
    stageMemberships(block, memberships, y, start, end);
    for (let s = 0; s < components.length; s++) {
      const c = components[s];
      const m = holdRows(block, end - start, c, NEGLIGIBLE_MEMBERSHIP, weightedSquares, c);
      heldRows[c] += m;
      gatherRows(block, m, implicitOnes);
      weighBlock(block, m, 1);
      addBlockGram(block, m, grams, c * q * q, s);
      addBlockDots(block, m, "weighted", 0, rightHandSides, c * q);
    }
  }
  for (let s = 0; s < components.length; s++) finishGramSum(block, s, grams, components[s] * q * q);
}

/** Multiply-adds of the listed components' Gram sums: q(q + 1)/2 per held row. */
function heldWork(held: Float64Array, components: readonly number[], q: number): number {
  let rows = 0;
  for (const c of components) rows += held[c];
  return (rows * q * (q + 1)) / 2;
}

/**
 * The components in two lists whose held rows are about 1 − share and share of the whole: the
 * longest first, each to the list furthest below its part so far (the longest-processing-time
 * rule, Graham 1969, for machines of different speeds). The first list is never empty.
 */
function splitByRows(components: readonly number[], held: Float64Array, share: number): [number[], number[]] {
  const order = [...components].sort((a, b) => held[b] - held[a] || a - b);
  const lists: [number[], number[]] = [[], []];
  const load = [0, 0];
  const part = [1 - share, share];
  for (const c of order) {
    const to = (load[0] + held[c]) / part[0] <= (load[1] + held[c]) / part[1] ? 0 : 1;
    lists[to].push(c);
    load[to] += held[c];
  }
  return lists;
}

/** Component `largest`'s sums as the totals over all rows minus the other components' (see mStepCoefficients). */
function complementSums(ws: MixtureWorkspace, largest: number): void {
  const { q, k, grams, rightHandSides, weightedSquares } = ws;
  const total = totalGram(ws);
  let squares = total.squares;
  for (let c = 0; c < k; c++) if (c !== largest) squares -= weightedSquares[c];
  weightedSquares[largest] = squares;
  const offset = largest * q * q;
  for (let j = 0; j < q; j++) {
    let rhs = total.rightHandSide[j];
    for (let c = 0; c < k; c++) if (c !== largest) rhs -= rightHandSides[c * q + j];
    rightHandSides[largest * q + j] = rhs;
    for (let l = j; l < q; l++) {
      let value = total.gram[j * q + l];
      for (let c = 0; c < k; c++) if (c !== largest) value -= grams[c * q * q + j * q + l];
      grams[offset + j * q + l] = value;
    }
  }
}

/**
 * XᵀX, Xᵀy and Σ y² over all rows of the workspace, accumulated on first use by the M-step's
 * own sums (componentSums) as one component holding every row with membership 1.
 */
function totalGram(ws: MixtureWorkspace): { gram: Float64Array; rightHandSide: Float64Array; squares: number } {
  if (ws.totalGram && ws.totalRightHandSide) return { gram: ws.totalGram, rightHandSide: ws.totalRightHandSide, squares: ws.totalSquares };
  const { n, q } = ws;
  const gram = new Float64Array(q * q);
  const rightHandSide = new Float64Array(q);
  const squares = new Float64Array(1);
  componentSums({ kind: "componentSums", ...workspaceRows(ws), k: 1, memberships: new Float64Array(n).fill(1), grams: gram, rightHandSides: rightHandSide, weightedSquares: squares, heldRows: new Float64Array(1), components: [0] });
  ws.totalGram = gram;
  ws.totalRightHandSide = rightHandSide;
  ws.totalSquares = squares[0];
  return { gram, rightHandSide, squares: squares[0] };
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
