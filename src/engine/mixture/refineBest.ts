import type { MixtureOptions } from "../mixtureTypes";
import type { Candidate, EmRun, FitContext, Settings } from "./fitContext";
import type { MixtureWorkspace } from "./mixtureWorkspace";
import { coefficientDistance, DISAGREEMENT_RELATIVE, LIKELIHOOD_TIE } from "./compareFits";
import { countParameters } from "./assembleFit";
import { runEm, type EmStop } from "./runEm";

/** The fit the pipeline carries from phase to phase: the leading candidate, its last run and the reported path. */
export interface Incumbent {
  best: Candidate;
  run: EmRun;
  /** ln L after each iteration that counts for the report (iterations on all rows only). */
  path: number[];
  /** Relative coefficient distance between the two best converged fits when they tie in likelihood (0 when they agree). */
  disagreement: number;
}

/**
 * Phase: refine the best screened start fully on the working rows. When the runner-up is
 * close in likelihood but far in coefficients it is refined too, so that the comparison is
 * between converged fits; the better one leads, and their distance is the disagreement.
 */
export function refineBest(ctx: FitContext, candidates: readonly Candidate[]): Incumbent {
  const ws = ctx.working;
  const maxIterations = ctx.settings.maxIterations;
  const path: number[] = [];
  const onAllRows = ws === ctx.full ? path : null;
  // ln L on a subsample does not bear on the BIC on all rows: the stop waits for those.
  const stop = ws === ctx.full ? (ctx.unwanted?.stop ?? null) : null;
  let best = candidates[0];
  let run = runEm(ws, best.params, ctx, maxIterations, onAllRows, { stop });
  best.logLikelihood = run.logLikelihood;
  let disagreement = 0;
  const runnerUp = candidates.find((c) => c !== best && c.logLikelihood >= best.logLikelihood - LIKELIHOOD_TIE && coefficientDistance(c.params, best.params) > DISAGREEMENT_RELATIVE);
  if (runnerUp) {
    runnerUp.logLikelihood = runEm(ws, runnerUp.params, ctx, maxIterations, null, { stop }).logLikelihood;
    if (runnerUp.logLikelihood > best.logLikelihood) {
      // The runner-up overtook: its refinement is the one reported.
      const held = best;
      best = runnerUp;
      path.length = 0;
      run = runEm(ws, best.params, ctx, maxIterations, onAllRows, { stop });
      best.logLikelihood = run.logLikelihood;
      disagreement = held.logLikelihood < best.logLikelihood - LIKELIHOOD_TIE ? 0 : coefficientDistance(held.params, best.params);
    } else if (runnerUp.logLikelihood >= best.logLikelihood - LIKELIHOOD_TIE) {
      disagreement = coefficientDistance(runnerUp.params, best.params);
    }
  }
  return { best, run, path, disagreement };
}

/**
 * Aitken's estimate of the gain still to come assumes the changes of ln L keep shrinking by
 * their latest ratio; EM on a mixture with more components than groups slows down as it goes,
 * so the stop allows this many times that estimate. Measured on a 1,000,000-row scan
 * (bench/targetsBench large): the whole remaining gain of K = 4 at three groups was about 5
 * times the estimate after its second iteration on all rows.
 */
const STOP_GAIN_ALLOWANCE = 10;

/**
 * The stop of a fit that only matters below a BIC (MixtureOptions.mattersBelowBic): its runs
 * on all rows (confirming the leading starts, refining the best, finishing on all rows) end
 * once −2(ln L + STOP_GAIN_ALLOWANCE · gain still to come) + ν ln n is still above that BIC.
 * Null without one.
 */
export function stopWhenUnwanted(options: MixtureOptions, full: MixtureWorkspace, settings: Settings): FitContext["unwanted"] {
  const wanted = options.mattersBelowBic;
  if (!wanted) return null;
  // ln L the fit must exceed for its BIC to come below wanted.bic.
  const needed = (countParameters(full, settings) * Math.log(full.n) - wanted.bic) / 2;
  return { stop: cannotReach(needed), needed, reason: wanted.reason };
}

/** The stop of a run whose ln L must exceed `needed` (with STOP_GAIN_ALLOWANCE times the gain still to come). */
export function cannotReach(needed: number): EmStop {
  return (logLikelihood, gainToCome) => logLikelihood + STOP_GAIN_ALLOWANCE * gainToCome < needed;
}
