import { DEFAULT_MAX_ITERATIONS, DEFAULT_RESTARTS, DEFAULT_SEED, DEFAULT_TOLERANCE } from "./options";
import type { MixtureComponent, MixtureFit, MixtureModel, MixtureOptions, RefinementReport, RegressionData, WarmStartReport } from "./mixtureTypes";
import { SkeinError } from "./errors";
import { createRandom, sampleIndices, type Random } from "./random";
import { leastSquares } from "./leastSquares";
import { gatherRows, selectRows } from "./rowSubset";
import { createWorkspace, type MixtureWorkspace } from "./mixture/mixtureWorkspace";
import { permuteParameters, type MixtureParameters } from "./mixture/mixtureParameters";
import { computeResiduals, eStep } from "./mixture/eStep";
import { withInternalScaling } from "./internalScaling";
import { backgroundMayHelp, chooseBackground, createBackground, updateBackgroundWeight } from "./mixture/backgroundComponent";
import { factorPredictorCovariances, mStepCoefficients, mStepPredictorModel, mStepVariances, mStepVariancesFromGram, type Guards } from "./mixture/mStep";
import { reseedComponent } from "./mixture/reseedComponent";
import { hardAssignmentPolish } from "./mixture/hardAssignmentPolish";
import { canonicalOrder } from "./mixture/canonicalOrder";
import {
  locationSeedingLabels,
  parametersFromCoefficients,
  randomPartitionLabels,
  residualSeedingLabels,
  setHardMemberships,
} from "./mixture/starts";
import { createParameters } from "./mixture/mixtureParameters";
import { momentWarmStart } from "./warmStart/momentWarmStart";
import { ConcentrationSteps } from "./mixture/concentrationSteps";
import { alternatingLeastSquares, EXACT_FIT_RELATIVE } from "./warmStart/alternatingLeastSquares";
import { MAX_PEELING_DEPTH, PEEL_CANDIDATES, peelComponent, peelExactComponents, splitAndMerge } from "./mixture/restructuringMoves";

// ---------------------------------------------------------------------------------------
// Defaults and guards. Each is a named constant so a reader can find why it has its value.
// ---------------------------------------------------------------------------------------

// The user-settable defaults (seed, restarts, tolerance, iterations) live in the options table.
/** EM iterations each start gets before the starts are compared (short exploratory runs). */
const SHORT_ITERATIONS = 15;
/**
 * The moment warm start usually lands next to the answer, where EM on noiseless data needs a
 * few dozen iterations to reach the exact fit that ends the search; it gets that many.
 */
const MOMENT_START_ITERATIONS = 60;
/** A component variance below this fraction of var(y) marks a start as heading for an exact fit. */
const NEAR_EXACT_VARIANCE_RELATIVE = 1e-6;
/** Rows within SNAP_WIDTH noise SDs of a near-exact component count as its own (4 SDs miss 6e-5 of them). */
const SNAP_WIDTH = 4;
/** Trimmed refits per near-exact component: the second uses the first's far smaller SD. */
const SNAP_ROUNDS = 2;
/**
 * Hard-assignment steps tried on a start heading for an exact fit: from inside its basin
 * alternating least squares settles in a few steps; 50 leave room for slow last movers.
 */
const EXACT_POLISH_ITERATIONS = 50;

/**
 * Variance floor, relative to the variance of y: 1e-20 (σ ≥ 1e-10·SD(y)) is far below any
 * real noise yet above the rounding of residuals computed from normal equations (about
 * 1e-14·SD(y) for well-conditioned designs), so on noiseless data EM stops at hard memberships
 * instead of chasing rounding; without a floor the likelihood is unbounded.
 */
const VARIANCE_FLOOR_RELATIVE = 1e-20;
/**
 * Hathaway (1985) bound on min σ_k² / max σ_k²: 1e-6 lets noise SDs differ by a factor of
 * 1000, more than real groups in one sheet do, yet stops a component from collapsing onto a
 * handful of rows it fits (nearly) exactly while the others carry the noise.
 */
const VARIANCE_RATIO_BOUND = 1e-6;
/**
 * A component must keep at least q + 1 rows' worth of membership: with q rows it fits them
 * exactly, its variance is 0 and the likelihood is infinite; one row more leaves one degree
 * of freedom for its noise.
 */
const ROWS_BEYOND_COEFFICIENTS = 1;
/** Joint model: ridge on each x covariance, relative to each predictor's overall variance. */
const COVARIANCE_RIDGE = 1e-6;
/** Re-seedings allowed per refinement; beyond this the data does not support K components. */
const MAX_RESEEDS = 10;

/** All component variances below this fraction of var(y): treat the data as noiseless. */
export const NOISELESS_VARIANCE_RELATIVE = 1e-12;
/** Split-and-merge rounds after the main refinement (each must raise ln L by SPLIT_MIN_GAIN). */
const MAX_SPLIT_ROUNDS = 3;
/** Components tried for a split per round, largest unexplained variance first. */
const SPLIT_CANDIDATES = 3;
/** Gain in ln L a split-and-merge move must bring to be kept: 1 log unit, so rounding never counts. */
const SPLIT_MIN_GAIN = 1;
/**
 * Peeling sub-fits (exact or noisy: both pass the parent's estimate of the components left) of
 * this many components or more skip the random-partition starts (see the driver); with fewer
 * they keep them: cheap, and they do find two or three lines.
 */
const PEELED_COMPONENTS_WITHOUT_PARTITIONS = 4;
/**
 * Concentration steps on a start heading for an exact fit: subsets of half the rows a component
 * holds (at least 1.5q, so the least-squares fits stay well determined), at most 20 steps
 * (starts that lead to an exact fit reach it within about ten).
 */
const CONCENTRATION_MIN_SUBSET = 1.5;
const CONCENTRATION_SUBSET_FRACTION = 0.5;
const CONCENTRATION_STEPS = 20;
/** Peeling rounds after the main refinement (each removes at least one exact component). */
const MAX_PEELING_ROUNDS = 3;

