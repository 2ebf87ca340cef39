import type { MixtureParameters } from "./mixtureParameters";
import type { MixtureWorkspace } from "./mixtureWorkspace";
import { copyParameters } from "./mixtureParameters";
import { leastSquares } from "../leastSquares";
import { computeResiduals } from "./eStep";
import { mStepPredictorModel, mStepVariances, type Guards } from "./mStep";
import { setHardMemberships } from "./starts";
import { gatherRows, rowsWithLabel } from "../rowSubset";

/** Relabel-and-refit rounds before giving up on a hard partition that keeps changing. */
const MAX_POLISH_ROUNDS = 50;

/**
 * The noiseless limit of EM: as σ → 0 the memberships become 0/1 and EM turns into
 * alternating least squares (clusterwise linear regression, Späth 1979, Computing 22):
 * fit each component exactly on its rows, move every row to the component with the smallest
 * absolute residual, repeat until no row moves. Each fit goes through the Householder QR
 * core, so the coefficients reach rounding level, where the normal equations of the M-step
 * lose digits to the squared condition number.
 *
 * @returns polished parameters (memberships left hard in ws), or null when a component fell
 *   below the minimum size or its rows were singular; the caller then keeps the EM fit.
 */
export function hardAssignmentPolish(ws: MixtureWorkspace, start: MixtureParameters, guards: Guards): MixtureParameters | null {
  const { n, q, k, design, y } = ws;
  const params = copyParameters(start);
  const labels = new Int32Array(n);
  for (let i = 0; i < n; i++) {
    let best = 0;
    for (let c = 1; c < k; c++) if (ws.memberships[i * k + c] > ws.memberships[i * k + best]) best = c;
    labels[i] = best;
  }
  const counts = new Int32Array(k);
  for (let round = 0; round < MAX_POLISH_ROUNDS; round++) {
    counts.fill(0);
    for (let i = 0; i < n; i++) counts[labels[i]]++;
    for (let c = 0; c < k; c++) {
      if (counts[c] < guards.minimumSize) return null;
      const own = gatherRows(design, q, y, rowsWithLabel(labels, c));
      try {
        params.coefficients.set(leastSquares(own.matrix, counts[c], q, own.y).coefficients, c * q);
      } catch {
        return null;
      }
    }
    computeResiduals(ws, params);
    let moved = 0;
    for (let i = 0; i < n; i++) {
      let best = 0;
      for (let c = 1; c < k; c++) if (Math.abs(ws.residuals[i * k + c]) < Math.abs(ws.residuals[i * k + best])) best = c;
      if (best !== labels[i]) {
        labels[i] = best;
        moved++;
      }
    }
    if (moved === 0) break;
  }
  setHardMemberships(ws, labels);
  ws.sizes.fill(0);
  for (let i = 0; i < n; i++) ws.sizes[labels[i]]++;
  for (let c = 0; c < k; c++) {
    if (ws.sizes[c] < guards.minimumSize) return null;
    params.weights[c] = ws.sizes[c] / n;
  }
  mStepVariances(ws, params, guards);
  if (ws.joint) mStepPredictorModel(ws, params, guards);
  return params;
}
