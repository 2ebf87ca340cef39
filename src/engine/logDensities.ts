import { kernelBlockRows, reserveDoubles, rowKernels } from "./rowKernels";
import { paddedCoefficients, rowResiduals } from "./rowResiduals";

/**
 * The one E-step kernel (Dempster, Laird & Rubin 1977), shared by the fit's own E-step
 * (mixture/eStep.ts), the memberships at a finished fit's parameters (computeMemberships.ts,
 * used by the scan, the standard errors and prediction) and the subspace EM of the warm start:
 *
 *  - Gaussian log densities: ln φ(y; xᵀβ, σ²) from a residual, and ln φ(x; μ, Σ) through the
 *    lower Cholesky factor of Σ (the joint model's x density, Gershenfeld 1997);
 *  - memberships from a row's log terms ln π_k + ln f_ik by log-sum-exp: subtracting the row's
 *    largest term before exponentiating keeps every term in range however small the variances.
 *
 * Many rows at a time (normaliseLogDensities, residualMemberships, squareMemberships) run on
 * the row kernels' WebAssembly module (rowKernels.ts) where the runtime has WebAssembly: the
 * same operations in the same order, with fdlibm's exp and log, which are what Math.exp and
 * Math.log compute in V8, so every value is the same to the bit as membershipsFromLogTerms's.
 */

const LOG_TWO_PI = Math.log(2 * Math.PI);

/**
 * A regression component's constant in its log term: ln π − ½ ln(2πσ²), so that the term of a
 * row with residual r is this minus r²/(2σ²). The one place the fit's E-step, the memberships
 * at a finished fit, the observed information, the subspace EM and the standard errors' test
 * for background-only rows take it from.
 */
export function componentLogConstant(weight: number, variance: number): number {
  return Math.log(weight) - 0.5 * (LOG_TWO_PI + Math.log(variance));
}

/** ln(2⁻⁵³) ≈ −36.7: a term exp(−37) ≈ 8.5e-17 is below half an ulp of a sum that is at least 1. */
const NEGLIGIBLE_LOG_RATIO = -37;

/**
 * Memberships of one row from its k log terms (terms[termOffset + c]) into
 * memberships[offset + c]; the two may be the same array and offset (in place).
 * @returns the row's log mixture density ln Σ_k exp(term_k)
 */
export function membershipsFromLogTerms(terms: Float64Array, termOffset: number, k: number, memberships: Float64Array, offset: number): number {
  let largest = -Infinity;
  let at = 0;
  for (let c = 0; c < k; c++) {
    if (terms[termOffset + c] > largest) {
      largest = terms[termOffset + c];
      at = c;
    }
  }
  let sum = 0;
  for (let c = 0; c < k; c++) {
    const difference = terms[termOffset + c] - largest;
    // Below NEGLIGIBLE_LOG_RATIO the term cannot change the sum (which is at least 1) in
    // double precision, so the exponential is skipped and the membership is exactly 0; the
    // largest term's own is exp(0) = 1.
    const e = difference > NEGLIGIBLE_LOG_RATIO ? (c === at ? 1 : Math.exp(difference)) : 0;
    memberships[offset + c] = e;
    sum += e;
  }
  // A row whose other terms are all negligible (most rows of well separated components) has
  // memberships 0 and 1 already and ln Σ = largest + ln 1: no division, no logarithm.
  if (sum === 1) return largest + 0;
  const inverse = 1 / sum;
  for (let c = 0; c < k; c++) memberships[offset + c] *= inverse;
  return largest + Math.log(sum);
}

/** Row i's most likely component: the first with its largest membership (n x k, row-major). */
export function mostLikelyComponent(memberships: Float64Array, i: number, k: number): number {
  let best = 0;
  for (let c = 1; c < k; c++) if (memberships[i * k + c] > memberships[i * k + best]) best = c;
  return best;
}

/**
 * Turns a row-major m x k block of log terms ln(π_k f_ik) into memberships in place and
 * returns Σ_i ln Σ_k π_k f_ik; each row's value goes to rowLogLikelihood when given.
 */
export function normaliseLogDensities(logDensities: Float64Array, m: number, k: number, rowLogLikelihood?: Float64Array): number {
  const kernel = rowKernels();
  if (!kernel) {
    let total = 0;
    for (let i = 0; i < m; i++) {
      const value = membershipsFromLogTerms(logDensities, i * k, k, logDensities, i * k);
      if (rowLogLikelihood) rowLogLikelihood[i] = value;
      total += value;
    }
    return total;
  }
  const blockRows = kernelBlockRows(k);
  const rowsAt = blockRows * k;
  reserveDoubles(kernel, rowsAt + blockRows);
  let total = 0;
  for (let start = 0; start < m; start += blockRows) {
    const rows = Math.min(m - start, blockRows);
    kernel.heap.set(logDensities.subarray(start * k, (start + rows) * k), 0);
    total = kernel.normalise(0, rows, k, 0, rowsAt * 8, total);
    logDensities.set(kernel.heap.subarray(0, rows * k), start * k);
    if (rowLogLikelihood) rowLogLikelihood.set(kernel.heap.subarray(rowsAt, rowsAt + rows), start);
  }
  return total;
}