/**
 * Subsample for the starts on large inputs: max(SUBSAMPLE_MIN_ROWS, SUBSAMPLE_ROWS_PER_PARAMETER
 * · k · q) rows, used only when the data has more than twice that many rows. A few thousand rows
 * already place the components to within a few standard errors of the full-data fit, which the
 * full-data iterations then remove.
 */
const SUBSAMPLE_MIN_ROWS = 4000;
const SUBSAMPLE_ROWS_PER_PARAMETER = 20;
/**
 * The moment warm start sees at most max(MOMENT_MIN_ROWS, MOMENT_ROWS_PER_PARAMETER · k · q)
 * rows: its sample size grows like the dimension (Õ(d), METHODS.md), its cost like rows times
 * its many passes, and its output is only a start that EM then refines on more rows.
 */
const MOMENT_MIN_ROWS = 1000;
/** Intermediate stage on n / 5 rows when n is over 10 subsamples (see the driver). */
const INTERMEDIATE_FRACTION = 5;
const MOMENT_ROWS_PER_PARAMETER = 40;

/**
 * Two starts disagree when their log-likelihoods are within DISAGREEMENT_LOG_LIKELIHOOD (6 is
 * "strong evidence" on the 2 ln B scale of Kass & Raftery 1995, so a gap of 3 in ln L) and
 * their matched coefficients differ by more than DISAGREEMENT_RELATIVE of the coefficient scale.
 */
const DISAGREEMENT_LOG_LIKELIHOOD = 3;
/**
 * Starts tried before the "best found twice" rule may stop the search: the moment warm start
 * and both seeded starts, which between them cover slope, offset and location differences.
 */
const MIN_STARTS = 3;
/**
 * Two briefly refined starts count as the same fit when their coefficients are within this
 * fraction of the coefficient scale: looser than DISAGREEMENT_RELATIVE because short runs
 * have not converged yet.
 */
const SAME_FIT_RELATIVE = 0.05;
export const DISAGREEMENT_RELATIVE = 0.01;

const MODELS: readonly MixtureModel[] = ["plain", "joint"];

interface Settings {
  k: number;
  seed: number;
  intercept: boolean;
  model: MixtureModel;
  restarts: number;
  tolerance: number;
  maxIterations: number;
  background: boolean;
}

interface Candidate {
  method: string;
  params: MixtureParameters;
  logLikelihood: number;
}

interface EmRun {
  logLikelihood: number;
  iterations: number;
  converged: boolean;
  reseeds: number;
  varianceBoundActive: boolean;
}

/**
 * Fits a K-component mixture of linear regressions (DeSarbo & Cron 1988; De Veaux 1989) by EM
 * (Dempster, Laird & Rubin 1977). The driver is the only place that loops over phases:
 *
 *   1. starts on the data or, for large inputs, on a seeded subsample: a previous fit, the
 *      moment warm start when available, residual and location k-means++ seeding, random
 *      partitions; each refined briefly (SHORT_ITERATIONS);
 *   2. the best by log-likelihood refined fully; when no two starts agreed, split-and-merge
 *      moves and peeling of the best-determined component; on large inputs an intermediate
 *      subsample, then the full data;
 *   3. exact peeling when some components fit their rows exactly and others do not; on
 *      noiseless data, the hard-assignment polish (alternating least squares by QR);
 *   4. memberships, labels, BIC, ICL, canonical order, reports and warnings.
 *
 * One generator made from options.seed feeds every random step.
 */
export function fitMixture(data: RegressionData, options: MixtureOptions): MixtureFit {
  // Values far from 1 (beyond 1e100, or a column's size below 1e-100) are fitted scaled.
  return withInternalScaling(data, options, fitWithBackgroundSetting);
}

function fitWithBackgroundSetting(data: RegressionData, options: MixtureOptions): MixtureFit {
  if (options.background !== "auto") return fitMixtureAtDepth(data, options, 0);
  // "auto": the background only when the fit without it shows rows far from every regression.
  const plain = fitMixtureAtDepth(data, { ...options, background: false }, 0);
  if (!backgroundMayHelp(data, plain)) return plain;
  return chooseBackground(plain, fitMixtureAtDepth(data, { ...options, background: true }, 0));
}

/**
 * Split-and-merge and peeling call the fit recursively on subsets of rows; `depth` counts the
 * nesting so the recursion stays bounded: splits only at the top level, noisy peeling down to
 * MAX_PEELING_DEPTH (exact peeling always lowers K, so it ends by itself).
 */
