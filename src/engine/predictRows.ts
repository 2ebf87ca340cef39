import { SkeinError } from "./errors";
import type { MixtureFit } from "./mixtureTypes";
import type { Prediction } from "./trustTypes";
import { predictorLogDensity, predictorModels } from "./computeMemberships";
import { normaliseLogDensities } from "./logDensities";

/**
 * One component's prediction x_iᵀβ for the row of p predictor values at x[row..] (no
 * intercept column), from a fit's coefficients: intercept slot first (0 when the fit has
 * none), then one per predictor.
 */
export function componentPrediction(coefficients: Float64Array, x: Float64Array, row: number, p: number): number {
  let value = coefficients[0];
  for (let j = 0; j < p; j++) value += coefficients[j + 1] * x[row + j];
  return value;
}

/**
 * Predictions for m new rows (newX: m x p row-major, the fit's predictors in its order,
 * without an intercept column).
 *
 * Each component predicts μ_ik = x_iᵀβ_k. Memberships from x alone: in the joint
 * (cluster-weighted) model P(k | x) ∝ π_k φ(x; μ_k, Σ_k), computed in log space with
 * log-sum-exp (Gershenfeld 1997; Ingrassia, Minotti & Vittadini 2012); in the plain model x
 * says nothing about the component, so P(k | x) = π_k. The weighted prediction is
 * μ̄_i = Σ_k P(k | x_i) μ_ik and its spread the SD of the mixture of normals,
 * sqrt(Σ_k P_k (σ_k² + (μ_ik − μ̄_i)²)) (law of total variance).
 */
export function predictRows(fit: MixtureFit, newX: Float64Array, m: number): Prediction {
  const { k, p } = fit;
  if (!Number.isInteger(m) || m < 0) throw new SkeinError("bad-input", `The number of new rows must be a whole number, not ${m}.`);
  if (newX.length !== m * p) {
    throw new SkeinError("bad-input", `The new rows hold ${newX.length} values, but ${m} rows of ${p} predictor${p === 1 ? "" : "s"} need ${m * p}; give the same x columns the model was fitted on.`);
  }
  for (let t = 0; t < newX.length; t++) {
    if (!Number.isFinite(newX[t])) {
      throw new SkeinError("bad-input", `New row ${Math.floor(t / p) + 1} holds ${newX[t]} for predictor ${(t % p) + 1}; only finite numbers can be predicted.`);
    }
  }
  const perComponent = new Float64Array(m * k);
  for (let c = 0; c < k; c++) {
    const beta = fit.components[c].coefficients;
    for (let i = 0; i < m; i++) perComponent[i * k + c] = componentPrediction(beta, newX, i * p, p);
  }

  const memberships = new Float64Array(m * k);
  if (fit.model === "joint") {
    const models = predictorModels(fit);
    const scratch = new Float64Array(p);
    for (let i = 0; i < m; i++) {
      for (let c = 0; c < k; c++) {
        memberships[i * k + c] = Math.log(fit.components[c].weight) + predictorLogDensity(models[c], newX, i * p, p, scratch);
      }
    }
    normaliseLogDensities(memberships, m, k);
  } else {
    for (let i = 0; i < m; i++) for (let c = 0; c < k; c++) memberships[i * k + c] = fit.components[c].weight;
  }

  const weighted = new Float64Array(m);
  const spread = new Float64Array(m);
  for (let i = 0; i < m; i++) {
    const row = i * k;
    let mean = 0;
    for (let c = 0; c < k; c++) mean += memberships[row + c] * perComponent[row + c];
    let variance = 0;
    for (let c = 0; c < k; c++) {
      const sigma = fit.components[c].sigma;
      const d = perComponent[row + c] - mean;
      variance += memberships[row + c] * (sigma * sigma + d * d);
    }
    weighted[i] = mean;
    spread[i] = Math.sqrt(variance);
  }
  return { perComponent, weighted, spread, memberships, m, k };
}
