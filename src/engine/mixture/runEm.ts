import { SkeinError } from "../errors";
import type { CancelSignal } from "../mixtureTypes";
import type { EmContext, EmRun } from "./fitContext";
import type { MixtureParameters } from "./mixtureParameters";
import type { MixtureWorkspace } from "./mixtureWorkspace";
import { computeResiduals, eStep } from "./eStep";
import { mStepCoefficients, mStepVariances, mStepVariancesFromGram } from "./mStep";
import { reseedComponent } from "./reseedComponent";
import { updateBackgroundWeight } from "./backgroundComponent";

/** Re-seedings allowed per run; beyond this the data does not support K components. */
const MAX_RESEEDS = 10;

/**
 * EM (Dempster, Laird & Rubin 1977) from `params` (updated in place) until the relative
 * change of ln L, |ΔL| / max(|L|, n), drops below the tolerance or `maxIterations` pass. The
 * log-likelihood after each iteration goes to `path` when one is given.
 */
export function runEm(ws: MixtureWorkspace, params: MixtureParameters, em: EmContext, maxIterations: number, path: number[] | null = null): EmRun {
  const { guards, random, signal } = em;
  computeResiduals(ws, params);
  let logLikelihood = eStep(ws, params);
  let converged = false;
  let iterations = 0;
  let reseeds = 0;
  let varianceBoundActive = false;
  for (let iteration = 0; iteration < maxIterations; iteration++) {
    checkSignal(signal);
    const report = mStepCoefficients(ws, params, guards);
    if (ws.background) updateBackgroundWeight(ws.background, ws.n);
    const reseeded: number[] = [];
    if (report.collapsed.length > 0 && reseeds < MAX_RESEEDS) {
      for (const c of report.collapsed) {
        reseedComponent(ws, params, c, guards, random);
        reseeded.push(c);
        reseeds++;
      }
    }
    let next: number;
    if (reseeded.length === 0 && mStepVariancesFromGram(ws, params, guards)) {
      next = eStep(ws, params, true);
    } else {
      computeResiduals(ws, params);
      varianceBoundActive = mStepVariances(ws, params, guards, reseeded);
      next = eStep(ws, params);
    }
    iterations++;
    path?.push(next);
    const change = next - logLikelihood;
    logLikelihood = next;
    // n as the floor of the scale, so that a log-likelihood near 0 does not make the test
    // impossibly strict.
    if (reseeded.length === 0 && Math.abs(change) <= em.tolerance * Math.max(Math.abs(next), ws.n)) {
      converged = true;
      break;
    }
  }
  return { logLikelihood, iterations, converged, reseeds, varianceBoundActive };
}

export function checkSignal(signal: CancelSignal | undefined): void {
  if (signal?.aborted) throw new SkeinError("cancelled", "The fit was cancelled before it finished.");
}