function fitMixtureAtDepth(data: RegressionData, options: MixtureOptions, depth: number, inherited?: Float64Array): MixtureFit {
  const settings = checkInput(data, options);
  const { k, intercept, model } = settings;
  const joint = model === "joint";
  const full = withBackground(createWorkspace(data, k, intercept, joint), settings.background);
  const guards: Guards = {
    minimumSize: full.q + ROWS_BEYOND_COEFFICIENTS,
    varianceFloor: Math.max(VARIANCE_FLOOR_RELATIVE * full.yVariance, Number.MIN_VALUE * 1e20),
    varianceRatioBound: VARIANCE_RATIO_BOUND,
    covarianceRidge: COVARIANCE_RIDGE,
  };
  if (k === 1) return fitSingleComponent(full, settings, guards);

  const random = createRandom(settings.seed);
  const signal = options.signal;
  const warnings: string[] = [];
  const subsampleSize = Math.max(SUBSAMPLE_MIN_ROWS, SUBSAMPLE_ROWS_PER_PARAMETER * k * full.q);
  const subsampleRows = full.n > 2 * subsampleSize ? sampleIndices(full.n, subsampleSize, random) : null;
  const working = subsampleRows ? withBackground(createWorkspace(data, k, intercept, joint, subsampleRows), settings.background, full) : full;

  // 1. Starts, each refined briefly on the working rows. The remaining starts are skipped once
  // a start fits every row to rounding level (noiseless data: it cannot be beaten), or once
  // the best fit so far has been reached from two different starts.
  const candidates: Candidate[] = [];
  let enoughStarts = false;
  let foundTwice = false;
  const tryStart = (method: string, makeParams: () => MixtureParameters | null, iterations = SHORT_ITERATIONS): void => {
    if (enoughStarts) return;
    checkSignal(signal);
    let params = makeParams();
    if (!params) return;
    let run = runEm(working, params, guards, SHORT_ITERATIONS, settings.tolerance, random, signal, null);
    const headingForExact = (): boolean => !isNoiseless(params!, working) && smallestComponentVariance(params!) <= NEAR_EXACT_VARIANCE_RELATIVE * working.yVariance;
    // A start heading for an exact fit (some variance already far below the data's): concentration
    // steps from each component find the exact ones in a few cheap steps; failing that, EM
    // may run longer, since reaching the exact fit ends the search.
    let concentrated: ReturnType<typeof concentrateComponents> = null;
    if (headingForExact()) concentrated = concentrateComponents(working, params, guards);
    if (!concentrated && iterations > SHORT_ITERATIONS && !run.converged && headingForExact()) {
      run = runEm(working, params, guards, iterations - SHORT_ITERATIONS, settings.tolerance, random, signal, null);
    }
    if (!Number.isFinite(run.logLikelihood)) return;
    // Heading for an exact fit but not there yet: EM's approach to hard memberships is slow
    // (linear, rate set by the smallest variance ratio) where hard assignment lands in a few
    // steps. A start that then fits every row exactly cannot be beaten.
    let peelFrom = params;
    if (concentrated && concentrated.exactComponents < k) {
      // Some components exact, others not: peeled below.
      peelFrom = concentrated.params;
    } else if (concentrated || headingForExact()) {
      const exact = exactFitByHardAssignment(working, concentrated ? concentrated.params : params, guards);
      if (exact) {
        params = exact;
        peelFrom = params;
        run = runEm(working, params, guards, SHORT_ITERATIONS, settings.tolerance, random, signal, null);
      } else {
        // Not every row exact, but the components EM approaches only slowly can be snapped
        // onto exact fits of their own rows: those are then peeled below.
        peelFrom = snapNearExactComponents(working, params, guards) ?? params;
      }
    }
    const candidate: Candidate = { method, params, logLikelihood: run.logLikelihood };
    candidates.push(candidate);
    if (!isNoiseless(params, working)) {
      // When some components are already exact, peel them and fit the rest: decisive on
      // noiseless data (peelExactComponents returns null at once when none is exact).
      const peeled = peelExactComponents(data, working, peelFrom, guards, settings, random, depth, subsampleRows, fitMixtureAtDepth);
      if (peeled) {
        const peeledRun = runEm(working, peeled, guards, settings.maxIterations, settings.tolerance, random, signal, null);
        if (peeledRun.logLikelihood > candidate.logLikelihood) {
          candidate.params = peeled;
          candidate.logLikelihood = peeledRun.logLikelihood;
          candidate.method = `${method}+exact-peeling`;
        }
      }
    }
    if (isNoiseless(candidate.params, working)) enoughStarts = true;
    else if (candidates.length >= MIN_STARTS && bestFoundTwice(candidates)) {
      enoughStarts = true;
      foundTwice = true;
    }
  };
  // A parent fit's estimate of these components (exact peeling passes the ones it has not
  // found exactly yet) comes first: it is often one short refinement away from the answer.
  if (inherited && inherited.length === k * working.q) {
    tryStart("inherited", () => parametersFromCoefficients(working, inherited, guards), MOMENT_START_ITERATIONS);
  }
  const previous = options.previous;
  if (previous && previous.k === k && previous.p === data.p && previous.intercept === intercept) {
    tryStart("previous", () => parametersFromFit(working, previous, guards));
  }
  let moment: ReturnType<typeof momentWarmStart> = null;
  tryStart("moment-subspace", () => {
    const momentRows = Math.max(MOMENT_MIN_ROWS, MOMENT_ROWS_PER_PARAMETER * k * working.q);
    let momentData: RegressionData = { x: working.predictors, y: working.y, n: working.n, p: working.p };
    if (working.n > 2 * momentRows) momentData = selectRows(momentData, sampleIndices(working.n, momentRows, random));
    moment = momentWarmStart(momentData, k, intercept, random);
    if (!moment) return null;
    const coefficients = new Float64Array(k * working.q);
    moment.coefficients.forEach((vector, c) => coefficients.set(vector, c * working.q));
    return parametersFromCoefficients(working, coefficients, guards);
  }, MOMENT_START_ITERATIONS);
  tryStart("residual-seeding", () => parametersFromLabels(working, residualSeedingLabels(working, random), guards, random));
  tryStart("location-seeding", () => parametersFromLabels(working, locationSeedingLabels(working, random), guards, random));
  // A peeling sub-fit of many components (it has the parent's estimate as its first start)
  // skips the random partitions: on noiseless data they essentially never reach the exact fit
  // of four or more components in tens of dimensions, while the parent refines the combined
  // fit on all rows whatever the sub-fit returns (and peels again when it turns exact).
  const randomPartitions = !inherited || k < PEELED_COMPONENTS_WITHOUT_PARTITIONS ? settings.restarts : 0;
  for (let r = 0; r < randomPartitions; r++) {
    tryStart("random-partition", () => parametersFromLabels(working, randomPartitionLabels(working.n, k, random), guards, random));
  }
  if (candidates.length === 0) {
    throw new SkeinError("numeric", "Every start failed: the predictors are (nearly) collinear within the groups tried. Remove a predictor that repeats others, or use fewer components.");
  }
  candidates.sort((a, b) => b.logLikelihood - a.logLikelihood);

  // 2. Full refinement of the best start; when the runner-up is close in likelihood but far in
  // coefficients, refine it too so that the comparison is between converged fits.
  let best = candidates[0];
  let disagreement = 0;
  const workingIterations = settings.maxIterations;
  const path: number[] = [];
  const fullPath = working === full ? path : null;
  let run = runEm(working, best.params, guards, workingIterations, settings.tolerance, random, signal, fullPath);
  best.logLikelihood = run.logLikelihood;
  const runnerUp = candidates.find((c) => c !== best && c.logLikelihood >= best.logLikelihood - DISAGREEMENT_LOG_LIKELIHOOD && coefficientDistance(c.params, best.params) > DISAGREEMENT_RELATIVE);
  if (runnerUp) {
    const other = runEm(working, runnerUp.params, guards, workingIterations, settings.tolerance, random, signal, null);
    runnerUp.logLikelihood = other.logLikelihood;
    if (runnerUp.logLikelihood > best.logLikelihood) {
      // The runner-up overtook: its refinement is the one reported.
      const held = best;
      best = runnerUp;
      path.length = 0;
      run = runEm(working, best.params, guards, workingIterations, settings.tolerance, random, signal, fullPath);
      best.logLikelihood = run.logLikelihood;
      disagreement = coefficientDistance(held.params, best.params);
      if (held.logLikelihood < best.logLikelihood - DISAGREEMENT_LOG_LIKELIHOOD) disagreement = 0;
    } else if (runnerUp.logLikelihood >= best.logLikelihood - DISAGREEMENT_LOG_LIKELIHOOD) {
      disagreement = coefficientDistance(runnerUp.params, best.params);
    }
  }
  const startsDisagree = disagreement > DISAGREEMENT_RELATIVE;

  // 2b. Split and merge, when no two starts agreed on the best fit: a component that holds two
  // groups shows as one with a large noise SD; split it with a two-component fit of its rows
  // and drop the component the data need least.
  let splits = 0;
  if (depth === 0 && !foundTwice && !isNoiseless(best.params, working)) {
    for (let round = 0; round < MAX_SPLIT_ROUNDS; round++) {
      // Candidates in order of unexplained variance n_k σ_k²; the first that raises ln L wins.
      const ranked = Array.from({ length: k }, (_, c) => c).sort((a, b) => best.params.weights[b] * best.params.variances[b] - best.params.weights[a] * best.params.variances[a] || a - b);
      let improved = false;
      for (const split of ranked.slice(0, SPLIT_CANDIDATES)) {
        checkSignal(signal);
        const proposal = splitAndMerge(data, working, best.params, split, guards, settings, random, subsampleRows, depth, fitMixtureAtDepth);
        if (!proposal) continue;
        // A brief run first; only a proposal already ahead is refined fully.
        const briefRun = runEm(working, proposal, guards, 2 * SHORT_ITERATIONS, settings.tolerance, random, signal, null);
        if (!(briefRun.logLikelihood > best.logLikelihood + SPLIT_MIN_GAIN)) continue;
        const proposalRun = briefRun.converged ? briefRun : runEm(working, proposal, guards, settings.maxIterations, settings.tolerance, random, signal, null);
        best.params = proposal;
        best.logLikelihood = proposalRun.logLikelihood;
        best.method = "split-and-merge";
        run = proposalRun;
        if (fullPath) fullPath.push(proposalRun.logLikelihood);
        splits++;
        improved = true;
        break;
      }
      if (!improved) break;
    }
  }

  // 2c. When no two starts agreed on the best fit, try peeling: keep the best-determined
  // component (smallest noise SD), set aside the rows within PEEL_WIDTH of its SDs and fit the
  // other K − 1 components afresh on the rest (recursively, so the peeling cascades).
  if (depth < MAX_PEELING_DEPTH && !foundTwice && !isNoiseless(best.params, working)) {
    const order = Array.from({ length: k }, (_, c) => c).sort((a, b) => best.params.variances[a] - best.params.variances[b] || a - b);
    for (const keep of order.slice(0, PEEL_CANDIDATES)) {
      checkSignal(signal);
      const proposal = peelComponent(data, working, best.params, keep, guards, settings, random, subsampleRows, depth, fitMixtureAtDepth);
      if (!proposal) continue;
      const proposalRun = runEm(working, proposal, guards, settings.maxIterations, settings.tolerance, random, signal, null);
      if (!(proposalRun.logLikelihood > best.logLikelihood + SPLIT_MIN_GAIN)) continue;
      best.params = proposal;
      best.logLikelihood = proposalRun.logLikelihood;
      best.method = "peeling";
      run = proposalRun;
      if (fullPath) fullPath.push(proposalRun.logLikelihood);
      break;
    }
  }

  let params = best.params;
  let subsampleIterations = 0;
  // Whether the full workspace's memberships are those of `params` (EM ends with an E-step at
  // its final parameters), so the reports need not compute them again: a full-data pass saved
  // on large inputs. Anything below that changes the memberships clears it.
  let membershipsCurrent = false;
  if (working !== full) {
    subsampleIterations = run.iterations;
    // On very large inputs, an intermediate subsample first: EM's steps shrink the distance to
    // the full-data optimum by a fixed factor, so starting the full-data iterations from a fit on
    // n / INTERMEDIATE_FRACTION rows saves more full-data iterations than the stage costs.
    if (full.n > INTERMEDIATE_FRACTION * 2 * working.n) {
      const intermediate = withBackground(createWorkspace(data, k, intercept, joint, sampleIndices(full.n, Math.floor(full.n / INTERMEDIATE_FRACTION), random)), settings.background, full);
      const intermediateRun = runEm(intermediate, params, guards, settings.maxIterations, settings.tolerance, random, signal, null);
      subsampleIterations += intermediateRun.iterations;
    }
    // Finish on all rows.
    const fromSubsample = run;
    run = runEm(full, params, guards, settings.maxIterations, settings.tolerance, random, signal, path);
    membershipsCurrent = true;
    run.reseeds += fromSubsample.reseeds;
    run.varianceBoundActive ||= fromSubsample.varianceBoundActive;
  }

  // 3a. Partly noiseless fit: some components fit their rows exactly, others do not. Set the
  // exactly fitted rows aside and fit the remaining components on the rest (peeling).
  let logLikelihood = run.logLikelihood;
  let peeled = 0;
  for (let round = 0; round < MAX_PEELING_ROUNDS; round++) {
    const peeledParams = peelExactComponents(data, full, params, guards, settings, random, depth, null, fitMixtureAtDepth);
    if (!peeledParams) break;
    membershipsCurrent = false;
    const peeledRun = runEm(full, peeledParams, guards, settings.maxIterations, settings.tolerance, random, signal, null);
    if (!(peeledRun.logLikelihood > logLikelihood)) break;
    params = peeledParams;
    logLikelihood = peeledRun.logLikelihood;
    // The peeled refinement restarts from a new point, so only its end joins the path (it is
    // above the path's last value, which keeps the reported path non-decreasing).
    run = { ...peeledRun, iterations: run.iterations + peeledRun.iterations, reseeds: run.reseeds + peeledRun.reseeds };
    path.push(peeledRun.logLikelihood);
    best.method = "exact-peeling";
    peeled++;
  }

  // 3b. Noiseless data: finish with exact fits on the hard partition.
  let polished = false;
  if (isNoiseless(params, full)) {
    membershipsCurrent = false;
    const polishedParams = hardAssignmentPolish(full, params, guards);
    if (polishedParams) {
      computeResiduals(full, polishedParams);
      const polishedLogLikelihood = eStep(full, polishedParams);
      if (polishedLogLikelihood >= logLikelihood - 1e-9 * Math.abs(logLikelihood)) {
        params = polishedParams;
        logLikelihood = polishedLogLikelihood;
        polished = true;
      } else {
        computeResiduals(full, params);
        logLikelihood = eStep(full, params);
      }
    } else {
      computeResiduals(full, params);
      logLikelihood = eStep(full, params);
    }
  }

  // 4. Reports.
  // The warm start is trusted when the best starts agree and either the moment certificate
  // shrank enough or the winning fit is exact on every row (which no start can improve on).
  // When split-and-merge or noisy peeling beat every start, the starts missed the fit
  // reported: not trusted either, unless that fit is exact.
  const momentResult = moment as ReturnType<typeof momentWarmStart>;
  const noiseless = isNoiseless(params, full);
  const momentConverged = momentResult === null || momentResult.converged || noiseless;
  const startsMissed = (best.method === "split-and-merge" || best.method === "peeling") && !noiseless;
  const warmStart: WarmStartReport = {
    converged: !startsDisagree && momentConverged && !startsMissed,
    method: best.method,
    certificate: momentResult ? momentResult.certificate : NaN,
    startsTried: candidates.length,
    disagreement,
  };
  const refinement: RefinementReport = {
    converged: run.converged,
    iterations: run.iterations,
    logLikelihoodPath: path,
    reseeds: run.reseeds,
    subsampleRows: working === full ? 0 : working.n,
    subsampleIterations,
    polished,
    peeled,
    splits,
  };
  if (!run.converged) {
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
  if (largestVariance > guards.varianceFloor * 1.000001 && smallestVariance <= VARIANCE_RATIO_BOUND * largestVariance * 1.000001) {
    warnings.push("One component's noise SD is held at a thousandth of another's, the smallest Skein allows: that component may be fitting a few rows almost exactly. Try fewer components.");
  }
  return assembleFit(full, params, logLikelihood, settings, warmStart, refinement, warnings, guards, undefined, membershipsCurrent);
}

/** EM iterations from `params` (updated in place) until the relative change drops below tolerance. */
function runEm(ws: MixtureWorkspace, params: MixtureParameters, guards: Guards, maxIterations: number, tolerance: number, random: Random, signal: MixtureOptions["signal"], path: number[] | null): EmRun {
  computeResiduals(ws, params);
  let logLikelihood = eStep(ws, params);
  let converged = false;
  let iterations = 0;
  let reseeds = 0;
  let varianceBoundActive = false;
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
    // Convergence test: relative change of ln L, with n as the floor of the scale so that a
    // log-likelihood near 0 does not make the test impossibly strict.
    if (reseeded.length === 0 && Math.abs(change) <= tolerance * Math.max(Math.abs(next), ws.n)) {
      converged = true;
      break;
    }
  }
  return { logLikelihood, iterations, converged, reseeds, varianceBoundActive };
}

