import { HouseholderQR } from "./householderQR";
import { SkeinError } from "./errors";
import { rowResidual } from "./rowResiduals";

export interface LeastSquaresFit {
  /** One per column of the design, in its order (intercept first when there is one). */
  coefficients: Float64Array;
  /** Classical standard errors: residualSD · sqrt(diag((XᵀWX)⁻¹)). */
  stdErrors: Float64Array;
  /** Weighted residual sum of squares Σ w_i r_i². */
  rss: number;
  /** Unbiased residual SD sqrt(rss / (n − q)), the one regression tables report. */
  residualSD: number;
  /** Maximum-likelihood SD sqrt(rss / n), the one a mixture component carries. */
  mlSigma: number;
  /** 1 − rss / total sum of squares (centred when the design has an intercept). */
  rSquared: number;
  /** Gaussian log-likelihood at the maximum-likelihood SD. */
  logLikelihood: number;
  n: number;
  q: number;
  rank: number;
}

export interface LeastSquaresOptions {
  /** Row weights (for example EM memberships); all 1 when absent. */
  weights?: Float64Array;
  /** Whether column 0 of the design is the intercept (R² is then centred). */
  intercept?: boolean;
}

/**
 * Weighted least squares by Householder QR with column scaling and one step of
 * iterative refinement (Golub & Van Loan, 4th ed., sections 5.3 and 3.5.3): the
 * refinement recovers the digits a QR solve loses on ill-conditioned designs
 * such as NIST's Longley, whose certified values it must match to 9 or more
 * significant digits.
 *
 * With weights w the effective sample size in the log-likelihood and the
 * degrees of freedom is Σ w_i (n when unweighted), the usual convention for
 * frequency weights.
 *
 * @param x row-major n x q design (intercept column included when there is one)
 */
export function leastSquares(x: Float64Array, n: number, q: number, y: Float64Array, options: LeastSquaresOptions = {}): LeastSquaresFit {
  const { weights, intercept = false } = options;
  const { rowWeights, weightSum } = checkedRowWeights(weights, n);
  const qr = new HouseholderQR(x, n, q, rowWeights);
  if (!qr.isFullRank) {
    throw new SkeinError("numeric", `Predictors repeat information: column ${qr.firstDependentColumn + 1} of the fit is (nearly) a combination of the earlier ones, so their coefficients cannot be told apart. Remove a predictor that repeats information held by the others.`);
  }
  const coefficients = qr.solve(y, rowWeights);
  const residuals = new Float64Array(n);
  designResiduals(x, n, q, y, coefficients, residuals);
  // One refinement step: solve for the correction from the residuals themselves.
  const correction = qr.solve(residuals, rowWeights);
  for (let j = 0; j < q; j++) coefficients[j] += correction[j];
  designResiduals(x, n, q, y, coefficients, residuals);
  const { rss, total } = sumsOfSquares(y, residuals, n, weights, weightSum, intercept);
  const degreesOfFreedom = weightSum - q;
  const residualSD = degreesOfFreedom > 0 ? Math.sqrt(rss / degreesOfFreedom) : NaN;
  const mlSigma = weightSum > 0 ? Math.sqrt(rss / weightSum) : NaN;
  const inverseDiagonal = qr.inverseGramDiagonal();
  const stdErrors = new Float64Array(q);
  for (let j = 0; j < q; j++) stdErrors[j] = residualSD * Math.sqrt(inverseDiagonal[j]);
  // Gaussian log-likelihood at σ² = rss / n: −n/2 (ln(2π σ²) + 1).
  const logLikelihood = -0.5 * weightSum * (Math.log(2 * Math.PI * mlSigma * mlSigma) + 1);
  return {
    coefficients,
    stdErrors,
    rss,
    residualSD,
    mlSigma,
    rSquared: total > 0 ? 1 - rss / total : NaN,
    logLikelihood,
    n,
    q,
    rank: qr.rank,
  };
}

/**
 * The square roots of the row weights, which scale the rows for the QR, and the weights' sum
 * (the effective sample size); no scaling and n when there are no weights.
 */
function checkedRowWeights(weights: Float64Array | undefined, n: number): { rowWeights: Float64Array | undefined; weightSum: number } {
  if (!weights) return { rowWeights: undefined, weightSum: n };
  const rowWeights = new Float64Array(n);
  let weightSum = 0;
  for (let i = 0; i < n; i++) {
    const w = weights[i];
    if (!(w >= 0) || !Number.isFinite(w)) throw new SkeinError("bad-input", `Row weight ${i + 1} is ${w}; weights must be finite and not negative.`);
    rowWeights[i] = Math.sqrt(w);
    weightSum += w;
  }
  return { rowWeights, weightSum };
}

/**
 * The weighted residual and total sums of squares, the total about the weighted mean when
 * there is an intercept.
 */
function sumsOfSquares(
  y: Float64Array, residuals: Float64Array, n: number, weights: Float64Array | undefined, weightSum: number, intercept: boolean,
): { rss: number; total: number } {
  let rss = 0;
  let weightedMean = 0;
  for (let i = 0; i < n; i++) {
    const w = weights ? weights[i] : 1;
    rss += w * residuals[i] * residuals[i];
    weightedMean += w * y[i];
  }
  weightedMean = weightSum > 0 ? weightedMean / weightSum : 0;
  let total = 0;
  for (let i = 0; i < n; i++) {
    const w = weights ? weights[i] : 1;
    const d = intercept ? y[i] - weightedMean : y[i];
    total += w * d * d;
  }
  return { rss, total };
}

/** residuals = y − X c, for a row-major n x q design. */
function designResiduals(x: Float64Array, n: number, q: number, y: Float64Array, c: Float64Array, out: Float64Array): Float64Array {
  for (let i = 0; i < n; i++) {
    out[i] = rowResidual(x, i * q, q, c, 0, y[i]);
  }
  return out;
}
