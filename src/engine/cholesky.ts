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
 * Cholesky (Golub & Van Loan, algorithm 4.2.1) on the scaled matrix; a pivot below
 * PIVOT_TOLERANCE means the matrix is numerically singular (a component whose rows all share
 * a dummy value, say): then a small ridge RIDGE_RELATIVE is added to the scaled diagonal and
 * the factorisation retried, which keeps the solve alive and moves the solution by about the
 * ridge times the coefficients (Hoerl & Kennard 1970). Callers that must detect singularity
 * instead (whitening, the observed information) turn the retry off.
 *
 * Only the upper triangle (j ≤ l) of the matrix is read.
 */

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
 * the equilibrated factor R (RᵀR = DGD): L = D⁻¹Rᵀ.
 * @returns ln det G, or NaN when G is not positive definite (after the ridge retry, when on)
 */
export function scaledCholeskyLower(matrix: Float64Array, q: number, lower: Float64Array, scratch: Float64Array, ridgeRetry = true): number {
  if (!factorScaled(matrix, q, scratch, ridgeRetry)) return NaN;
  const scaleOffset = q * q;
  let logDeterminant = 0;
  for (let j = 0; j < q; j++) {
    const inverseScale = 1 / scratch[scaleOffset + j];
    for (let l = 0; l < q; l++) lower[j * q + l] = l <= j ? scratch[l * q + j] * inverseScale : 0;
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

/** Equilibrates and factors into scratch, retrying once with the ridge when allowed. */
function factorScaled(gram: Float64Array, q: number, scratch: Float64Array, ridgeRetry: boolean): boolean {
  const scaleOffset = q * q;
  for (let j = 0; j < q; j++) {
    const diagonal = gram[j * q + j];
    scratch[scaleOffset + j] = diagonal > 0 && Number.isFinite(diagonal) ? 1 / Math.sqrt(diagonal) : 0;
  }
  if (factorAttempt(gram, q, scratch, scaleOffset, 0)) return true;
  return ridgeRetry && factorAttempt(gram, q, scratch, scaleOffset, RIDGE_RELATIVE);
}

/** Forward then back substitution on the scaled system (DGD)(D⁻¹c) = Db. */
function solveFactored(rhs: Float64Array, q: number, out: Float64Array, scratch: Float64Array): void {
  const factor = scratch;
  const scaleOffset = q * q;
  const workOffset = q * q + q;
  for (let j = 0; j < q; j++) {
    let s = rhs[j] * scratch[scaleOffset + j];
    for (let k = 0; k < j; k++) s -= factor[k * q + j] * scratch[workOffset + k];
    scratch[workOffset + j] = s / factor[j * q + j];
  }
  for (let j = q - 1; j >= 0; j--) {
    let s = scratch[workOffset + j];
    for (let k = j + 1; k < q; k++) s -= factor[j * q + k] * scratch[workOffset + k];
    scratch[workOffset + j] = s / factor[j * q + j];
  }
  for (let j = 0; j < q; j++) out[j] = scratch[workOffset + j] * scratch[scaleOffset + j];
}

/** Upper-triangular R with RᵀR = DGD (+ ridge·I), row-major into scratch[0, q²). */
function factorAttempt(gram: Float64Array, q: number, scratch: Float64Array, scaleOffset: number, ridge: number): boolean {
  for (let j = 0; j < q; j++) {
    const dj = scratch[scaleOffset + j];
    for (let k = j; k < q; k++) scratch[j * q + k] = gram[j * q + k] * dj * scratch[scaleOffset + k];
    if (dj === 0) scratch[j * q + j] = 0;
    scratch[j * q + j] += ridge;
  }
  for (let j = 0; j < q; j++) {
    let pivot = scratch[j * q + j];
    for (let k = 0; k < j; k++) pivot -= scratch[k * q + j] * scratch[k * q + j];
    if (!(pivot > PIVOT_TOLERANCE)) return false;
    const root = Math.sqrt(pivot);
    scratch[j * q + j] = root;
    for (let l = j + 1; l < q; l++) {
      let s = scratch[j * q + l];
      for (let k = 0; k < j; k++) s -= scratch[k * q + j] * scratch[k * q + l];
      scratch[j * q + l] = s / root;
    }
  }
  return true;
}
