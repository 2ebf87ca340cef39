import { checkSignal } from "../errors";
import type { EmContext, EmRun, EmStop } from "./fitContext";
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
 * change of ln L, |ΔL| / max(|L|, n), drops below the tolerance, or the gain still to come does
 * (below), or `maxIterations` pass. The log-likelihood after each iteration goes to `path`
 * when one is given. A caller may also let it stop once the gain still to come is below
 * `ends.enoughGain` nats, an absolute bound (finishOnAllRows.ts), and may end it before it
 * converges through `ends.stop` or the context's `runStop` (the run then reports `stopped`).
 *
 * Gain still to come: EM converges linearly, each change about a times the one before, so
 * what is left after a change Δ is about Δ·a/(1 − a) (Aitken's acceleration applied to the
 * likelihood: Böhning, Dietz, Schaub, Schlattmann & Lindsay 1994; McNicholas, Murphy, McDaid
 * & Frost 2010). When the changes shrink fast (a ≤ 1/2) that is below the last change, and
 * the run stops an iteration or two earlier, with ln L within the same tolerance of its limit;
 * on large inputs each of those iterations is a full pass of the E- and M-steps.
 */
export function runEm(ws: MixtureWorkspace, params: MixtureParameters, em: EmContext, maxIterations: number, path: number[] | null = null, ends: EmEnds = {}): EmRun {
  const { enoughGain = 0 } = ends;
  const stop = eitherStop(ends.stop ?? null, em.runStop?.(ws, params, maxIterations) ?? null);
  const { guards, random, signal } = em;
  let logLikelihood = eStep(ws, params, true);
  let converged = false;
  let iterations = 0;
  let reseeds = 0;
  let varianceBoundActive = false;
  let previousChange = NaN;
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
    const allowed = em.tolerance * Math.max(Math.abs(next), ws.n);
    // The gain still to come at whatever ratio the changes shrink by (below 1), for the
    // caller's absolute bound and its stop.
    const toCome = gainToCome(previousChange, change, 1);
    if (reseeded.length === 0 && (Math.abs(change) <= allowed || gainToCome(previousChange, change) <= allowed || toCome <= enoughGain)) {
      converged = true;
      break;
    }
    if (stop !== null && reseeded.length === 0 && stop(next, toCome)) return { logLikelihood, iterations, converged, reseeds, varianceBoundActive, stopped: true };
    previousChange = reseeded.length === 0 ? change : NaN;
  }
  return { logLikelihood, iterations, converged, reseeds, varianceBoundActive };
}

/** A stop that ends the run when either does (each asked every iteration while the first says no). */
function eitherStop(first: EmStop | null, second: EmStop | null): EmStop | null {
  if (!first || !second) return first ?? second;
  return (logLikelihood, gain) => first(logLikelihood, gain) || second(logLikelihood, gain);
}

/** Optional ends of a run besides the tolerance and the iteration limit. */
export interface EmEnds {
  /**
   * Also converged once the gain still to come is below this many nats, whatever the ratio of
   * the changes (below 1): a change below the bound is not enough, since when EM converges
   * slowly (ratio near 1) far more than the change is still to come (DEVELOPERS.md).
   */
  enoughGain?: number;
  /** Asked after each iteration whether the run may end before converging. */
  stop?: EmStop | null;
}

/** Aitken's estimate of the gain in ln L still to come after `change`, Infinity unless the last two changes shrink geometrically with ratio a ≤ largestRatio (below 1). */
function gainToCome(previousChange: number, change: number, largestRatio = 0.5): number {
  const ratio = change / previousChange;
  return change > 0 && ratio > 0 && ratio <= largestRatio && ratio < 1 ? (change * ratio) / (1 - ratio) : Infinity;
}
