import type { MixtureParameters } from "./mixtureParameters";
import type { MixtureWorkspace } from "./mixtureWorkspace";
import { backgroundLogTerm } from "./backgroundComponent";

import { gaussianLogDensity, LOG_TWO_PI, membershipsFromLogTerms } from "../logDensities";

/**
 * Residuals r_ik = y_i − x_iᵀβ_k for every row and component, stored n x k. The M-step's
 * variances and the next E-step both read them, so each iteration sweeps the design for
 * residuals once.
 */
export function computeResiduals(ws: MixtureWorkspace, params: MixtureParameters): void {
  const { n, q, k, rowValues, rowStride, implicitOnes, y, residuals } = ws;
  const beta = params.coefficients;
  for (let i = 0; i < n; i++) {
    // Column j of the design is rowValues[rowOffset + j] (after the implicit 1s: mixtureWorkspace.ts).
    const rowOffset = i * rowStride - implicitOnes;
    const yi = y[i];
    for (let c = 0; c < k; c++) {
      const betaOffset = c * q;
      let fitted = 0;
      for (let j = 0; j < implicitOnes; j++) fitted += beta[betaOffset + j];
      for (let j = implicitOnes; j < q; j++) fitted += rowValues[rowOffset + j] * beta[betaOffset + j];
      residuals[i * k + c] = yi - fitted;
    }
  }
}

/**
 * E-step (Dempster, Laird & Rubin 1977) from the stored residuals, in log space:
 * log τ_ik = log π_k + log φ(y_i; x_iᵀβ_k, σ_k²) [+ log φ(x_i; μ_k, Σ_k) in the joint model,
 * Gershenfeld 1997] − logsumexp over k, through the E-step kernel (logDensities.ts).
 *
 * @param withResiduals compute the residuals at the current coefficients first (row by row, in
 *   the same sweep) instead of reading those computeResiduals stored
 * @returns the log-likelihood Σ_i log Σ_k π_k φ_ik; the per-row terms go to ws.rowLogLikelihood
 */
export function eStep(ws: MixtureWorkspace, params: MixtureParameters, withResiduals = false): number {
  const { n, q, k, rowValues, rowStride, implicitOnes, y, residuals, memberships, rowLogLikelihood } = ws;
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
  const xMeans = params.xMeans as Float64Array;
  const xFactors = params.xCholesky as Float64Array;
  const xLogDeterminants = params.xLogDeterminants as Float64Array;
  // The flat background (Banfield & Raftery 1993) is one more term, the same for every row:
  // term k of the row's log terms, its membership then moved to the background's own array.
  const background = ws.background;
  const backgroundTerm = background ? backgroundLogTerm(background) : 0;
  let total = 0;
  for (let i = 0; i < n; i++) {
    const offset = i * k;
    if (withResiduals) {
      // Fused with computeResiduals: one sweep of the design per iteration instead of two.
      const rowOffset = i * rowStride - implicitOnes;
      for (let c = 0; c < k; c++) {
        let fitted = 0;
        for (let j = 0; j < implicitOnes; j++) fitted += beta[c * q + j];
        for (let j = implicitOnes; j < q; j++) fitted += rowValues[rowOffset + j] * beta[c * q + j];
        residuals[offset + c] = y[i] - fitted;
      }
    }
    for (let c = 0; c < k; c++) {
      const r = residuals[offset + c];
      let value = constant[c] + curvature[c] * r * r;
      if (joint) value += gaussianLogDensity(ws.predictors, i * ws.p, xMeans, c * ws.p, xFactors, c * ws.p * ws.p, xLogDeterminants[c], ws.p, ws.predictorScratch);
      logTerm[c] = value;
    }
    let rowValue: number;
    if (background) {
      logTerm[k] = backgroundTerm;
      rowValue = membershipsFromLogTerms(logTerm, 0, k + 1, logTerm, 0);
      for (let c = 0; c < k; c++) memberships[offset + c] = logTerm[c];
      background.memberships[i] = logTerm[k];
    } else {
      rowValue = membershipsFromLogTerms(logTerm, 0, k, memberships, offset);
    }
    rowLogLikelihood[i] = rowValue;
    total += rowValue;
  }
  return total;
}