/**
 * Alternating least squares (Späth 1979) from `params`' coefficients on the working rows;
 * parameters when it ends with every row fitted to rounding level (EXACT_FIT_RELATIVE of
 * SD(y)), else null.
 */
function exactFitByHardAssignment(ws: MixtureWorkspace, params: MixtureParameters, guards: Guards): MixtureParameters | null {
  const { n, q, k } = ws;
  const start: Float64Array[] = [];
  for (let c = 0; c < k; c++) start.push(params.coefficients.slice(c * q, c * q + q));
  const fit = alternatingLeastSquares(ws.design, n, q, ws.y, start, EXACT_POLISH_ITERATIONS, EXACT_FIT_RELATIVE * Math.sqrt(ws.yVariance), guards.minimumSize);
  if (fit.exactRows < n) return null;
  const coefficients = new Float64Array(k * q);
  fit.coefficients.forEach((c, index) => coefficients.set(c, index * q));
  return parametersFromCoefficients(ws, coefficients, guards);
}

/**
 * Components whose noise variance is already far below the data's (at most
 * NEAR_EXACT_VARIANCE_RELATIVE of var(y)) refitted by least squares on the rows within
 * SNAP_WIDTH of their SDs, SNAP_ROUNDS times (trimmed least squares): on noiseless data those
 * rows are the component's own, so the refit is exact to rounding, which EM approaches only
 * linearly. Returns the snapped coefficients as parameters, or null when no component qualifies.
 */
