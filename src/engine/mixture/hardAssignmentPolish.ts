import type { CancelSignal } from "../mixtureTypes";
import type { MixtureParameters } from "./mixtureParameters";
import type { MixtureWorkspace } from "./mixtureWorkspace";
import { copyParameters } from "./mixtureParameters";
import { alternatingLeastSquares } from "../warmStart/alternatingLeastSquares";
import { mStepPredictorModel, mStepVariances, type Guards } from "./mStep";
import { setHardMemberships } from "./starts";
import { computeResiduals } from "./eStep";

/** Relabel-and-refit rounds before giving up on a hard partition that keeps changing. */
const MAX_POLISH_ROUNDS = 50;

/**
 * The noiseless limit of EM: as σ → 0 the memberships become 0/1 and EM turns into
 * alternating least squares (clusterwise linear regression, Späth 1979, Computing 22), run
 * here by the one alternating-least-squares kernel from the EM fit's coefficients. Its last
 * fits go through the Householder QR core, so the coefficients reach rounding level, where
 * the normal equations of the M-step lose digits to the squared condition number.
 *
 * @returns polished parameters (memberships left hard in ws), or null when a component fell
 *   below the minimum size; the caller then keeps the EM fit.
 */
export function hardAssignmentPolish(ws: MixtureWorkspace, start: MixtureParameters, guards: Guards, signal?: CancelSignal): MixtureParameters | null {
  const { n, q, k, design, y } = ws;
  const params = copyParameters(start);
  const coefficients = Array.from({ length: k }, (_, c) => start.coefficients.slice(c * q, c * q + q));
  const fit = alternatingLeastSquares(design, n, q, y, coefficients, MAX_POLISH_ROUNDS, 0, guards.minimumSize, signal);
  fit.coefficients.forEach((c, index) => params.coefficients.set(c, index * q));
  const labels = fit.labels;
  setHardMemberships(ws, labels);
  ws.sizes.fill(0);
  for (let i = 0; i < n; i++) ws.sizes[labels[i]]++;
  for (let c = 0; c < k; c++) {
    if (ws.sizes[c] < guards.minimumSize) return null;
    params.weights[c] = ws.sizes[c] / n;
  }
  computeResiduals(ws, params);
  mStepVariances(ws, params, guards);
  if (ws.joint) mStepPredictorModel(ws, params, guards);
  return params;
}
