import { stopOnAllRows } from "./unwantedFitStop";
import { SkeinError, checkSignal } from "../errors";
import type { MixtureFit, RegressionData } from "../mixtureTypes";
import { sampleIndices, type Random } from "../random";
import { selectRows } from "../rowSubset";
import { momentWarmStart, type MomentWarmStart } from "../warmStart/momentWarmStart";
import type { Candidate, FitContext } from "./fitContext";
import { createParameters, type MixtureParameters } from "./mixtureParameters";
import type { MixtureWorkspace } from "./mixtureWorkspace";
import { computeResiduals } from "./eStep";
import { factorPredictorCovariances, mStepCoefficients, mStepVariances, type Guards } from "./mStep";
import { reseedComponent } from "./reseedComponent";
import { locationSeedingLabels, parametersFromCoefficients, randomPartitionLabels, residualSeedingLabels, setHardMemberships } from "./starts";
import { exactComponentsOf, isNoiseless, landOnExactFit, SHORT_ITERATIONS, stopOnExactGain, watchSmallestVariance } from "./exactComponents";
import { peelExactComponents } from "./restructuringMoves";
import { allFoundAlike, bestFoundTwice } from "./compareFits";
import { runEm } from "./runEm";

/**
 * A start that usually lands next to the answer (the moment warm start, a parent's estimate),
 * where EM on noiseless data needs a few dozen iterations to reach the exact fit that ends the
 * search, gets that many.
 */
const LANDING_ITERATIONS = 60;
/**
 * On rows expected to be exact (a sub-problem of exact peeling), every start's brief run but
 * the parent estimate's is LANDING_ITERATIONS long rather than SHORT_ITERATIONS. There, ln L
 * after 15 iterations ranks the starts poorly: in sub-problems of d = 100, K = 10 fits the
 * parent's estimate led after 15 iterations and went on to fit nothing exactly in 500, while
 * residual and location seeding, behind it after 15, fitted one or two components exactly by
 * iteration 65, which exact peeling then set aside (traced; DEVELOPERS.md has the figures).
 * The parent's estimate keeps the short run, and runs on only while heading or falling fast
 * toward an exact fit (landOnExactFit): on d = 100 problem 1 its 60 iterations had fitted
 * nothing at each of three levels (2.8, 1.4 and 0.4 s); over nine d = 100 problems 0.93 of
 * the time, the bench's two 0.77, the same fits (DEVELOPERS.md).
 */
export function briefIterations(ctx: FitContext, source: StartSource): number {
  return source.landing || (ctx.expectExact && source.method !== INHERITED) ? LANDING_ITERATIONS : SHORT_ITERATIONS;
}
/**
 * Fits of LANDING_PARTITION_COEFFICIENTS coefficients or more (K·q) lean on random partitions
 * for exact fits, and the first LANDING_PARTITIONS random partitions of a screen get
 * LANDING_ITERATIONS too. On noiseless d = 100, K = 10 problems with one design for every
 * component, a random partition's smallest variance falls steadily, by 0.67-0.8 of itself
 * every 5 iterations, never by FALL_RATIO (exactComponents.ts), so none was run on past 15;
 * given 60, the first, second or third partition fitted components exactly on each of the
 * five problems the moment start did not land, where 15-iteration runs had landed two of six.
 * At d = 50, K = 7 (357 coefficients) partitions that land are falling fast by iteration 15,
 * and runWhileFalling already continues them. The cost on noisy data of that size: three
 * partitions at four times the iterations (DEVELOPERS.md has the figures).
 */
const LANDING_PARTITION_COEFFICIENTS = 500;
const LANDING_PARTITIONS = 3;
/**
 * Outside a sub-problem given the parent's estimate, a landing partition still falling after
 * its LANDING_ITERATIONS (its smallest variance at most LANDING_FALL_RATIO of itself five
 * iterations before) runs on while it falls so, at most LANDING_RUN_ON iterations more, and is
 * kept only when that fits a component exactly (runWhileFalling, exactComponents.ts). On a
 * noiseless d = 100, K = 10 problem with a design covariance per component and unshifted means,
 * the first partition fell by 0.67-0.8 every five iterations and needed about 90 more: run on,
 * it landed in the screen and the fit took 9.0-9.2 s against 19-20 s. Eleven other d = 100
 * problems, the bench's two and six large noisy sheets (d = 50-100, K = 5-10) gave the same
 * fits in the same times, within the day's spread (DEVELOPERS.md).
 */
