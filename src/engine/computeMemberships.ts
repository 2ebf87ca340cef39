import { CholeskyDecomposition, Matrix } from "ml-matrix";
import { SkeinError } from "./errors";
import type { MixtureFit } from "./mixtureTypes";
import { coefficientOffset } from "./regressionMatrix";

const LOG_TWO_PI = Math.log(2 * Math.PI);

/** Each joint component's x model, factored once: the mean, Σ⁻¹ and ln det Σ. */
export interface PredictorModel {
  mean: Float64Array;
  /** p x p row-major inverse covariance. */
  precision: Float64Array;
  logDeterminant: number;
}

/**
 * Factors each component's x covariance (Cholesky) for the Gaussian x density of the joint
 * (cluster-weighted) model, Gershenfeld 1997; Ingrassia, Minotti & Vittadini 2012.
 */
export function predictorModels(fit: MixtureFit): PredictorModel[] {
  const p = fit.p;
  return fit.components.map((component, k) => {
    if (!component.xMean || !component.xCovariance) {
      throw new SkeinError("bad-input", `Component ${k + 1} of this joint fit carries no model of x (mean and covariance); refit with model "joint".`);
    }
    const covariance = new Matrix(p, p);
    for (let a = 0; a < p; a++) for (let b = 0; b < p; b++) covariance.set(a, b, component.xCovariance[a * p + b]);
    const cholesky = new CholeskyDecomposition(covariance);
    if (!cholesky.isPositiveDefinite()) {
      throw new SkeinError("numeric", `The predictors of component ${k + 1} do not vary independently within it (one is constant or a combination of others there); refit, or remove a predictor that is constant within a component.`);
    }
    const lower = cholesky.lowerTriangularMatrix;
    let logDeterminant = 0;
    for (let a = 0; a < p; a++) logDeterminant += 2 * Math.log(lower.get(a, a));
    const inverse = cholesky.solve(Matrix.eye(p));
    const precision = new Float64Array(p * p);
    for (let a = 0; a < p; a++) for (let b = 0; b < p; b++) precision[a * p + b] = inverse.get(a, b);
    return { mean: component.xMean, precision, logDeterminant };
  });
}

/** ln φ(x; μ, Σ) for one row x (length p starting at xOffset). */
export function predictorLogDensity(model: PredictorModel, x: Float64Array, xOffset: number, p: number, scratch: Float64Array): number {
  for (let a = 0; a < p; a++) scratch[a] = x[xOffset + a] - model.mean[a];
  let quadratic = 0;
  for (let a = 0; a < p; a++) {
    let row = 0;
    const offset = a * p;
    for (let b = 0; b < p; b++) row += model.precision[offset + b] * scratch[b];
    quadratic += scratch[a] * row;
  }
  return -0.5 * (p * LOG_TWO_PI + model.logDeterminant + quadratic);
}

/**
 * Turns a row-major m x k block of log joint densities ln(π_k f_k) into membership
 * probabilities in place, by log-sum-exp (subtracting the row's largest term keeps exp from
 * underflowing), and returns Σ_i ln Σ_k π_k f_k.
 */
export function normaliseLogDensities(logDensities: Float64Array, m: number, k: number, rowLogLikelihood?: Float64Array): number {
  let total = 0;
  for (let i = 0; i < m; i++) {
    const offset = i * k;
    let largest = -Infinity;
    for (let c = 0; c < k; c++) if (logDensities[offset + c] > largest) largest = logDensities[offset + c];
    let sum = 0;
    for (let c = 0; c < k; c++) sum += Math.exp(logDensities[offset + c] - largest);
    const logSum = largest + Math.log(sum);
    for (let c = 0; c < k; c++) logDensities[offset + c] = Math.exp(logDensities[offset + c] - logSum);
    if (rowLogLikelihood) rowLogLikelihood[i] = logSum;
    total += logSum;
  }
  return total;
}

/**
 * Memberships τ_ik at a fit's parameters (the E-step of Dempster, Laird & Rubin 1977, in log
 * space): ln τ_ik = ln π_k + ln φ(y_i; x_iᵀβ_k, σ_k²) [+ ln φ(x_i; μ_k, Σ_k) in the joint model]
 * − logsumexp over k. `design` is the n x q regression design (intercept column included when
 * the fit has one); `x` the raw n x p predictors, needed only by the joint model. When given,
 * `rowLogLikelihood` receives each row's ln Σ_k π_k f_k.
 */
export function computeMemberships(
  fit: MixtureFit,
  design: Float64Array,
  q: number,
  y: Float64Array,
  x: Float64Array,
  n: number,
  rowLogLikelihood?: Float64Array,
): { memberships: Float64Array; logLikelihood: number } {
  const k = fit.k;
  const p = fit.p;
  const logDensities = new Float64Array(n * k);
  const models = fit.model === "joint" ? predictorModels(fit) : null;
  const scratch = new Float64Array(p);
  for (let c = 0; c < k; c++) {
    const component = fit.components[c];
    const beta = component.coefficients;
    const shift = coefficientOffset(beta, q);
    const variance = component.sigma * component.sigma;
    const constant = Math.log(component.weight) - 0.5 * (LOG_TWO_PI + Math.log(variance));
    for (let i = 0; i < n; i++) {
      let fitted = 0;
      const row = i * q;
      for (let j = 0; j < q; j++) fitted += design[row + j] * beta[shift + j];
      const r = y[i] - fitted;
      let value = constant - (0.5 * r * r) / variance;
      if (models) value += predictorLogDensity(models[c], x, i * p, p, scratch);
      logDensities[i * k + c] = value;
    }
  }
  const logLikelihood = normaliseLogDensities(logDensities, n, k, rowLogLikelihood);
  return { memberships: logDensities, logLikelihood };
}
