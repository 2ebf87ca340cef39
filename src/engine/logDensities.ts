/**
 * The one E-step kernel (Dempster, Laird & Rubin 1977), shared by the fit's own E-step
 * (mixture/eStep.ts), the memberships at a finished fit's parameters (computeMemberships.ts,
 * used by the scan, the standard errors and prediction) and the subspace EM of the warm start:
 *
 *  - Gaussian log densities: ln φ(y; xᵀβ, σ²) from a residual, and ln φ(x; μ, Σ) through the
 *    lower Cholesky factor of Σ (the joint model's x density, Gershenfeld 1997);
 *  - memberships from a row's log terms ln π_k + ln f_ik by log-sum-exp: subtracting the row's
 *    largest term before exponentiating keeps every term in range however small the variances.
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

/**
 * Turns a row-major m x k block of log terms ln(π_k f_ik) into memberships in place and
 * returns Σ_i ln Σ_k π_k f_ik; each row's value goes to rowLogLikelihood when given.
 */
export function normaliseLogDensities(logDensities: Float64Array, m: number, k: number, rowLogLikelihood?: Float64Array): number {
  let total = 0;
  for (let i = 0; i < m; i++) {
    const value = membershipsFromLogTerms(logDensities, i * k, k, logDensities, i * k);
    if (rowLogLikelihood) rowLogLikelihood[i] = value;
    total += value;
  }
  return total;
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
