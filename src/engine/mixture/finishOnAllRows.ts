import { sampleIndices } from "../random";
import type { FitContext } from "./fitContext";
import { createWorkspace } from "./mixtureWorkspace";
import { withBackground } from "./backgroundComponent";
import type { Incumbent } from "./refineBest";
import { cannotReach, stopOnAllRows } from "./unwantedFitStop";
import { runEm } from "./runEm";
import type { EmStop } from "./fitContext";
import { DEFAULT_TOLERANCE } from "../options";
import type { MixtureParameters } from "./mixtureParameters";
import type { MixtureWorkspace } from "./mixtureWorkspace";
import { eStep } from "./eStep";
import { regressionParameterCount } from "./assembleFit";

/** Intermediate stage on n / INTERMEDIATE_FRACTION rows when n is over 2·INTERMEDIATE_FRACTION subsamples. */
const INTERMEDIATE_FRACTION = 5;
/**
 * The intermediate stage stops once the gain in ln L still to come is below this many nats per
 * free parameter. Its maximum lies from the full data's by sampling noise worth about
 * ½(1 − 1/INTERMEDIATE_FRACTION) = 0.4 nats of its own ln L per parameter (half a χ² with one
 * degree of freedom each), which the full-data iterations remove anyway; converging further
 * than an eighth of that buys no full-data iteration. Measured on eight seeded 200,000 x 10,
 * K = 3 problems: 2 intermediate iterations instead of 4-7, the same full-data iterations.
 */
const INTERMEDIATE_GAIN_PER_PARAMETER = 0.05;
/**
 * On all rows EM also stops once the gain in ln L still to come is below FULL_DATA_GAIN nats
 * (at the default tolerance; in proportion to a tolerance set tighter or looser). Near the
 * maximum ln L ≈ L̂ − ½ δᵀIδ (I the observed information), so a gap of ε nats leaves every
 * parameter within sqrt(2ε) of its standard errors of the maximum (|δ_j| ≤ sqrt(δᵀIδ · (I⁻¹)_jj)):
 * 0.005 nats is within a tenth of a standard error. Measured on eight seeded 200,000 x 10,
 * K = 3 problems: 30 full-data iterations instead of 34, the worst coefficient 0.04-0.10
 * standard errors from the fit converged to a tolerance of 1e-13.
 */
const FULL_DATA_GAIN = 0.005;

/** How the move to all rows went. */
export interface OnAllRows {
  /** EM iterations on the subsample (and intermediate subsample) before those on all rows. */
  subsampleIterations: number;
  /** Whether the full workspace's memberships are those of the incumbent's parameters (EM ends with an E-step). */
  membershipsCurrent: boolean;
}

/**
 * Phase: when the starts ran on a subsample, refine the incumbent on all rows (its run and path
 * become those of all rows). On very large inputs an intermediate subsample comes first: EM's
 * steps shrink the distance to the full-data optimum by a fixed factor, so starting the
 * full-data iterations from a fit on n / INTERMEDIATE_FRACTION rows saves more full-data
 * iterations than the stage costs.
 */
export function finishOnAllRows(ctx: FitContext, incumbent: Incumbent): OnAllRows {
  const { full, working, settings } = ctx;
  if (working === full) return { subsampleIterations: 0, membershipsCurrent: false };
  const params = incumbent.best.params;
  let subsampleIterations = incumbent.run.iterations;
  if (full.n > INTERMEDIATE_FRACTION * 2 * working.n) {
    const rows = sampleIndices(full.n, Math.floor(full.n / INTERMEDIATE_FRACTION), ctx.random);
    // Only EM runs here: no copy of the predictors beyond the design (the joint model keeps one).
    const intermediate = withBackground(createWorkspace(ctx.data, settings.k, settings.intercept, full.joint, rows, false), settings.background, full);
    const enoughGain = INTERMEDIATE_GAIN_PER_PARAMETER * regressionParameterCount(settings.k, full.q);
    subsampleIterations += runEm(intermediate, params, ctx, settings.maxIterations, null, { enoughGain, stop: intermediateStop(ctx, intermediate, params) }).iterations;
  }
  const fromSubsample = incumbent.run;
  const run = runEm(full, params, ctx, settings.maxIterations, incumbent.path, {
    enoughGain: FULL_DATA_GAIN * (settings.tolerance / DEFAULT_TOLERANCE),
    stop: stopOnAllRows(ctx, full),
  });
  run.reseeds += fromSubsample.reseeds;
  run.varianceBoundActive ||= fromSubsample.varianceBoundActive;
  incumbent.run = run;
  return { subsampleIterations, membershipsCurrent: true };
}

/**
 * For a fit that may not matter (ctx.unwanted): the intermediate stage hands over to all rows
 * once its gain in ln L since the start, scaled to all rows (n / its rows), cannot bring the
 * all-rows ln L at the start to the one needed. The decision stays with the run on all rows,
 * whose own stop ends the fit or which runs on to convergence; this only spares a fit with
 * more components than groups the intermediate stage's slow iterations (one pass on all rows
 * and one on the intermediate rows to measure the start).
 */
function intermediateStop(ctx: FitContext, intermediate: MixtureWorkspace, params: MixtureParameters): EmStop | null {
  if (!ctx.unwanted) return null;
  const { full } = ctx;
  const startOnAll = eStep(full, params, true);
  const startHere = eStep(intermediate, params, true);
  const scale = intermediate.n / full.n;
  // ln L here that stands for the needed ln L on all rows.
  return cannotReach(startHere + (ctx.unwanted.needed - startOnAll) * scale);
}