function snapNearExactComponents(ws: MixtureWorkspace, params: MixtureParameters, guards: Guards): MixtureParameters | null {
  const { n, q, k } = ws;
  const coefficients = params.coefficients.slice();
  let snapped = false;
  for (let c = 0; c < k; c++) {
    if (!(params.variances[c] <= NEAR_EXACT_VARIANCE_RELATIVE * ws.yVariance)) continue;
    let width = SNAP_WIDTH * Math.sqrt(params.variances[c]);
    for (let round = 0; round < SNAP_ROUNDS; round++) {
      const rows: number[] = [];
      for (let i = 0; i < n; i++) {
        let fitted = 0;
        for (let j = 0; j < q; j++) fitted += ws.design[i * q + j] * coefficients[c * q + j];
        if (Math.abs(ws.y[i] - fitted) <= width) rows.push(i);
      }
      // Any q rows are fitted exactly by some vector: only clearly more identify the component.
      if (rows.length < 2 * q) break;
      const chosen = gatherRows(ws.design, q, ws.y, rows);
      let fit: ReturnType<typeof leastSquares>;
      try {
        fit = leastSquares(chosen.matrix, rows.length, q, chosen.y);
      } catch {
        break;
      }
      coefficients.set(fit.coefficients, c * q);
      snapped = true;
      width = Math.max(SNAP_WIDTH * fit.mlSigma, EXACT_FIT_RELATIVE * Math.sqrt(ws.yVariance));
    }
  }
  return snapped ? parametersFromCoefficients(ws, coefficients, guards) : null;
}

