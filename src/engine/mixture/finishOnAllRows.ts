import { sampleIndices } from "../random";
import type { FitContext } from "./fitContext";
import { createWorkspace } from "./mixtureWorkspace";
import { withBackground } from "./backgroundComponent";
import { cannotReach, type Incumbent } from "./refineBest";
import { runEm, type EmStop } from "./runEm";
import type { MixtureParameters } from "./mixtureParameters";
import type { MixtureWorkspace } from "./mixtureWorkspace";
import { computeResiduals, eStep } from "./eStep";

/** Intermediate stage on n / INTERMEDIATE_FRACTION rows when n is over 2·INTERMEDIATE_FRACTION subsamples. */
const INTERMEDIATE_FRACTION = 5;

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
    subsampleIterations += runEm(intermediate, params, ctx, settings.maxIterations, null, intermediateStop(ctx, intermediate, params)).iterations;
  }
  const fromSubsample = incumbent.run;
  const run = runEm(full, params, ctx, settings.maxIterations, incumbent.path, ctx.unwanted?.stop ?? null);
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
  computeResiduals(full, params);
  const startOnAll = eStep(full, params);
  computeResiduals(intermediate, params);
  const startHere = eStep(intermediate, params);
  const scale = intermediate.n / full.n;
  // ln L here that stands for the needed ln L on all rows.
  return cannotReach(startHere + (ctx.unwanted.needed - startOnAll) * scale);
}
