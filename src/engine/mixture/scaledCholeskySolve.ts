/**
 * Solves the normal equations G c = b of a weighted least-squares problem, G = XᵀWX
 * (q x q, row-major, only the upper triangle read), b = XᵀWy.
 *
 * Why normal equations: the mixture M-step needs one weighted fit per component per
 * iteration over possibly hundreds of thousands of rows; accumulating XᵀWX in one pass over
 * the flat design costs n·q²/2 per component and touches each row once, where a QR of
 * diag(√w)X would copy the design per component. The price is the squared condition number
 * (Golub & Van Loan, 4th ed., section 5.3.8), so:
 *  - the columns are equilibrated first (G ← DGD with D = diag(G)^-½, van der Sluis 1969),
 *    which removes the part of the conditioning that comes from units alone;
 *  - the driver finishes noiseless fits with the Householder QR core (leastSquares.ts), which
 *    reaches rounding level where this solver may not.
 *
 * Cholesky (Golub & Van Loan, algorithm 4.2.1) on the scaled matrix; a pivot below
 * PIVOT_TOLERANCE means the weighted design is numerically singular (a component whose rows
 * all share a dummy value, say): then a small ridge RIDGE_RELATIVE is added to the scaled
 * diagonal and the factorisation retried, which keeps the component alive and moves the
 * solution by about the ridge times the coefficients (Hoerl & Kennard 1970).
 *
 * @returns false when even the ridged matrix failed (all-zero weights); out is then untouched.
 */
export function scaledCholeskySolve(gram: Float64Array, rhs: Float64Array, q: number, out: Float64Array, scratch: Float64Array): boolean {
  // scratch layout: [0, q²) factor, [q², q² + q) scale, [q² + q, q² + 2q) work vector.
  const factor = scratch;
  const scaleOffset = q * q;
  const workOffset = q * q + q;
  for (let j = 0; j < q; j++) {
    const diagonal = gram[j * q + j];
    scratch[scaleOffset + j] = diagonal > 0 ? 1 / Math.sqrt(diagonal) : 0;
  }
  for (let attempt = 0; attempt < 2; attempt++) {
    const ridge = attempt === 0 ? 0 : RIDGE_RELATIVE;
    if (factorScaled(gram, q, scratch, scaleOffset, ridge)) {
      // Forward then back substitution on the scaled system (DGD)(D⁻¹c) = Db.
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
      return true;
    }
  }
  return false;
}

/** Scratch length scaledCholeskySolve needs for q coefficients. */
export function choleskyScratchLength(q: number): number {
  return q * q + 2 * q;
}

/**
 * Smallest accepted squared pivot of the unit-diagonal scaled Gram matrix: 1e-13 corresponds to
 * a condition number near 1e13 of XᵀWX (about 3e6 of the weighted design), beyond which the
 * normal equations keep fewer than 3 correct digits.
 */
export const PIVOT_TOLERANCE = 1e-13;

/** Ridge added to the unit diagonal when the first factorisation fails; see the file comment. */
export const RIDGE_RELATIVE = 1e-10;

/** Upper-triangular R with RᵀR = DGD (+ ridge·I), row-major into scratch[0, q²). */
function factorScaled(gram: Float64Array, q: number, scratch: Float64Array, scaleOffset: number, ridge: number): boolean {
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