/**
 * Concentration steps (Rousseeuw & Van Driessen 2006; see mixture/concentrationSteps.ts)
 * from every component of `params` on the working rows, with subsets of half the rows the
 * component holds (at least 1.5q): the components that end fitting at least 2q rows to
 * rounding level (the exact-peeling criterion) take the exact coefficients. Returns the
 * parameters and how many components turned exact, or null when none did.
 */
function concentrateComponents(ws: MixtureWorkspace, params: MixtureParameters, guards: Guards): { params: MixtureParameters; exactComponents: number } | null {
  const { n, q, k } = ws;
  const steps = new ConcentrationSteps(ws.design, n, q, ws.y);
  const coefficients = params.coefficients.slice();
  const tolerance = EXACT_FIT_RELATIVE * Math.sqrt(ws.yVariance);
  let found = 0;
  for (let c = 0; c < k; c++) {
    const subset = Math.max(Math.ceil(CONCENTRATION_MIN_SUBSET * q), Math.floor(CONCENTRATION_SUBSET_FRACTION * params.weights[c] * n));
    const result = steps.run(params.coefficients.subarray(c * q, c * q + q), subset, CONCENTRATION_STEPS, tolerance);
    if (result.exactRows < 2 * q) continue;
    coefficients.set(result.coefficients, c * q);
    found++;
  }
  return found > 0 ? { params: parametersFromCoefficients(ws, coefficients, guards), exactComponents: found } : null;
}

/** A start from a hard partition: memberships 0/1, then one M-step. */
function parametersFromLabels(ws: MixtureWorkspace, labels: Int32Array, guards: Guards, random: Random): MixtureParameters {
  const params = createParameters(ws.k, ws.q, ws.p, ws.joint);
  setHardMemberships(ws, labels);
  // Rows the partition gives no component: the worst-fitted under no fit are any rows, so
  // re-seeding here starts from rows drawn at random.
  ws.rowLogLikelihood.fill(0);
  const report = mStepCoefficients(ws, params, guards);
  for (const c of report.collapsed) reseedComponent(ws, params, c, guards, random);
  computeResiduals(ws, params);
  mStepVariances(ws, params, guards, report.collapsed);
  return params;
}

/** A start from a previous fit's parameters (same K, predictors and intercept). */
function parametersFromFit(ws: MixtureWorkspace, previous: MixtureFit, guards: Guards): MixtureParameters {
  const coefficients = new Float64Array(ws.k * ws.q);
  previous.components.forEach((component, c) => coefficients.set(component.coefficients.subarray(component.coefficients.length - ws.q), c * ws.q));
  const params = parametersFromCoefficients(ws, coefficients, guards);
  previous.components.forEach((component, c) => {
    if (component.weight > 0) params.weights[c] = component.weight;
    if (component.sigma > 0) params.variances[c] = Math.max(component.sigma * component.sigma, guards.varianceFloor);
    if (ws.joint && component.xMean && component.xCovariance && params.xMeans && params.xCovariances) {
      params.xMeans.set(component.xMean, c * ws.p);
      params.xCovariances.set(component.xCovariance, c * ws.p * ws.p);
    }
  });
  if (ws.joint) factorPredictorCovariances(params);
  return params;
}

/**
 * K = 1 is ordinary least squares: the QR core gives the coefficients, σ = sqrt(RSS/n) and
 * ln L = −n/2 (ln(2π σ²) + 1), exactly the single-regression values.
 */
function fitSingleComponent(ws: MixtureWorkspace, settings: Settings, guards: Guards): MixtureFit {
  const fit = leastSquares(ws.design, ws.n, ws.q, ws.y, { intercept: settings.intercept });
  const params = createParameters(1, ws.q, ws.p, ws.joint);
  params.weights[0] = 1;
  params.coefficients.set(fit.coefficients);
  params.variances[0] = fit.mlSigma * fit.mlSigma;
  if (ws.background) {
    // With a background the one regression is a weighted fit: EM from least squares.
    const run = runEm(ws, params, guards, settings.maxIterations, settings.tolerance, createRandom(settings.seed), undefined, null);
    const warmStart: WarmStartReport = { converged: true, method: "single-component", certificate: NaN, startsTried: 1, disagreement: 0 };
    const refinement: RefinementReport = { converged: run.converged, iterations: run.iterations, logLikelihoodPath: [run.logLikelihood], reseeds: run.reseeds };
    const warnings = run.converged ? [] : [`The fit stopped after ${run.iterations} iterations before the log-likelihood settled. Raise max_iterations or loosen tolerance.`];
    return assembleFit(ws, params, run.logLikelihood, settings, warmStart, refinement, warnings, guards, undefined, true);
  }
  ws.memberships.fill(1);
  ws.sizes[0] = ws.n;
  let logLikelihood = fit.logLikelihood;
  if (ws.joint) {
    mStepPredictorModel(ws, params, guards);
    // Add the x part of the likelihood; the y part stays the exact least-squares value.
    const yOnly = createParameters(1, ws.q, ws.p, false);
    computeResiduals(ws, params);
    const both = eStep(ws, params);
    ws.joint = false;
    yOnly.variances[0] = params.variances[0];
    yOnly.coefficients.set(params.coefficients);
    const yPart = eStep(ws, yOnly);
    ws.joint = true;
    logLikelihood += both - yPart;
  }
  ws.memberships.fill(1);
  const warmStart: WarmStartReport = { converged: true, method: "single-component", certificate: NaN, startsTried: 0, disagreement: 0 };
  const refinement: RefinementReport = { converged: true, iterations: 0, logLikelihoodPath: [logLikelihood] };
  return assembleFit(ws, params, logLikelihood, settings, warmStart, refinement, [], guards, fit.mlSigma);
}

