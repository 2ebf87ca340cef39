/**
 * The one Cholesky kernel: symmetric positive (semi-)definite systems on flat row-major
 * Float64Arrays, used by every solve of normal equations (M-step, re-seeding, starts,
 * concentration steps, alternating least squares, the subspace EM), by whitening, by the
 * joint model's x densities and by the inverse of the observed information.
 *
 * Why normal equations: the mixture M-step needs one weighted fit per component per
 * iteration over possibly hundreds of thousands of rows; accumulating XᵀWX in one pass over
 * the flat design costs n·q²/2 per component and touches each row once, where a QR of
 * diag(√w)X would copy the design per component. The price is the squared condition number
 * (Golub & Van Loan, 4th ed., section 5.3.8), so:
 *  - the columns are equilibrated first (G ← DGD with D = diag(G)^-½, van der Sluis 1969),
 *    which removes the part of the conditioning that comes from units alone;
 *  - fits that must reach rounding level (noiseless data) finish with the Householder QR
 *    core (householderQR.ts), or, where the normal equations are kept up to date anyway (the
 *    hard-assignment kernel), with iterative refinement from residuals recomputed on the rows.
 *
 * Cholesky (Golub & Van Loan, section 4.2, row by row) on the scaled matrix; a pivot below
 * PIVOT_TOLERANCE means the matrix is numerically singular (a component whose rows all share
 * a dummy value, say): then a small ridge RIDGE_RELATIVE is added to the scaled diagonal and
 * the factorisation retried, which keeps the solve alive and moves the solution by about the
 * ridge times the coefficients (Hoerl & Kennard 1970). Callers that must detect singularity
 * instead (whitening, the observed information) turn the retry off.
 *
 * Only the upper triangle (j ≤ l) of the matrix is read. From size MODULE_MIN_SIZE to
 * MODULE_MAX_SIZE the factorisation runs on the SIMD module where it runs (the same bits;
 * about half the time of the JavaScript path at q = 101).
 */
import { choleskyKernel, reserve, type SimdKernel } from "./weightedGram";

/**
 * Smallest accepted squared pivot of the unit-diagonal scaled matrix: 1e-13 corresponds to a
 * condition number near 1e13 of XᵀWX (about 3e6 of the weighted design), beyond which the
 * normal equations keep fewer than 3 correct digits.
 */
export const PIVOT_TOLERANCE = 1e-13;

/** Ridge added to the unit diagonal when the first factorisation fails; see the file comment. */
export const RIDGE_RELATIVE = 1e-10;

/** Scratch length the kernel needs for a q x q matrix: factor, scale and a work vector. */
export function choleskyScratchLength(q: number): number {
  return q * q + 2 * q;
}

/**
 * Solves G c = b (G q x q, b length q) into `out`.
 * @returns false when even the ridged matrix failed (all-zero weights); out is then untouched.
 */
export function scaledCholeskySolve(gram: Float64Array, rhs: Float64Array, q: number, out: Float64Array, scratch: Float64Array, ridgeRetry = true): boolean {
  if (!factorScaled(gram, q, scratch, ridgeRetry)) return false;
  solveFactored(rhs, q, out, scratch);
  return true;
}

/**
 * Lower factor L of G = L Lᵀ (row-major into `lower`, q x q, zeros above the diagonal) from
 * the equilibrated factor F (F Fᵀ = DGD): L = D⁻¹F.
 * @returns ln det G, or NaN when G is not positive definite (after the ridge retry, when on)
 */
export function scaledCholeskyLower(matrix: Float64Array, q: number, lower: Float64Array, scratch: Float64Array, ridgeRetry = true): number {
  if (!factorScaled(matrix, q, scratch, ridgeRetry)) return NaN;
  const scaleOffset = q * q;
  let logDeterminant = 0;
  for (let j = 0; j < q; j++) {
    const inverseScale = 1 / scratch[scaleOffset + j];
    for (let l = 0; l < q; l++) lower[j * q + l] = l <= j ? scratch[j * q + l] * inverseScale : 0;
    logDeterminant += 2 * Math.log(lower[j * q + j]);
  }
  return logDeterminant;
}