const LANDING_RUN_ON = 100;
const LANDING_FALL_RATIO = 0.8;
/** The method name of a parent's estimate as a start. */
const INHERITED = "inherited";
/**
 * The moment warm start sees at most max(MOMENT_MIN_ROWS, MOMENT_ROWS_PER_PARAMETER · k · q)
 * rows: its sample size grows like the dimension, its cost like rows times its many passes,
 * and its output is only a start that EM then refines on more rows.
 */
const MOMENT_MIN_ROWS = 1000;
const MOMENT_ROWS_PER_PARAMETER = 40;
/**
 * Starts tried before the search may stop: the moment warm start (or, on small fits, a random
 * partition) and both seeded starts, which between them cover slope, offset and location
 * differences.
 */
const MIN_STARTS = 3;
/**
 * Fits of fewer coefficients than this in all (K·q) try the cheap starts first (residual and
 * location seeding, one random partition) and the moment warm start only when those do not all
 * reach the same fit. With few components in few dimensions the basin of the best fit is wide,
 * seeded and random starts land in it and EM then converges fast (Yi, Caramanis & Sanghavi
 * 2014; Ghosh & Kannan 2020), while the moment start has a fixed cost (whitening, moment,
 * subspace EM from six partitions, lifted refinements) of about a hundred EM iterations. With
 * more coefficients random starts rarely land in the basin and the moment start comes first,
 * as it does in a sub-problem that carries a parent's estimate (the restructuring moves of
 * noiseless fits, which lean on the moment start's exact fits).
 * Measured on 200 seeded noisy sheets (600-2,000 rows, 2-10 predictors, K = 2-4): the same
 * best likelihood as before on every one, a third of the time.
 */
const CHEAP_FIRST_COEFFICIENTS = 50;
/**
 * Sub-problems of this many components or more that carry a parent's estimate skip the
 * random-partition starts: in tens of dimensions those rarely reach the exact fit of four or
 * more components, and the parent refines the combined fit on all rows whatever the
 * sub-problem returns. The exception is a sub-problem of rows expected to be exact, where
 * every start runs 60 iterations: there the partitions are tried until some start fits a
 * component exactly. At 5 rows per predictor per component (d = 50, K = 7) most random
 * partitions fit one within 60 iterations, and on a problem where they did, the parent's
 * estimate and the seeded starts fitted none in any of nine such sub-problems; with the
 * partitions tried there, 19 of 20 fits at 5 rows were recovered against 17, in 0.6 of the
 * time (DEVELOPERS.md). In the user's fit of that many components, once the data has shown
 * an exact component, the random partitions stop after PARTITIONS_WITHOUT_EXACT in a row
 * reached no exact component (in a few dimensions they do reach some, and exact peeling
 * completes them; in tens they reach none, and peeling the exact component found elsewhere,
 * restructure.ts, is what completes the fit).
 */
const COMPONENTS_WITHOUT_PARTITIONS = 4;
const PARTITIONS_WITHOUT_EXACT = 3;

/** The screened starts, best first; whether the search stopped because the best was found twice. */
export interface ScreenedStarts {
  candidates: Candidate[];
  foundTwice: boolean;
  moment: MomentWarmStart | null;
}

/** What the start sources read of the screen so far (exact components counted only for COMPONENTS_WITHOUT_PARTITIONS or more). */
export interface ScreenState {
  moment: MomentWarmStart | null;
  /** Some screened start fitted a component exactly. */
  exactSeen: boolean;
  /** Random partitions in a row, up to the last, that fitted no component exactly. */
  partitionsWithoutExact: number;
  /** Row sets exact peeling has handed to large sub-problems in this screen (not handed again). */
  peeled: number[][];
}

function noteExactComponents(ctx: FitContext, screen: ScreenState, candidate: Candidate): void {
  const exact = exactComponentsOf(ctx.working, candidate.params).length > 0;
  screen.exactSeen ||= exact;
  if (candidate.method.startsWith("random-partition")) screen.partitionsWithoutExact = exact ? 0 : screen.partitionsWithoutExact + 1;
}

/**
 * A leader's confirming run can be what first shows an exact component (d = 100: a seeded
 * start exact in four after 60 iterations): the screen notes it, and the best leader's exact
 * components (rank 0 by the confirmed likelihood) are peeled then, as after a start's own
 * brief run, rather than after the refinement's hundreds of iterations (on held-out d = 100
 * problem 6 the refinement had run 500 with two components exact throughout, 21 s, before
 * restructuring peeled them). The best leader only: peeling the second too took 1.24 times as
 * long over thirty d = 50, K = 7 fits at 5 and 6 rows, the first alone 1.07 (DEVELOPERS.md).
 */