function assembleFit(
  ws: MixtureWorkspace,
  unordered: MixtureParameters,
  logLikelihood: number,
  settings: Settings,
  warmStart: WarmStartReport,
  refinement: RefinementReport,
  warnings: string[],
  guards: Guards,
  exactSigma?: number,
  membershipsCurrent = false,
): MixtureFit {
  const { n, p, q, k } = ws;
  // Memberships from the reported parameters themselves, in one more E-step pass, unless the
  // driver knows the workspace holds exactly those: it may still hold the memberships of a
  // rejected proposal or of the same components in another order (restructuring moves and
  // sub-fits reorder components).
  if (!membershipsCurrent) {
    computeResiduals(ws, unordered);
    eStep(ws, unordered);
  }
  const order = canonicalOrder(unordered);
  const params = permuteParameters(unordered, order);
  const memberships = new Float64Array(n * k);
  const labels = new Int32Array(n);
  let entropy = 0;
  for (let i = 0; i < n; i++) {
    let best = 0;
    for (let j = 0; j < k; j++) {
      const tau = ws.memberships[i * k + order[j]];
      memberships[i * k + j] = tau;
      if (tau > memberships[i * k + best]) best = j;
      // EN = −Σ τ ln τ (Biernacki, Celeux & Govaert 2000), with 0 ln 0 = 0.
      if (tau > 0) entropy -= tau * Math.log(tau);
    }
    labels[i] = best;
  }
  const components: MixtureComponent[] = [];
  for (let j = 0; j < k; j++) {
    const coefficients = new Float64Array(p + 1);
    coefficients.set(params.coefficients.subarray(j * q, j * q + q), settings.intercept ? 0 : 1);
    const component: MixtureComponent = {
      weight: params.weights[j],
      sigma: exactSigma !== undefined ? exactSigma : Math.sqrt(params.variances[j]),
      coefficients,
    };
    if (params.xMeans && params.xCovariances) {
      component.xMean = params.xMeans.slice(j * p, j * p + p);
      component.xCovariance = params.xCovariances.slice(j * p * p, (j + 1) * p * p);
    }
    components.push(component);
  }
  // ν = K(q + 2) − 1: q coefficients and one variance per component, K − 1 free weights;
  // the joint model adds a mean (p) and a covariance (p(p + 1)/2) per component.
  let parameterCount = k * (q + 2) - 1;
  if (settings.model === "joint") parameterCount += k * (p + (p * (p + 1)) / 2);
  // The background adds its weight π₀; its flat density is fixed by the data's range.
  if (ws.background) parameterCount += 1;
  // BIC = −2 ln L + ν ln n (Schwarz 1978); ICL = BIC + 2 EN (Biernacki, Celeux & Govaert 2000).
  const bic = -2 * logLikelihood + parameterCount * Math.log(n);
  const icl = bic + 2 * entropy;
  const smallest = Math.min(...components.map((c) => c.weight));
  if (k > 1 && smallest * n < 2 * guards.minimumSize) {
    warnings.push(`Small component: the smallest component holds only about ${Math.round(smallest * n)} rows for ${q} coefficients, so its estimates are unreliable. Use fewer components or add rows.`);
  }
  if (k > 1 && n < 5 * k * q) {
    warnings.push(`There are only ${(n / (k * q)).toFixed(1)} rows per coefficient per component; components need several times more to be found reliably. Add rows or use fewer components or predictors.`);
  }
  return {
    k,
    n,
    p,
    q,
    intercept: settings.intercept,
    model: settings.model,
    components,
    memberships,
    labels,
    logLikelihood,
    parameterCount,
    bic,
    icl,
    warmStart,
    refinement,
    warnings,
    seed: settings.seed,
    ...(ws.background ? { background: { weight: ws.background.weight, logDensity: ws.background.logDensity, memberships: ws.background.memberships.slice() } } : {}),
  };
}

/** The workspace with a background component attached when the fit asks for one, sharing `full`'s flat density. */
function withBackground(ws: MixtureWorkspace, background: boolean, full?: MixtureWorkspace): MixtureWorkspace {
  if (background) ws.background = createBackground(ws, full?.background?.logDensity);
  return ws;
}

/** Whether the best candidate's fit was also reached by another start (same ln L, same coefficients). */
function bestFoundTwice(candidates: Candidate[]): boolean {
  let best = candidates[0];
  for (const c of candidates) if (c.logLikelihood > best.logLikelihood) best = c;
  return candidates.some(
    (c) => c !== best && c.logLikelihood >= best.logLikelihood - DISAGREEMENT_LOG_LIKELIHOOD && coefficientDistance(c.params, best.params) <= SAME_FIT_RELATIVE,
  );
}

function smallestComponentVariance(params: MixtureParameters): number {
  let smallest = Infinity;
  for (let c = 0; c < params.k; c++) smallest = Math.min(smallest, params.variances[c]);
  return smallest;
}