/** G⁻¹ (q x q, symmetric) through the equilibrated factor without ridge; null when G is not positive definite. */
export function invertPositiveDefinite(matrix: Float64Array, q: number): Float64Array | null {
  const scratch = new Float64Array(choleskyScratchLength(q));
  if (!factorScaled(matrix, q, scratch, false)) return null;
  const inverse = new Float64Array(q * q);
  const unit = new Float64Array(q);
  const column = new Float64Array(q);
  for (let j = 0; j < q; j++) {
    unit.fill(0);
    unit[j] = 1;
    solveFactored(unit, q, column, scratch);
    for (let l = 0; l < q; l++) inverse[l * q + j] = column[l];
  }
  // Symmetrise: the two triangles come from different substitutions and differ in the last bits.
  for (let j = 0; j < q; j++) {
    for (let l = j + 1; l < q; l++) {
      const value = 0.5 * (inverse[j * q + l] + inverse[l * q + j]);
      inverse[j * q + l] = value;
      inverse[l * q + j] = value;
    }
  }
  return inverse;
}

/**
 * Sizes factored on the SIMD module: below the first the copies in and out cost more than
 * they save; above the second (2q² doubles, 16 MB of the module's memory) the JavaScript path
 * needs no second copy of G.
 */
const MODULE_MIN_SIZE = 8;
const MODULE_MAX_SIZE = 1024;

/** Equilibrates and factors into scratch, retrying once with the ridge when allowed. */
function factorScaled(gram: Float64Array, q: number, scratch: Float64Array, ridgeRetry: boolean): boolean {
  const scaleOffset = q * q;
  for (let j = 0; j < q; j++) {
    const diagonal = gram[j * q + j];
    scratch[scaleOffset + j] = diagonal > 0 && Number.isFinite(diagonal) ? 1 / Math.sqrt(diagonal) : 0;
  }
  const kernel = q >= MODULE_MIN_SIZE && q <= MODULE_MAX_SIZE ? choleskyKernel() : null;
  if (kernel) {
    if (factorInModule(kernel, gram, q, scratch, scaleOffset, 0)) return true;
    return ridgeRetry && factorInModule(kernel, gram, q, scratch, scaleOffset, RIDGE_RELATIVE);
  }
  if (factorAttempt(gram, q, scratch, scaleOffset, 0)) return true;
  return ridgeRetry && factorAttempt(gram, q, scratch, scaleOffset, RIDGE_RELATIVE);
}

/** Forward then back substitution on the scaled system (DGD)(D⁻¹c) = Db, F Fᵀ = DGD. */
function solveFactored(rhs: Float64Array, q: number, out: Float64Array, scratch: Float64Array): void {
  const factor = scratch;
  const scaleOffset = q * q;
  const workOffset = q * q + q;
  for (let j = 0; j < q; j++) {
    let s = rhs[j] * scratch[scaleOffset + j];
    const row = j * q;
    for (let k = 0; k < j; k++) s -= factor[row + k] * scratch[workOffset + k];
    scratch[workOffset + j] = s / factor[row + j];
  }
  for (let j = q - 1; j >= 0; j--) {
    let s = scratch[workOffset + j];
    for (let k = j + 1; k < q; k++) s -= factor[k * q + j] * scratch[workOffset + k];
    scratch[workOffset + j] = s / factor[j * q + j];
  }
  for (let j = 0; j < q; j++) out[j] = scratch[workOffset + j] * scratch[scaleOffset + j];
}