function confirmedLeader(ctx: FitContext, screen: ScreenState, leader: Candidate, rank: number): void {
  if (ctx.working.k >= COMPONENTS_WITHOUT_PARTITIONS && !screen.exactSeen) screen.exactSeen = exactComponentsOf(ctx.working, leader.params).length > 0;
  if (rank === 0) Object.assign(leader, peelWhileGaining(ctx, screen, leader, leader.params));
}

export interface StartSource {
  method: string;
  make: () => MixtureParameters | null;
  /** EM iterations beyond the brief run a start heading for an exact fit may take. */
  extraIterations: number;
  /** A brief run of LANDING_ITERATIONS whatever the sub-problem (briefIterations). */
  landing?: boolean;
}

/**
 * Phase: draw the starts one at a time on the working rows and refine each briefly (many short
 * runs before a long one: Biernacki, Celeux & Govaert 2003). The search stops once a start fits
 * every row to rounding level (it cannot be beaten), once the cheap starts tried first on a
 * small fit all reach the same fit, or once the best fit so far has been reached from two
 * different starts.
 */
export function screenStarts(ctx: FitContext): ScreenedStarts {
  const candidates: Candidate[] = [];
  const screen: ScreenState = { moment: null, exactSeen: false, partitionsWithoutExact: 0, peeled: [] };
  const cheapFirst = !ctx.inherited && ctx.working.k * ctx.working.q < CHEAP_FIRST_COEFFICIENTS;
  let foundTwice = false;
  for (const source of startSources(ctx, screen, cheapFirst)) {
    checkSignal(ctx.signal);
    const params = source.make();
    const candidate = params ? screenStart(ctx, screen, source, params) : null;
    if (!candidate) continue;
    candidates.push(candidate);
    if (isNoiseless(candidate.params, ctx.working)) break;
    if (ctx.working.k >= COMPONENTS_WITHOUT_PARTITIONS) noteExactComponents(ctx, screen, candidate);
    // On rows expected to be exact, two starts agreeing on a fit that is not exact ends nothing.
    if (!ctx.expectExact && searchSettled(ctx, candidates, cheapFirst, (leader, rank) => confirmedLeader(ctx, screen, leader, rank))) {
      foundTwice = true;
      break;
    }
    // A confirmed leader may have become exact on every row by its peeling.
    if (candidates.some((c) => isNoiseless(c.params, ctx.working))) break;
  }
  if (candidates.length === 0) {
    throw new SkeinError("numeric", "Every start failed: the predictors are (nearly) collinear within the groups tried. Remove a predictor that repeats others, or use fewer components.");
  }
  candidates.sort((a, b) => b.logLikelihood - a.logLikelihood);
  return { candidates, foundTwice, moment: screen.moment };
}

/**
 * EM iterations that confirm the leading starts: inside a basin noisy EM converges in a few
 * dozen; a pair still apart after this many is not in one basin (overfitted K converges slowly
 * and is left to the remaining starts).
 */
const CONFIRMING_ITERATIONS = 60;

/**
 * Whether the search may stop after the latest start. At MIN_STARTS starts the leaders are
 * confirmed (refined to convergence) when their brief runs do not already settle it. On a
 * small fit, whose cheap starts come first, all of them must reach one fit: two cheap starts
 * can share a poor optimum (one component holding two groups), and a third that disagrees
 * shows the likelihood has several optima. The search then goes on, and the best fit must be
 * found twice with one of the two finders a later start (the moment start, confirmed, or a
 * random partition). Otherwise the best fit must be found twice, at MIN_STARTS by two leaders.
 */
function searchSettled(ctx: FitContext, candidates: Candidate[], cheapFirst: boolean, confirmed: (leader: Candidate, rank: number) => void): boolean {
  const count = candidates.length;
  if (count < MIN_STARTS) return false;
  if (!cheapFirst) return bestFoundTwice(candidates) || (count === MIN_STARTS && bestFoundTwice(confirmLeaders(ctx, candidates, 2, confirmed)));
  if (count === MIN_STARTS) return allFoundAlike(candidates) || (confirmLeaders(ctx, candidates, MIN_STARTS, confirmed), allFoundAlike(candidates));
  if (count === MIN_STARTS + 1) confirmLeaders(ctx, candidates.slice(MIN_STARTS), 1, confirmed);
  return bestFoundTwice(candidates, MIN_STARTS);
}

