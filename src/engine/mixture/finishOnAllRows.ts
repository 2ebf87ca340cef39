import { sampleIndices } from "../random";
import type { FitContext } from "./fitContext";
import { createWorkspace } from "./mixtureWorkspace";
import { withBackground } from "./backgroundComponent";
import type { Incumbent } from "./refineBest";
import { runEm } from "./runEm";

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
    subsampleIterations += runEm(intermediate, params, ctx, settings.maxIterations).iterations;
  }
  const fromSubsample = incumbent.run;
  const run = runEm(full, params, ctx, settings.maxIterations, incumbent.path, ctx.unwanted?.stop ?? null);
  run.reseeds += fromSubsample.reseeds;
  run.varianceBoundActive ||= fromSubsample.varianceBoundActive;
  incumbent.run = run;
  return { subsampleIterations, membershipsCurrent: true };
}