/** One more log term, the same for every row (the flat background's), and where its memberships go. */
export interface ConstantTerm {
  term: number;
  memberships: Float64Array;
}

/**
 * Row `row`'s memberships from its k log terms in terms[0..k) into memberships[offset..], as
 * membershipsFromLogTerms makes them; with `extra`, terms[k] is set to its term (terms must
 * have room) and its membership goes to extra.memberships[row]. Returns the row's value.
 */
export function rowMemberships(terms: Float64Array, k: number, memberships: Float64Array, offset: number, extra: ConstantTerm | undefined, row: number): number {
  if (!extra) return membershipsFromLogTerms(terms, 0, k, memberships, offset);
  terms[k] = extra.term;
  const value = membershipsFromLogTerms(terms, 0, k + 1, terms, 0);
  for (let c = 0; c < k; c++) memberships[offset + c] = terms[c];
  extra.memberships[row] = terms[k];
  return value;
}

/**
 * The regression E-step of rows [from, to) from their stored residuals (n x k, row-major): the
 * log terms constant_c + curvature_c · r² (constant_c = ln π_c − ½ ln(2πσ_c²), curvature_c =
 * −1/(2σ_c²)), then memberships[i·k + c] and rowLogLikelihood[i] as membershipsFromLogTerms
 * makes them. With `extra`, each row has one more term, extra.term (the background's: a
 * residual of 0 under a curvature of 0 adds exactly nothing to it in the module), whose
 * membership goes to extra.memberships[i]. Returns the rows' values added in row order from 0.
 */
export function residualMemberships(
  residuals: Float64Array, from: number, to: number, k: number, constant: Float64Array, curvature: Float64Array,
  memberships: Float64Array, rowLogLikelihood: Float64Array, extra?: ConstantTerm,
): number {
  const kernel = rowKernels();
  // Terms a row: the components', and the extra one.
  const width = extra ? k + 1 : k;
  let total = 0;
  if (!kernel) {
    const logTerm = new Float64Array(width);
    for (let i = from; i < to; i++) {
      const offset = i * k;
      for (let c = 0; c < k; c++) {
        const r = residuals[offset + c];
        logTerm[c] = constant[c] + curvature[c] * r * r;
      }
      rowLogLikelihood[i] = rowMemberships(logTerm, k, memberships, offset, extra, i);
      total += rowLogLikelihood[i];
    }
    return total;
  }
  // The module's memory in doubles: constants, curvatures, one row's terms, then a block's
  // residuals, memberships and row values.
  const blockRows = kernelBlockRows(width);
  const residualsAt = 3 * width;
  const outAt = residualsAt + blockRows * width;
  const rowsAt = outAt + blockRows * width;
  reserveDoubles(kernel, rowsAt + blockRows);
  const heap = kernel.heap;
  heap.set(constant.subarray(0, k), 0);
  heap.set(curvature.subarray(0, k), width);
  if (extra) {
    heap[k] = extra.term;
    heap[width + k] = 0;
  }
  for (let start = from; start < to; start += blockRows) {
    const rows = Math.min(to - start, blockRows);
    if (extra) placeWithExtraColumn(residuals.subarray(start * k, (start + rows) * k), rows, k, heap, residualsAt);
    else heap.set(residuals.subarray(start * k, (start + rows) * k), residualsAt);
    total = kernel.fromResiduals(residualsAt * 8, rows, width, 0, width * 8, 2 * width * 8, outAt * 8, rowsAt * 8, total);
    if (extra) takeWithExtraColumn(heap, outAt, rows, k, memberships, start * k, extra.memberships, start);
    else memberships.set(heap.subarray(outAt, outAt + rows * k), start * k);
    rowLogLikelihood.set(heap.subarray(rowsAt, rowsAt + rows), start);
  }
  return total;
}

/** Rows of k residuals into `out` from `at` as rows of k + 1, each row's last residual 0 (the extra term's). */
function placeWithExtraColumn(values: Float64Array, rows: number, k: number, out: Float64Array, at: number): void {
  for (let i = 0; i < rows; i++) {
    const to = at + i * (k + 1);
    for (let c = 0; c < k; c++) out[to + c] = values[i * k + c];
    out[to + k] = 0;
  }
}

/** Rows of k + 1 values from `values` at `at`: the first k of each to `out` from outAt, the last to lastOut from lastAt. */
function takeWithExtraColumn(values: Float64Array, at: number, rows: number, k: number, out: Float64Array, outAt: number, lastOut: Float64Array, lastAt: number): void {
  for (let i = 0; i < rows; i++) {
    const from = at + i * (k + 1);
    for (let c = 0; c < k; c++) out[outAt + i * k + c] = values[from + c];
    lastOut[lastAt + i] = values[from + k];
  }
}