/**
 * The `count` leading starts refined to convergence (at most CONFIRMING_ITERATIONS): brief
 * runs stop short of the optimum, so two starts in one basin can look apart after them. Inside
 * the basin EM converges fast (Balakrishnan, Wainwright & Yu 2017), so confirming costs far
 * less than the remaining starts and restructuring moves it saves. The refined parameters and
 * likelihoods stay on the candidates; a leader then exact on every row ends the refining.
 * `confirmed` is then told of each refined leader with its rank by the refined likelihood (0
 * for the best), and may change it in place. Ranked after refining, not before: on noiseless
 * d = 100, K = 10 problems the start behind after its brief run was often ahead after 60
 * iterations, with a component exact, and it is the best one's exact components that are
 * peeled at once (confirmedLeader); ranked before, the refinement then ran 300 or more
 * iterations before the later phases peeled them (DEVELOPERS.md has the figures). Returns
 * the leaders.
 */
function confirmLeaders(ctx: FitContext, candidates: Candidate[], count: number, confirmed: (leader: Candidate, rank: number) => void): Candidate[] {
  const leaders = candidates.slice().sort((a, b) => b.logLikelihood - a.logLikelihood).slice(0, count);
  // A leader that cannot matter (a scan's fit, see unwantedFitStop.ts) is not refined further: on all rows only.
  const stop = stopOnAllRows(ctx, ctx.working);
  const refined: Candidate[] = [];
  for (const leader of leaders) {
    leader.logLikelihood = runEm(ctx.working, leader.params, ctx, Math.min(CONFIRMING_ITERATIONS, ctx.settings.maxIterations), null, { stop }).logLikelihood;
    refined.push(leader);
    if (isNoiseless(leader.params, ctx.working)) break;
  }
  refined.sort((a, b) => b.logLikelihood - a.logLikelihood).forEach((leader, rank) => confirmed(leader, rank));
  return leaders;
}

/**
 * The starts in the order tried, each made only when reached (making one draws from the
 * generator): a parent's estimate, a previous fit, then the moment warm start, residual and
 * location seeding and random partitions; on small fits (`cheapFirst`) the two seeded starts
 * and one random partition before the moment start; in a sub-problem of rows expected to be
 * exact with many components and coefficients, the random partitions before the moment start.
 */
export function* startSources(ctx: FitContext, screen: ScreenState, cheapFirst: boolean): Generator<StartSource> {
  const { working: ws, guards, random, settings, inherited, previous } = ctx;
  if (inherited && inherited.length === ws.k * ws.q) {
    yield { method: INHERITED, make: () => parametersFromCoefficients(ws, inherited, guards), extraIterations: LANDING_ITERATIONS - SHORT_ITERATIONS };
  }
  if (previous && previous.k === ws.k && previous.p === ws.p && previous.intercept === settings.intercept) {
    yield { method: "previous", make: () => parametersFromFit(ws, previous, guards), extraIterations: 0 };
  }
  const momentStart = (): MixtureParameters | null => {
    const moment = momentWarmStart(momentRows(ws, random), ws.k, settings.intercept, random, ctx.signal);
    screen.moment = moment;
    if (!moment) return null;
    const coefficients = new Float64Array(ws.k * ws.q);
    moment.coefficients.forEach((vector, c) => coefficients.set(vector, c * ws.q));
    return parametersFromCoefficients(ws, coefficients, guards);
  };
  const momentSource: StartSource = { method: "moment-subspace", make: momentStart, extraIterations: LANDING_ITERATIONS - SHORT_ITERATIONS };
  // Random partitions stop early in fits of many components (see COMPONENTS_WITHOUT_PARTITIONS).
  const partitionsPointless = (): boolean =>
    ws.k >= COMPONENTS_WITHOUT_PARTITIONS &&
    (inherited ? !ctx.expectExact || screen.exactSeen : screen.exactSeen && screen.partitionsWithoutExact >= PARTITIONS_WITHOUT_EXACT);
  let partitionsLeft = settings.restarts;
  const largeFit = ws.k * ws.q >= LANDING_PARTITION_COEFFICIENTS;
  const landingPartitions = largeFit ? LANDING_PARTITIONS : 0;
  // Up to `count` more random partitions, while partitions are left and may still help.
  function* partitions(count: number): Generator<StartSource> {
    for (let made = 0; made < count && partitionsLeft > 0 && !partitionsPointless(); made++) {
      const landing = settings.restarts - partitionsLeft < landingPartitions;
      partitionsLeft--;
      yield { method: "random-partition", make: () => parametersFromLabels(ws, randomPartitionLabels(ws.n, ws.k, random), guards, random), extraIterations: 0, landing };
    }
  }
  // In a sub-problem of rows expected to be exact with COMPONENTS_WITHOUT_PARTITIONS components
  // or more and LANDING_PARTITION_COEFFICIENTS coefficients or more, the random partitions come
  // right after the parent's estimate, before the moment warm start and the seeded starts:
  // there a random partition's 60 iterations are what fits the next components exactly, and in
  // the same-design d = 100, K = 10 sub-problems the moment start (2-4 s) and the seeded starts
  // (1-3 s) fitted nothing (traced). In the smaller sub-problems of d = 50, K = 7 fits the
  // moment start often lands: three partitions first there made the same-design fits at 6 rows
  // per predictor per component 1.7 times as long (DEVELOPERS.md).
  if (largeFit && ctx.expectExact && ws.k >= COMPONENTS_WITHOUT_PARTITIONS) yield* partitions(Infinity);
  if (!cheapFirst) yield momentSource;
  yield { method: "residual-seeding", make: () => parametersFromLabels(ws, residualSeedingLabels(ws, random), guards, random), extraIterations: 0 };
  yield { method: "location-seeding", make: () => parametersFromLabels(ws, locationSeedingLabels(ws, random), guards, random), extraIterations: 0 };
  if (cheapFirst) {
    yield* partitions(1);
    yield momentSource;
  }
  yield* partitions(Infinity);
}

