import type { EmRun, FitContext } from "./fitContext";
import type { MixtureParameters } from "./mixtureParameters";
import type { Incumbent } from "./refineBest";
import { computeResiduals, eStep } from "./eStep";
import { hardAssignmentPolish } from "./hardAssignmentPolish";
import { isNoiseless } from "./exactComponents";
import { peelAndRefine } from "./restructuringMoves";

/** Exact-peeling rounds on all rows (each removes at least one exact component). */
const MAX_PEELING_ROUNDS = 3;
/** The polish is kept unless it lowers ln L by more than rounding: 1e-9 of |ln L|. */
const POLISH_ROUNDING = 1e-9;

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
 * rows are set aside and the rest fitted afresh (exact peeling, kept when ln L rises; its
 * sub-problems may try annealed landing when `annealPeels`: not after annealed landing has
 * replaced the fit, whose own peels tried it); a fit exact on every row is finished by the
 * hard-assignment polish (exact fits by QR).
 */
export function finishExactComponents(ctx: FitContext, incumbent: Incumbent, membershipsCurrent: boolean, annealPeels: boolean): Finished {
  const { full } = ctx;
  let params = incumbent.best.params;
  let run = incumbent.run;
  let logLikelihood = run.logLikelihood;
  let peeled = 0;
  for (let round = 0; round < MAX_PEELING_ROUNDS; round++) {
    const peeledFit = peelAndRefine(ctx, full, params, null, { anneal: annealPeels });
    if (!peeledFit) break;
    membershipsCurrent = false;
    const peeledRun = peeledFit.run;
    if (!(peeledRun.logLikelihood > logLikelihood)) break;
    params = peeledFit.params;
    logLikelihood = peeledRun.logLikelihood;
    // The peeled refinement restarts from a new point, so only its end joins the path (above
    // the path's last value, which keeps the reported path non-decreasing).
    run = { ...peeledRun, iterations: run.iterations + peeledRun.iterations, reseeds: run.reseeds + peeledRun.reseeds };
    incumbent.path.push(peeledRun.logLikelihood);
    incumbent.best.method = "exact-peeling";
    peeled++;
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
