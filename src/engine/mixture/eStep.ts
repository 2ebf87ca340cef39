import type { MixtureParameters } from "./mixtureParameters";
import type { MixtureWorkspace } from "./mixtureWorkspace";
import { backgroundLogTerm } from "./backgroundComponent";

const LOG_TWO_PI = Math.log(2 * Math.PI);
/** ln(2⁻⁵³) ≈ −36.7: a term exp(−37) ≈ 8.5e-17 is below half an ulp of a sum that is at least 1. */
const NEGLIGIBLE_LOG_RATIO = -37;

/**
 * Residuals r_ik = y_i − x_iᵀβ_k for every row and component, stored n x k. The M-step's
 * variances and the next E-step both read them, so each iteration sweeps the design for
 * residuals once.
 */
export function computeResiduals(ws: MixtureWorkspace, params: MixtureParameters): void {
  const { n, q, k, design, y, residuals } = ws;
  const beta = params.coefficients;
  for (let i = 0; i < n; i++) {
    const rowOffset = i * q;
    const yi = y[i];
    for (let c = 0; c < k; c++) {
      const betaOffset = c * q;
      let fitted = 0;
      for (let j = 0; j < q; j++) fitted += design[rowOffset + j] * beta[betaOffset + j];
      residuals[i * k + c] = yi - fitted;
    }
  }
}

/**
 * E-step (Dempster, Laird & Rubin 1977) from the stored residuals, in log space:
 * log τ_ik = log π_k + log φ(y_i; x_iᵀβ_k, σ_k²) [+ log φ(x_i; μ_k, Σ_k) in the joint model,
 * Gershenfeld 1997] − logsumexp over k. Subtracting the row maximum before exponentiating
 * keeps every term in range however small the variances (the log-sum-exp device).
 *
 * @param withResiduals compute the residuals at the current coefficients first (row by row, in
 *   the same sweep) instead of reading those computeResiduals stored
 * @returns the log-likelihood Σ_i log Σ_k π_k φ_ik; the per-row terms go to ws.rowLogLikelihood
 */
export function eStep(ws: MixtureWorkspace, params: MixtureParameters, withResiduals = false): number {
  const { n, q, k, design, y, residuals, memberships, rowLogLikelihood } = ws;
  const beta = params.coefficients;
  const logTerm = ws.rowScratch;
  // Per-component constants: log π_k − ½ ln(2π σ_k²) and −1/(2σ_k²).
  const constant = new Float64Array(k);
  const curvature = new Float64Array(k);
  for (let c = 0; c < k; c++) {
    constant[c] = Math.log(params.weights[c]) - 0.5 * (LOG_TWO_PI + Math.log(params.variances[c]));
    curvature[c] = -0.5 / params.variances[c];
  }
  const joint = ws.joint && params.xMeans !== null;
  // The flat background (Banfield & Raftery 1993) is one more term, the same for every row.
  const background = ws.background;
  const backgroundTerm = background ? backgroundLogTerm(background) : -Infinity;
  let total = 0;
  for (let i = 0; i < n; i++) {
    const offset = i * k;
    let largest = -Infinity;
    if (withResiduals) {
      // Fused with computeResiduals: one sweep of the design per iteration instead of two.
      const rowOffset = i * q;
      for (let c = 0; c < k; c++) {
        let fitted = 0;
        for (let j = 0; j < q; j++) fitted += design[rowOffset + j] * beta[c * q + j];
        residuals[offset + c] = y[i] - fitted;
      }
    }
    for (let c = 0; c < k; c++) {
      const r = residuals[offset + c];
      let value = constant[c] + curvature[c] * r * r;
      if (joint) value += predictorLogDensity(ws, params, i, c);
      logTerm[c] = value;
      if (value > largest) largest = value;
    }
    if (backgroundTerm > largest) largest = backgroundTerm;
    let sum = 0;
    if (background) {
      const e = Math.exp(backgroundTerm - largest);
      background.memberships[i] = e;
      sum = e;
    }
    for (let c = 0; c < k; c++) {
      const difference = logTerm[c] - largest;
      // Below NEGLIGIBLE_LOG_RATIO the term cannot change the sum (which is at least 1) in
      // double precision, so the exponential is skipped and the membership is exactly 0.
      const e = difference > NEGLIGIBLE_LOG_RATIO ? Math.exp(difference) : 0;
      memberships[offset + c] = e;
      sum += e;
    }
    const inverse = 1 / sum;
    for (let c = 0; c < k; c++) memberships[offset + c] *= inverse;
    if (background) background.memberships[i] *= inverse;
    const rowValue = largest + Math.log(sum);
    rowLogLikelihood[i] = rowValue;
    total += rowValue;
  }
  return total;
}

/** log φ(x_i; μ_k, Σ_k) through the lower Cholesky factor: z = L⁻¹(x − μ), −½(p ln 2π + ln|Σ| + zᵀz). */
function predictorLogDensity(ws: MixtureWorkspace, params: MixtureParameters, row: number, component: number): number {
  const { p, predictors, predictorScratch: z } = ws;
  const mean = params.xMeans as Float64Array;
  const factor = params.xCholesky as Float64Array;
  const logDeterminant = (params.xLogDeterminants as Float64Array)[component];
  const factorOffset = component * p * p;
  let squared = 0;
  for (let j = 0; j < p; j++) {
    let s = predictors[row * p + j] - mean[component * p + j];
    for (let l = 0; l < j; l++) s -= factor[factorOffset + j * p + l] * z[l];
    s /= factor[factorOffset + j * p + j];
    z[j] = s;
    squared += s * s;
  }
  return -0.5 * (p * LOG_TWO_PI + logDeterminant + squared);
}