/**
 * The subspace EM's E-step (warmStart/subspaceMixtureFit.ts): tau[i·k + c] from each row's
 * squared residuals, with the terms constant_c − (0.5 · squares[i·k + c]) / variances_c, then
 * as membershipsFromLogTerms makes them; returns the rows' values added in row order from 0.
 */
export function squareMemberships(squares: Float64Array, n: number, k: number, constant: Float64Array, variances: Float64Array, tau: Float64Array): number {
  const kernel = rowKernels();
  if (!kernel) {
    for (let i = 0; i < n; i++) {
      const at = i * k;
      for (let c = 0; c < k; c++) tau[at + c] = constant[c] - (0.5 * squares[at + c]) / variances[c];
    }
    return normaliseLogDensities(tau, n, k);
  }
  const blockRows = kernelBlockRows(k);
  const squaresAt = 3 * k;
  const outAt = squaresAt + blockRows * k;
  reserveDoubles(kernel, outAt + blockRows * k);
  const heap = kernel.heap;
  heap.set(constant.subarray(0, k), 0);
  heap.set(variances.subarray(0, k), k);
  let total = 0;
  for (let start = 0; start < n; start += blockRows) {
    const rows = Math.min(n - start, blockRows);
    heap.set(squares.subarray(start * k, (start + rows) * k), squaresAt);
    total = kernel.fromSquares(squaresAt * 8, rows, k, 0, k * 8, 2 * k * 8, outAt * 8, total);
    tau.set(heap.subarray(outAt, outAt + rows * k), start * k);
  }
  return total;
}

/**
 * Squared residuals of n rows of m values (row-major `rows`, no implicit 1s) under k components
 * (m coefficients each, one after another in `coefficients`), each residual as rowResiduals
 * sums it, into squares (n x k); rss[c] is set to Σ_i tau[i·k + c] · square, added in row
 * order. The subspace EM's residual pass.
 */
export function squaredResidualSums(rows: Float64Array, n: number, m: number, y: Float64Array, coefficients: Float64Array, k: number, tau: Float64Array, squares: Float64Array, rss: Float64Array): void {
  rss.fill(0, 0, k);
  const kernel = rowKernels();
  if (!kernel) {
    const padded = paddedCoefficients(coefficients, k, m);
    for (let i = 0; i < n; i++) {
      const at = i * k;
      rowResiduals(rows, i * m, 0, m, padded, k, y[i], squares, at);
      for (let c = 0; c < k; c++) {
        const r = squares[at + c];
        const square = r * r;
        squares[at + c] = square;
        rss[c] += tau[at + c] * square;
      }
    }
    return;
  }
  // The module's memory in doubles: coefficients, the running sums, then a block's responses,
  // rows, memberships and squares.
  const blockRows = kernelBlockRows(m + 2 * k + 1);
  const rssAt = k * m;
  const yAt = rssAt + k;
  const rowsAt = yAt + blockRows;
  const tauAt = rowsAt + blockRows * m;
  const squaresAt = tauAt + blockRows * k;
  reserveDoubles(kernel, squaresAt + blockRows * k);
  const heap = kernel.heap;
  heap.set(coefficients.subarray(0, k * m), 0);
  heap.fill(0, rssAt, rssAt + k);
  for (let start = 0; start < n; start += blockRows) {
    const count = Math.min(n - start, blockRows);
    heap.set(y.subarray(start, start + count), yAt);
    heap.set(rows.subarray(start * m, (start + count) * m), rowsAt);
    heap.set(tau.subarray(start * k, (start + count) * k), tauAt);
    kernel.squaredResiduals(rowsAt * 8, count, m, yAt * 8, 0, k, tauAt * 8, squaresAt * 8, rssAt * 8);
    squares.set(heap.subarray(squaresAt, squaresAt + count * k), start * k);
  }
  rss.set(heap.subarray(rssAt, rssAt + k));
}

/**
 * ln φ(x; μ, Σ) for the p values x[xOffset..], with Σ = L Lᵀ (L lower, row-major at
 * lower[lowerOffset..]) and ln det Σ given: z = L⁻¹(x − μ), −½(p ln 2π + ln det Σ + zᵀz).
 */
export function gaussianLogDensity(
  x: Float64Array, xOffset: number, mean: Float64Array, meanOffset: number,
  lower: Float64Array, lowerOffset: number, logDeterminant: number, p: number, z: Float64Array,
): number {
  let squared = 0;
  for (let j = 0; j < p; j++) {
    let s = x[xOffset + j] - mean[meanOffset + j];
    for (let l = 0; l < j; l++) s -= lower[lowerOffset + j * p + l] * z[l];
    s /= lower[lowerOffset + j * p + j];
    z[j] = s;
    squared += s * s;
  }
  return -0.5 * (p * LOG_TWO_PI + logDeterminant + squared);
}
