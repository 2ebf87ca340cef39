import type { Candidate, EmRun, FitContext } from "./fitContext";
import { coefficientDistance, DISAGREEMENT_RELATIVE, LIKELIHOOD_TIE } from "./compareFits";
import { runEm } from "./runEm";
import { stopOnAllRows } from "./unwantedFitStop";
import type { MixtureParameters } from "./mixtureParameters";
import type { MixtureWorkspace } from "./mixtureWorkspace";

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
  const stop = stopOnAllRows(ctx, ws);
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
 * A later phase's fit replaces the incumbent: its parameters, ln L, method and run; its ln L
 * joins the reported path when the run was on all rows (`ws` is the full workspace).
 */
export function adopt(ctx: FitContext, incumbent: Incumbent, ws: MixtureWorkspace, params: MixtureParameters, run: EmRun, method: string): void {
  incumbent.best.params = params;
  incumbent.best.logLikelihood = run.logLikelihood;
  incumbent.best.method = method;
  incumbent.run = run;
  if (ws === ctx.full) incumbent.path.push(run.logLikelihood);
}
