import type { MixtureParameters } from "./mixtureParameters";
import type { MixtureWorkspace } from "./mixtureWorkspace";
import { scaledCholeskySolve } from "./scaledCholeskySolve";
import { constrainedVariances } from "./constrainedVariances";

/** What an M-step changed beyond the parameters themselves. */
export interface MStepReport {
  /** Components with fewer than the minimum size or a failed solve; the driver re-seeds them. */
  collapsed: number[];
  /** Whether the variance floor or the Hathaway ratio bound was active. */
  varianceBoundActive: boolean;
}

export interface Guards {
  /** Smallest effective size Σ_i τ_ik a component may keep (q + 1). */
  minimumSize: number;
  /** Absolute variance floor (relative floor × variance of y). */
  varianceFloor: number;
  /** Hathaway bound on the smallest / largest component variance. */
  varianceRatioBound: number;
  /** Ridge added to each x covariance in the joint model, relative to each predictor's variance. */
  covarianceRidge: number;
}

/**
 * M-step for the weights, coefficients and (joint model) x means and covariances
 * (Dempster, Laird & Rubin 1977; for the regression part DeSarbo & Cron 1988):
 * π_k = n_k / n, β_k = argmin Σ_i τ_ik (y_i − x_iᵀβ)², solved from XᵀW_kX β = XᵀW_k y.
 *
 * Memory layout: all k Gram matrices are accumulated in one sweep of the row-major design,
 * so each row is read once per M-step whatever k is; within a row the inner loop runs over
 * the contiguous upper-triangle row of one Gram matrix.
 */
export function mStepCoefficients(ws: MixtureWorkspace, params: MixtureParameters, guards: Guards): MStepReport {
  const { n, q, k, design, y, memberships, grams, rightHandSides, sizes } = ws;
  grams.fill(0);
  rightHandSides.fill(0);
  sizes.fill(0);
  for (let i = 0; i < n; i++) {
    const rowOffset = i * q;
    const yi = y[i];
    for (let c = 0; c < k; c++) {
      const w = memberships[i * k + c];
      if (w === 0) continue;
      sizes[c] += w;
      const gramOffset = c * q * q;
      const rhsOffset = c * q;
      for (let j = 0; j < q; j++) {
        const weighted = w * design[rowOffset + j];
        rightHandSides[rhsOffset + j] += weighted * yi;
        const gramRow = gramOffset + j * q;
        for (let l = j; l < q; l++) grams[gramRow + l] += weighted * design[rowOffset + l];
      }
    }
  }
  const collapsed: number[] = [];
  const solution = new Float64Array(q);
  for (let c = 0; c < k; c++) {
    params.weights[c] = sizes[c] / n;
    if (sizes[c] < guards.minimumSize) {
      collapsed.push(c);
      continue;
    }
    const solved = scaledCholeskySolve(grams.subarray(c * q * q, (c + 1) * q * q), rightHandSides.subarray(c * q, (c + 1) * q), q, solution, ws.choleskyScratch);
    if (solved) params.coefficients.set(solution, c * q);
    else collapsed.push(c);
  }
  if (ws.joint) mStepPredictorModel(ws, params, guards);
  return { collapsed, varianceBoundActive: false };
}

/**
 * M-step for the variances from the residuals at the new coefficients and the memberships of
 * the last E-step: s_k = Σ_i τ_ik r_ik² / n_k, then the floor and Hathaway bound
 * (constrainedVariances). Call after computeResiduals. Components listed in `reseeded` were
 * replaced after the last E-step and keep the variance their re-seeding gave them.
 */
export function mStepVariances(ws: MixtureWorkspace, params: MixtureParameters, guards: Guards, reseeded: readonly number[] = []): boolean {
  const { n, k, residuals, memberships } = ws;
  const sizes = ws.sizes.slice();
  const sums = new Float64Array(k);
  for (let i = 0; i < n; i++) {
    const offset = i * k;
    for (let c = 0; c < k; c++) {
      const r = residuals[offset + c];
      sums[c] += memberships[offset + c] * r * r;
    }
  }
  const unconstrained = new Float64Array(k);
  for (let c = 0; c < k; c++) unconstrained[c] = sizes[c] > 0 ? sums[c] / sizes[c] : guards.varianceFloor;
  // A re-seeded component keeps the variance of its seed fit; its memberships are stale.
  for (const c of reseeded) {
    unconstrained[c] = params.variances[c];
    sizes[c] = params.weights[c] * n;
  }
  return constrainedVariances(unconstrained, sizes, guards.varianceRatioBound, guards.varianceFloor, params.variances);
}