/**
 * Lower-triangular F with F Fᵀ = DGD (+ ridge·I), row-major into scratch[0, q²), by rows (the
 * Cholesky–Crout order): entry (i, j) is DGD_ij less the dot product of rows i and j of F, both
 * contiguous in memory, summed in order. Rows go two at a time, so that each load of row j
 * serves two independent sums (the same operations in the same order as one row at a time,
 * so the same bits). The scaled entries are read from G's upper triangle as they are needed.
 */
function factorAttempt(gram: Float64Array, q: number, scratch: Float64Array, scaleOffset: number, ridge: number): boolean {
  let i = 0;
  for (; i + 1 < q; i += 2) {
    const di = scratch[scaleOffset + i];
    const dn = scratch[scaleOffset + i + 1];
    const rowI = i * q;
    const rowN = rowI + q;
    for (let j = 0; j < i; j++) {
      const rowJ = j * q;
      const dj = scratch[scaleOffset + j];
      let s = gram[rowJ + i] * dj * di;
      let t = gram[rowJ + i + 1] * dj * dn;
      for (let k = 0; k < j; k++) {
        const f = scratch[rowJ + k];
        s -= f * scratch[rowI + k];
        t -= f * scratch[rowN + k];
      }
      const pivotJ = scratch[rowJ + j];
      scratch[rowI + j] = s / pivotJ;
      scratch[rowN + j] = t / pivotJ;
    }
    if (!pivotRow(gram, q, scratch, i, di, ridge)) return false;
    let t = gram[rowI + i + 1] * di * dn;
    for (let k = 0; k < i; k++) t -= scratch[rowI + k] * scratch[rowN + k];
    scratch[rowN + i] = t / scratch[rowI + i];
    if (!pivotRow(gram, q, scratch, i + 1, dn, ridge)) return false;
  }
  if (i < q) {
    const di = scratch[scaleOffset + i];
    const rowI = i * q;
    for (let j = 0; j < i; j++) {
      const rowJ = j * q;
      let s = gram[rowJ + i] * scratch[scaleOffset + j] * di;
      for (let k = 0; k < j; k++) s -= scratch[rowJ + k] * scratch[rowI + k];
      scratch[rowI + j] = s / scratch[rowJ + j];
    }
    if (!pivotRow(gram, q, scratch, i, di, ridge)) return false;
  }
  return true;
}

/**
 * factorAttempt on the SIMD module (its "cholesky": the same operations in the same order, two
 * rows to a lane pair, so the same bits): G and the scales copied in, F copied out row-major.
 */
function factorInModule(kernel: SimdKernel, gram: Float64Array, q: number, scratch: Float64Array, scaleOffset: number, ridge: number): boolean {
  // Memory in doubles: G, the scales, then F's rows interleaved by pairs (q² + q).
  const scalesAt = q * q;
  const factorAt = scalesAt + q;
  reserve(kernel, (factorAt + q * q + q) * 8);
  const heap = kernel.heap;
  heap.set(gram.subarray(0, q * q), 0);
  heap.set(scratch.subarray(scaleOffset, scaleOffset + q), scalesAt);
  if (kernel.cholesky(0, scalesAt * 8, q, ridge, PIVOT_TOLERANCE, factorAt * 8) === 0) return false;
  for (let i = 0; i < q; i++) {
    const row = factorAt + (i >> 1) * 2 * q + (i & 1);
    for (let k = 0; k <= i; k++) scratch[i * q + k] = heap[row + 2 * k];
  }
  return true;
}

/** Diagonal entry i of F once the row's other entries are in place; false when the pivot is too small. */
function pivotRow(gram: Float64Array, q: number, scratch: Float64Array, i: number, di: number, ridge: number): boolean {
  const rowI = i * q;
  let pivot = di === 0 ? 0 : gram[rowI + i] * di * di;
  pivot += ridge;
  for (let k = 0; k < i; k++) pivot -= scratch[rowI + k] * scratch[rowI + k];
  if (!(pivot > PIVOT_TOLERANCE)) return false;
  scratch[rowI + i] = Math.sqrt(pivot);
  return true;
}
