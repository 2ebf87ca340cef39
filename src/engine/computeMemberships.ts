import { SkeinError } from "./errors";
import type { MixtureFit } from "./mixtureTypes";
import { coefficientOffset } from "./regressionMatrix";
import { choleskyScratchLength, scaledCholeskyLower } from "./cholesky";
import { gaussianLogDensity, componentLogConstant, normaliseLogDensities } from "./logDensities";
import { rowResidual } from "./rowResiduals";

/** Each joint component's x model, factored once: the mean, the lower Cholesky factor of Σ and ln det Σ. */
export interface PredictorModel {
  mean: Float64Array;
  /** p x p row-major lower factor L, Σ = L Lᵀ. */
  lower: Float64Array;
  logDeterminant: number;
}

/**
 * Factors each component's x covariance (the Cholesky kernel, without its ridge) for the
 * Gaussian x density of the joint (cluster-weighted) model, Gershenfeld 1997; Ingrassia,
 * Minotti & Vittadini 2012.
 */
export function predictorModels(fit: MixtureFit): PredictorModel[] {
  const p = fit.p;
  const scratch = new Float64Array(choleskyScratchLength(p));
  return fit.components.map((component, k) => {
    if (!component.xMean || !component.xCovariance) {
      throw new SkeinError("bad-input", `Component ${k + 1} of this joint fit carries no model of x (mean and covariance); refit with model "joint".`);
    }
    const lower = new Float64Array(p * p);
    const logDeterminant = scaledCholeskyLower(component.xCovariance, p, lower, scratch, false);
    if (Number.isNaN(logDeterminant)) {
      throw new SkeinError("numeric", `The predictors of component ${k + 1} do not vary independently within it (one is constant or a combination of others there); refit, or remove a predictor that is constant within a component.`);
    }
    return { mean: component.xMean, lower, logDeterminant };
  });
}

/** ln φ(x; μ, Σ) for one row x (length p starting at xOffset). */
export function predictorLogDensity(model: PredictorModel, x: Float64Array, xOffset: number, p: number, scratch: Float64Array): number {
  return gaussianLogDensity(x, xOffset, model.mean, 0, model.lower, 0, model.logDeterminant, p, scratch);
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
    const constant = componentLogConstant(component.weight, variance);
    for (let i = 0; i < n; i++) {
      const r = rowResidual(design, i * q, q, beta, shift, y[i]);
      let value = constant - (0.5 * r * r) / variance;
      if (models) value += predictorLogDensity(models[c], x, i * p, p, scratch);
      logDensities[i * k + c] = value;
    }
  }
  const logLikelihood = normaliseLogDensities(logDensities, n, k, rowLogLikelihood);
  return { memberships: logDensities, logLikelihood };
}
