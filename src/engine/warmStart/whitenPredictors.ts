/**
 * Whitening of the predictors, the first step of every moment method for mixed linear
 * regression (Yi, Caramanis & Sanghavi 2014; Zhong, Jain & Dhillon 2016): with S = L Lᵀ the
 * (centred or raw) second-moment matrix of x, the whitened rows x̃ = L⁻¹(x − x̄) have identity
 * second moment, so the moment identities for x ~ N(0, I) (Yi, Caramanis & Sanghavi 2014) hold in these coordinates.
 *
 * Intercept: when the fit has one, x is centred on its overall mean x̄ (and the caller centres
 * y on ȳ); a coefficient vector γ in whitened coordinates is then a slope vector
 * β = L⁻ᵀγ of the original predictors, and the intercept is recovered afterwards by least
 * squares on the rows the component fits. Without an intercept nothing is centred and S is
 * the raw second moment E[xxᵀ].
 */
import { choleskyScratchLength, scaledCholeskyLower } from "../cholesky";
import { meanOuterProduct } from "../secondMoment";
import { columnSums, whitenRows } from "../rowKernels";

export interface WhitenedPredictors {
  /** n x p row-major whitened predictors. */
  x: Float64Array;
  n: number;
  p: number;
  /** The mean that was subtracted (zeros without centring). */
  mean: Float64Array;
  /** Lower Cholesky factor L of the second-moment matrix, p x p row-major. */
  cholesky: Float64Array;
}

/** Whitens the n x p predictors; null when they are (nearly) collinear or n ≤ p. */
export function whitenPredictors(x: Float64Array, n: number, p: number, centre: boolean): WhitenedPredictors | null {
  if (n <= p) return null;
  const mean = new Float64Array(p);
  if (centre) {
    columnSums(x, n, p, mean);
    for (let j = 0; j < p; j++) mean[j] /= n;
  }
  const centred = new Float64Array(n * p);
  for (let i = 0; i < n; i++) {
    const row = i * p;
    for (let j = 0; j < p; j++) centred[row + j] = x[row + j] - mean[j];
  }
  // Second moment S = (1/n) Σ x xᵀ.
  const second = meanOuterProduct(centred, n, p, null, false);
  let largest = 0;
  for (let a = 0; a < p; a++) largest = Math.max(largest, second[a * p + a]);
  if (!(largest > 0)) return null;
  // S = L Lᵀ by the Cholesky kernel without its ridge: a pivot below the kernel's tolerance
  // (after equilibration) means collinear predictors, and then no whitening is attempted.
  const chol = new Float64Array(p * p);
  if (Number.isNaN(scaledCholeskyLower(second, p, chol, new Float64Array(choleskyScratchLength(p)), false))) return null;
  // x̃ = L⁻¹ (x − mean) by forward substitution, row by row (the row kernels' whitenRows).
  whitenRows(x, n, p, mean, chol, centred);
  return { x: centred, n, p, mean, cholesky: chol };
}

/** Slopes of the original predictors from whitened coefficients: β = L⁻ᵀγ (back substitution). */
export function unwhitenCoefficients(whitened: WhitenedPredictors, gamma: Float64Array): Float64Array {
  const { p, cholesky: chol } = whitened;
  const beta = new Float64Array(p);
  for (let a = p - 1; a >= 0; a--) {
    let s = gamma[a];
    for (let m = a + 1; m < p; m++) s -= chol[m * p + a] * beta[m];
    beta[a] = s / chol[a * p + a];
  }
  return beta;
}

/** Whitened coefficients from original slopes: γ = Lᵀβ. */
export function whitenCoefficients(whitened: WhitenedPredictors, beta: Float64Array): Float64Array {
  const { p, cholesky: chol } = whitened;
  const gamma = new Float64Array(p);
  for (let a = 0; a < p; a++) {
    let s = 0;
    for (let m = a; m < p; m++) s += chol[m * p + a] * beta[m];
    gamma[a] = s;
  }
  return gamma;
}