function isNoiseless(params: MixtureParameters, ws: MixtureWorkspace): boolean {
  for (let c = 0; c < params.k; c++) if (!(params.variances[c] <= NOISELESS_VARIANCE_RELATIVE * ws.yVariance)) return false;
  return true;
}

/**
 * Largest distance between matched components' coefficients, relative to the largest
 * coefficient norm of either fit. Components are matched greedily, closest pair first
 * (exact for well-separated fits, which is when the distance matters).
 */
function coefficientDistance(a: MixtureParameters, b: MixtureParameters): number {
  const { k, q } = a;
  const distance = (i: number, j: number): number => {
    let s = 0;
    for (let l = 0; l < q; l++) s += (a.coefficients[i * q + l] - b.coefficients[j * q + l]) ** 2;
    return Math.sqrt(s);
  };
  let scale = 0;
  for (let c = 0; c < k; c++) {
    let na = 0;
    let nb = 0;
    for (let l = 0; l < q; l++) {
      na += a.coefficients[c * q + l] ** 2;
      nb += b.coefficients[c * q + l] ** 2;
    }
    scale = Math.max(scale, Math.sqrt(na), Math.sqrt(nb));
  }
  const pairs: [number, number, number][] = [];
  for (let i = 0; i < k; i++) for (let j = 0; j < k; j++) pairs.push([distance(i, j), i, j]);
  pairs.sort((x, y) => x[0] - y[0]);
  const usedA = new Set<number>();
  const usedB = new Set<number>();
  let worst = 0;
  for (const [d, i, j] of pairs) {
    if (usedA.has(i) || usedB.has(j)) continue;
    usedA.add(i);
    usedB.add(j);
    worst = Math.max(worst, d);
  }
  return scale > 0 ? worst / scale : 0;
}

function checkSignal(signal: MixtureOptions["signal"]): void {
  if (signal?.aborted) throw new SkeinError("cancelled", "The fit was cancelled before it finished.");
}

/**
 * K components with q coefficients each need at least k·(q + 1) rows (each component one row
 * more than its coefficients); fewer is a bad-input error saying so. Hosts call it before
 * starting work, so the message comes before any fitting.
 */
export function checkRowsForComponents(n: number, q: number, k: number): void {
  const needed = k * (q + ROWS_BEYOND_COEFFICIENTS);
  if (n < needed) {
    throw new SkeinError("bad-input", `k = ${k} components with ${q} coefficient${q === 1 ? "" : "s"} each need at least ${needed} rows (k·(coefficients + 1)); the data has ${n}. Use fewer components or predictors, or add rows.`);
  }
}

/** Checks every option once, at the entrance, with messages naming the setting. */
function checkInput(data: RegressionData, options: MixtureOptions): Settings {
  const { n, p } = data;
  if (!Number.isInteger(n) || n < 1 || !Number.isInteger(p) || p < 0 || data.y.length < n || data.x.length < n * p) {
    throw new SkeinError("bad-input", `The data do not fit together: expected ${n} outcome values and ${n} x ${p} predictor values. Select an outcome column and predictor columns of the same height.`);
  }
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(data.y[i])) throw new SkeinError("bad-input", `Outcome row ${i + 1} is ${data.y[i]}; every outcome value must be a finite number. Remove or fix that row.`);
  }
  for (let i = 0; i < n * p; i++) {
    if (!Number.isFinite(data.x[i])) throw new SkeinError("bad-input", `Predictor value in row ${Math.floor(i / p) + 1}, column ${(i % p) + 1} is ${data.x[i]}; predictors must be finite numbers. Remove or fix that row.`);
  }
  const k = options.k;
  if (typeof k !== "number" || !Number.isInteger(k) || k < 1) {
    throw new SkeinError("bad-input", `k (the number of components) must be a whole number of 1 or more; received ${String(k)}. Set k to 1, 2, 3, ...`);
  }
  const model = options.model ?? "plain";
  if (!MODELS.includes(model)) {
    throw new SkeinError("bad-input", `model must be one of ${MODELS.map((m) => `"${m}"`).join(", ")}; received "${String(model)}". Use "plain" (regression of y on x per component) or "joint" (each component also models x).`);
  }
  const intercept = options.intercept ?? true;
  if (typeof intercept !== "boolean") throw new SkeinError("bad-input", `intercept must be yes or no (true or false); received ${String(intercept)}.`);
  const q = intercept ? p + 1 : p;
  if (q < 1) throw new SkeinError("bad-input", "There is nothing to fit: no predictors and no intercept. Add a predictor column or turn the intercept on.");
  checkRowsForComponents(n, q, k);
  const seed = options.seed ?? DEFAULT_SEED;
  if (typeof seed !== "number" || !Number.isFinite(seed)) throw new SkeinError("bad-input", `seed must be a finite number; received ${String(seed)}.`);
  const restarts = options.restarts ?? DEFAULT_RESTARTS;
  if (!Number.isInteger(restarts) || restarts < 0) throw new SkeinError("bad-input", `restarts must be a whole number of 0 or more; received ${String(restarts)}.`);
  const tolerance = options.tolerance ?? DEFAULT_TOLERANCE;
  if (typeof tolerance !== "number" || !(tolerance > 0) || !Number.isFinite(tolerance)) throw new SkeinError("bad-input", `tolerance must be a positive number such as 1e-8; received ${String(tolerance)}.`);
  const maxIterations = options.maxIterations ?? DEFAULT_MAX_ITERATIONS;
  if (!Number.isInteger(maxIterations) || maxIterations < 1) throw new SkeinError("bad-input", `max_iterations must be a whole number of 1 or more; received ${String(maxIterations)}.`);
  const background = options.background ?? false;
  if (typeof background !== "boolean") throw new SkeinError("bad-input", `background must be yes, no or auto; received ${String(background)}.`);
  return { k, seed, intercept, model, restarts, tolerance, maxIterations, background };
}
