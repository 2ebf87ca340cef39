import type { MixtureFit, RefinementReport, WarmStartReport } from "../mixtureTypes";
import type { FitContext } from "./fitContext";
import type { Finished } from "./finishExactComponents";
import type { OnAllRows } from "./finishOnAllRows";
import type { Incumbent } from "./refineBest";
import type { ScreenedStarts } from "./screenStarts";
import { exactComponentsOf, isNoiseless, rowsNotFitExactly } from "./exactComponents";
import type { MixtureParameters } from "./mixtureParameters";
import type { MixtureWorkspace } from "./mixtureWorkspace";
import { DISAGREEMENT_RELATIVE } from "./compareFits";
import { assembleFit } from "./assembleFit";
import { atVarianceRatioBound } from "./mixtureSettings";
import { PARTLY_EXACT } from "../exactFit";

/** What the pipeline's phases produced, for the report. */
export interface PipelineOutcome {
  starts: ScreenedStarts;
  incumbent: Incumbent;
  splits: number;
  onAllRows: OnAllRows;
  finished: Finished;
}

/**
 * Phase: the convergence reports and warnings, then the fit itself (memberships, labels, BIC,
 * ICL, canonical order). The warm start is trusted when the best starts agree and either the
 * moment certificate shrank enough or the fit is exact on every row (which no start can
 * improve on); when split-and-merge or noisy peeling beat every start, the starts missed the
 * fit reported, which is not trusted either unless exact.
 */
export function reportFit(ctx: FitContext, outcome: PipelineOutcome): MixtureFit {
  const { full, settings, guards } = ctx;
  const { starts, incumbent, splits, onAllRows, finished } = outcome;
  const { params, run } = finished;
  const { k } = settings;
  const moment = starts.moment;
  const method = incumbent.best.method;
  const noiseless = isNoiseless(params, full);
  const startsDisagree = incumbent.disagreement > DISAGREEMENT_RELATIVE;
  const startsMissed = (method === "split-and-merge" || method === "peeling") && !noiseless;
  const warmStart: WarmStartReport = {
    converged: !startsDisagree && (moment === null || moment.converged || noiseless) && !startsMissed,
    method,
    certificate: moment ? moment.certificate : NaN,
    startsTried: starts.candidates.length,
    disagreement: incumbent.disagreement,
  };
  const refinement: RefinementReport = {
    converged: run.converged,
    iterations: run.iterations,
    logLikelihoodPath: incumbent.path,
    reseeds: run.reseeds,
    subsampleRows: ctx.working === full ? 0 : ctx.working.n,
    subsampleIterations: onAllRows.subsampleIterations,
    polished: finished.polished,
    peeled: finished.peeled,
    splits,
    ...(run.stopped && ctx.unwanted ? { stopped: ctx.unwanted.reason } : {}),
  };
  const warnings: string[] = [];
  if (refinement.stopped !== undefined) {
    warnings.push(`Stopped early after ${run.iterations} iteration${run.iterations === 1 ? "" : "s"}, not converged: ${refinement.stopped}.`);
  } else if (!run.converged) {
    warnings.push(`Not converged: the fit stopped after ${run.iterations} iteration${run.iterations === 1 ? "" : "s"} while the log-likelihood was still changing, so it may not be at its best. Try fewer components or another seed.`);
  }
  if (startsDisagree) {
    warnings.push(`Starts disagree: different starts reached nearly the same log-likelihood with different components, so the data do not pin these ${k} components down. Try fewer components, another seed, or more rows.`);
  }
  if (run.reseeds > 0) {
    warnings.push(`A component was left with too few rows ${run.reseeds} time(s) and was started again. The data may hold fewer than ${k} components: compare BIC across K.`);
  }
  let smallestVariance = Infinity;
  let largestVariance = 0;
  for (let c = 0; c < k; c++) {
    smallestVariance = Math.min(smallestVariance, params.variances[c]);
    largestVariance = Math.max(largestVariance, params.variances[c]);
  }
  if (largestVariance > guards.varianceFloor * 1.000001 && atVarianceRatioBound(smallestVariance, largestVariance, guards.varianceRatioBound)) {
    warnings.push(partlyExactWarning(full, params) ?? "One component's noise SD is held at a thousandth of another's, the smallest Skein allows: that component may be fitting a few rows almost exactly. Try fewer components.");
  }
  return assembleFit(full, params, finished.logLikelihood, settings, warmStart, refinement, warnings, undefined, finished.membershipsCurrent);
}

/**
 * The warning for a fit in which some components fit enough rows exactly to identify them
 * (exactComponentsOf) and the others do not; null when none does. The noise SD of such a
 * component sits at the variance-ratio bound, but unlike a handful of rows fitted almost
 * exactly (the bound's own warning, "try fewer components") it is no sign of too many
 * components: either only some rows are exact (computed or copied values), or every row is
 * and the search did not find the other components. Counting the exact components costs one
 * pass over the rows, only when the bound is active. Measured on six noiseless
 * fits the default search left so (d = 50, K = 7, 5-6 rows per predictor per component,
 * bench problems): 40 restarts found every component on two, another seed on one.
 */
function partlyExactWarning(ws: MixtureWorkspace, params: MixtureParameters): string | null {
  const exact = exactComponentsOf(ws, params);
  if (exact.length === 0 || exact.length === params.k) return null;
  const rows = ws.n - rowsNotFitExactly(ws, exact).length;
  const others = params.k - exact.length;
  const fits = exact.length === 1 ? "1 component fits" : `${exact.length} components fit`;
  return `${PARTLY_EXACT}: ${fits} ${rows} rows exactly, and the other ${others === 1 ? "one does" : `${others} do`} not; a noise SD is held at a thousandth of another's, the smallest Skein allows. When only some rows are exact (computed or copied values), that can be right; when every row should lie exactly on one of the regressions, the other components have not been found yet: try another seed.`;
}
