/**
 * The stop of a fit that cannot matter: a K scan asks each K's fit to end once its BIC cannot
 * come below the one that could change the suggestion (MixtureOptions.mattersBelowBic). The
 * phases that run EM on all rows (confirming leaders, refining the best, finishing on all
 * rows) take their stop from here.
 */
import type { MixtureOptions } from "../mixtureTypes";
import type { FitContext, Settings } from "./fitContext";
import type { MixtureWorkspace } from "./mixtureWorkspace";
import { countParameters } from "./assembleFit";
import type { EmStop } from "./fitContext";

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

/** The stop for runs on `ws`: the fit's stop on all rows; none on a subsample, whose ln L does not bear on the BIC on all rows. */
export function stopOnAllRows(ctx: FitContext, ws: MixtureWorkspace): EmStop | null {
  return ws === ctx.full ? (ctx.unwanted?.stop ?? null) : null;
}
