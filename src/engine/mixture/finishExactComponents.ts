import type { EmRun, FitContext } from "./fitContext";
import type { MixtureParameters } from "./mixtureParameters";
import type { Incumbent } from "./refineBest";
import { computeResiduals, eStep } from "./eStep";
import { hardAssignmentPolish } from "./hardAssignmentPolish";
import { exactComponentsOf, isNoiseless } from "./exactComponents";
import { annealedLanding, annealingMultiplyAdds } from "./annealedLanding";
import { peelExactComponents } from "./restructuringMoves";
import { runEm } from "./runEm";

/** Exact-peeling rounds on all rows (each removes at least one exact component). */
const MAX_PEELING_ROUNDS = 3;
/** The polish is kept unless it lowers ln L by more than rounding: 1e-9 of |ln L|. */
const POLISH_ROUNDING = 1e-9;

/**
 * A fit exact nowhere is tried by annealed landing (annealedLanding.ts) when its rows are few
 * and may lie exactly on their regressions. Few: at most THIN_ROWS per coefficient per
 * component, where the starts miss noiseless problems (at 10 rows and more they land them),
 * and one annealing within ANNEALING_MULTIPLY_ADDS (about 0.4 s here at d = 50, K = 7 with
 * 2,100 rows; d = 100 with K = 4 at 8 rows is over). May lie exactly: a parent fitted other
 * rows of the same data exactly, or some component's noise SD is at most NEAR_EXACT_SD times
 * SD(y), as where an EM component shrank onto a few rows of a noiseless problem (0.1-5% on
 * noiseless d = 50, K = 7 problems at 4-6 rows). Noisy sheets this thin often have such a
 * component too (an overfitted one); on sixteen of them (d = 10-50, K = 5-7, 3-5 rows) the
 * tries took the fits 1.6 times as long, to the same fits (DEVELOPERS.md). Only the plain
 * model without a background, on rows no noisy fit chose.
 */
const THIN_ROWS = 8;
const ANNEALING_MULTIPLY_ADDS = 3e9;
const NEAR_EXACT_SD = 0.05;

function mayLieExactly(ctx: FitContext, params: MixtureParameters): boolean {
  const { full } = ctx;
  if (!ctx.anneal || full.joint || full.background !== null || ctx.strays || full.n > THIN_ROWS * full.k * full.q) return false;
  if (annealingMultiplyAdds(full) > ANNEALING_MULTIPLY_ADDS) return false;
  if (isNoiseless(params, full) || exactComponentsOf(full, params).length > 0) return false;
  if (ctx.expectExact) return true;
  const limit = NEAR_EXACT_SD * NEAR_EXACT_SD * full.yVariance;
  for (let c = 0; c < params.k; c++) if (params.variances[c] <= limit) return true;
  return false;
}

/** The finished fit on all rows. */
export interface Finished {
  params: MixtureParameters;
  logLikelihood: number;
  run: EmRun;
  peeled: number;
  polished: boolean;
  /** Whether the full workspace's memberships are those of `params`. */
  membershipsCurrent: boolean;
}

/**
 * Phase on all rows: when some components fit their rows exactly and others do not, the exact
 * rows are set aside and the rest fitted afresh (exact peeling, kept when ln L rises); when
 * none does and the rows may lie exactly on their regressions, annealed landing looks for a
 * first exact component to peel from; a fit exact on every row is finished by the
 * hard-assignment polish (exact fits by QR).
 */
export function finishExactComponents(ctx: FitContext, incumbent: Incumbent, membershipsCurrent: boolean): Finished {
  const { full, settings } = ctx;
  let params = incumbent.best.params;
  let run = incumbent.run;
  let logLikelihood = run.logLikelihood;
  let peeled = 0;
  // A fit after peeling (or landing) replaces the incumbent only when its refinement raises ln L.
  const keepIfHigher = (next: MixtureParameters | null, method: string): boolean => {
    if (!next) return false;
    membershipsCurrent = false;
    const nextRun = runEm(full, next, ctx, settings.maxIterations, null, { plain: true });
    if (!(nextRun.logLikelihood > logLikelihood)) return false;
    params = next;
    logLikelihood = nextRun.logLikelihood;
    // The refinement restarts from a new point, so only its end joins the path (above the
    // path's last value, which keeps the reported path non-decreasing).
    run = { ...nextRun, iterations: run.iterations + nextRun.iterations, reseeds: run.reseeds + nextRun.reseeds };
    incumbent.path.push(nextRun.logLikelihood);
    incumbent.best.method = method;
    peeled++;
    return true;
  };
  for (let round = 0; round < MAX_PEELING_ROUNDS; round++) {
    if (!keepIfHigher(peelExactComponents(ctx, full, params, null, true), "exact-peeling")) break;
  }
  if (peeled === 0 && mayLieExactly(ctx, params)) {
    membershipsCurrent = false;
    const landed = annealedLanding(ctx);
    keepIfHigher(landed && (peelExactComponents(ctx, full, landed, null, true) ?? landed), "annealed-landing");
  }
  if (!isNoiseless(params, full)) return { params, logLikelihood, run, peeled, polished: false, membershipsCurrent };
  const polishedParams = hardAssignmentPolish(full, params, ctx.guards, ctx.signal);
  if (polishedParams) {
    computeResiduals(full, polishedParams);
    const polishedLogLikelihood = eStep(full, polishedParams);
    if (polishedLogLikelihood >= logLikelihood - POLISH_ROUNDING * Math.abs(logLikelihood)) {
      return { params: polishedParams, logLikelihood: polishedLogLikelihood, run, peeled, polished: true, membershipsCurrent: false };
    }
  }
  computeResiduals(full, params);
  return { params, logLikelihood: eStep(full, params), run, peeled, polished: false, membershipsCurrent: false };
}