/**
 * One start: a brief EM run (briefIterations), landing on an exact fit when it heads for one,
 * then exact peeling when some of its components are exact and others not (decisive on
 * noiseless data), repeated while the refinement after a peel fits more components exactly.
 * Null when the run fails.
 */
function screenStart(ctx: FitContext, screen: ScreenState, source: StartSource, start: MixtureParameters): Candidate | null {
  const ws = ctx.working;
  const { method, extraIterations } = source;
  const watch = watchSmallestVariance(start);
  const brief = briefIterations(ctx, source);
  const shortRun = runEm(ws, start, ctx, brief, null, { stop: watch.stop });
  const falling = source.landing && !ctx.inherited ? { watch, iterations: LANDING_RUN_ON, ratio: LANDING_FALL_RATIO } : { watch, iterations: LANDING_ITERATIONS - brief };
  const { params, run, peelFrom } = landOnExactFit(ctx, start, shortRun, extraIterations, falling);
  if (!Number.isFinite(run.logLikelihood)) return null;
  const candidate: Candidate = { method, params, logLikelihood: run.logLikelihood };
  if (isNoiseless(params, ws)) return candidate;
  return peelWhileGaining(ctx, screen, candidate, peelFrom);
}

/** What a start's method gains once its exact components were peeled. */
const EXACT_PEELING = "+exact-peeling";

/**
 * Exact peeling of `candidate` (from `from`, its parameters or a snapped copy), repeated while
 * the run after a peel fits more components exactly; the candidate itself when nothing is
 * peeled or the peeled fit is no better. Rows an earlier start's peel handed to a large
 * sub-problem are not handed again (REPEATED_PEEL_COEFFICIENTS, restructuringMoves.ts).
 */
function peelWhileGaining(ctx: FitContext, screen: ScreenState, candidate: Candidate, from: MixtureParameters): Candidate {
  const ws = ctx.working;
  const method = candidate.method;
  for (let round = 0; round < ws.k; round++) {
    const peeled = peelExactComponents(ctx, ws, from, ctx.subsampleRows, { peeledBefore: screen.peeled });
    if (!peeled) break;
    // Another round only when this run stopped on a gain: in a sub-problem that expects exact
    // rows it may also stop at a plateau (FitContext.runStop), and peeling again would then
    // set aside the same rows as this round.
    let gained = false;
    const gain = stopOnExactGain(ws, peeled);
    const peeledRun = runEm(ws, peeled, ctx, ctx.settings.maxIterations, null, { stop: (logLikelihood, toCome, iterations) => (gained = gain(logLikelihood, toCome, iterations)), plain: true });
    if (!(peeledRun.logLikelihood > candidate.logLikelihood)) break;
    candidate = { method: method.endsWith(EXACT_PEELING) ? method : `${method}${EXACT_PEELING}`, params: peeled, logLikelihood: peeledRun.logLikelihood };
    if (!gained) break;
    from = peeled;
  }
  return candidate;
}

/** The rows the moment warm start sees: all working rows, or a seeded subsample of large inputs. */
function momentRows(ws: MixtureWorkspace, random: Random): RegressionData {
  const wanted = Math.max(MOMENT_MIN_ROWS, MOMENT_ROWS_PER_PARAMETER * ws.k * ws.q);
  const data: RegressionData = { x: ws.predictors, y: ws.y, n: ws.n, p: ws.p };
  return ws.n > 2 * wanted ? selectRows(data, sampleIndices(ws.n, wanted, random)) : data;
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