/**
 * Joint model (cluster-weighted model: Gershenfeld 1997; Ingrassia, Minotti & Vittadini 2012):
 * μ_k = Σ τ_ik x_i / n_k, Σ_k = Σ τ_ik (x_i − μ_k)(x_i − μ_k)ᵀ / n_k + ridge. Centred in a second
 * sweep rather than from the Gram matrix, so predictors with large means (years, say) keep
 * their digits. The ridge (a multiple of each predictor's overall variance) keeps Σ_k
 * invertible when a component's x lie on a lower-dimensional set, such as a dummy that is
 * constant within the component.
 */
export function mStepPredictorModel(ws: MixtureWorkspace, params: MixtureParameters, guards: Guards): void {
  const { n, p, k, predictors, memberships, sizes } = ws;
  const means = params.xMeans as Float64Array;
  const covariances = params.xCovariances as Float64Array;
  means.fill(0);
  covariances.fill(0);
  for (let i = 0; i < n; i++) {
    for (let c = 0; c < k; c++) {
      const w = memberships[i * k + c];
      if (w === 0) continue;
      for (let j = 0; j < p; j++) means[c * p + j] += w * predictors[i * p + j];
    }
  }
  for (let c = 0; c < k; c++) {
    const size = sizes[c] > 0 ? sizes[c] : 1;
    for (let j = 0; j < p; j++) means[c * p + j] /= size;
  }
  const centred = ws.predictorScratch;
  for (let i = 0; i < n; i++) {
    for (let c = 0; c < k; c++) {
      const w = memberships[i * k + c];
      if (w === 0) continue;
      for (let j = 0; j < p; j++) centred[j] = predictors[i * p + j] - means[c * p + j];
      const offset = c * p * p;
      for (let j = 0; j < p; j++) {
        const weighted = w * centred[j];
        for (let l = 0; l <= j; l++) covariances[offset + j * p + l] += weighted * centred[l];
      }
    }
  }
  for (let c = 0; c < k; c++) {
    const size = sizes[c] > 0 ? sizes[c] : 1;
    const offset = c * p * p;
    for (let j = 0; j < p; j++) {
      for (let l = 0; l <= j; l++) {
        const value = covariances[offset + j * p + l] / size;
        covariances[offset + j * p + l] = value;
        covariances[offset + l * p + j] = value;
      }
      covariances[offset + j * p + j] += guards.covarianceRidge * (ws.predictorVariances[j] > 0 ? ws.predictorVariances[j] : 1);
    }
  }
  factorPredictorCovariances(params);
}

/** Lower Cholesky factors and log determinants of every component's x covariance. */
export function factorPredictorCovariances(params: MixtureParameters): void {
  const { p, k } = params;
  const covariances = params.xCovariances as Float64Array;
  const factors = params.xCholesky as Float64Array;
  const logDeterminants = params.xLogDeterminants as Float64Array;
  factors.fill(0);
  for (let c = 0; c < k; c++) {
    const offset = c * p * p;
    let logDeterminant = 0;
    for (let j = 0; j < p; j++) {
      for (let l = 0; l <= j; l++) {
        let s = covariances[offset + j * p + l];
        for (let m = 0; m < l; m++) s -= factors[offset + j * p + m] * factors[offset + l * p + m];
        if (l === j) {
          // The ridge makes s positive; the guard only protects against a non-finite input.
          const root = Math.sqrt(s > 0 ? s : Number.MIN_VALUE);
          factors[offset + j * p + j] = root;
          logDeterminant += 2 * Math.log(root);
        } else {
          factors[offset + j * p + l] = s / factors[offset + l * p + l];
        }
      }
    }
    logDeterminants[c] = logDeterminant;
  }
}
