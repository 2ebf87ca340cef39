import type { MixtureFit, MixtureOptions, RegressionData } from "./mixtureTypes";
import { createRandom, sampleIndices } from "./random";
import { selectRows } from "./rowSubset";
import type { FitContext } from "./mixture/fitContext";
import { checkInput, createGuards } from "./mixture/mixtureSettings";
import { createWorkspace } from "./mixture/mixtureWorkspace";
import { fitSingleComponent } from "./mixture/assembleFit";
import { screenStarts } from "./mixture/screenStarts";
import { refineBest } from "./mixture/refineBest";
import { stopWhenUnwanted } from "./mixture/unwantedFitStop";
import { EARLY_TRIES, annealingTries, landByAnnealing } from "./mixture/annealedLanding";
import { restructure } from "./mixture/restructure";
import { finishOnAllRows } from "./mixture/finishOnAllRows";
import { finishExactComponents } from "./mixture/finishExactComponents";
import { stopOnExactPlateau } from "./mixture/exactComponents";
import { reportFit } from "./mixture/reportFit";
import { withInternalScaling } from "./internalScaling";
import { allShared, helperFor, shareableArray, sharing } from "./helperThread";
import { rowsMicroseconds } from "./mixture/eStep";
import { backgroundMayHelp, chooseBackground, withBackground } from "./mixture/backgroundComponent";

export { checkRowsForComponents } from "./mixture/mixtureSettings";
export { DISAGREEMENT_RELATIVE } from "./mixture/compareFits";

/**
 * Starts on large inputs run on a seeded subsample of max(SUBSAMPLE_MIN_ROWS,
 * SUBSAMPLE_ROWS_PER_PARAMETER · k · q) rows, used only when the data has more than twice that
 * many: a few thousand rows already place the components to within a few standard errors of
 * the full-data fit, which the full-data iterations then remove.
 */
const SUBSAMPLE_MIN_ROWS = 4000;
const SUBSAMPLE_ROWS_PER_PARAMETER = 20;

/** The second generator's seed: the fit's own plus this. */
const TRIAL_SEED_OFFSET = 1;

/**
 * Fits a K-component mixture of linear regressions (DeSarbo & Cron 1988; De Veaux 1989) by EM
 * (Dempster, Laird & Rubin 1977). One generator made from options.seed feeds every random step
 * (and a second, from the same seed, the re-seeding in runs that may be given up).
 */
export function fitMixture(data: RegressionData, options: MixtureOptions): MixtureFit {
  // A fit whose E-steps on all rows are long enough to split starts the helper thread now: it
  // takes about a tenth of a second to start, and one started only by the fit's first long
  // step would miss much of a fit of a second or less.
  helperFor(rowsMicroseconds(data.n, options.k, data.p + (options.intercept === false ? 0 : 1), true, true));
  // Values far from 1 (beyond 1e100, or a column's size below 1e-100) are fitted scaled.
  return withInternalScaling(shareable(data), options, fitWithBackgroundSetting);
}

/**
 * The data in memory a helper thread can read, when one is installed (helperThread.ts; it may
 * still be starting, and takes its shares once ready): a copy unless it already is.
 */
function shareable(data: RegressionData): RegressionData {
  if (!sharing() || allShared(data.x, data.y)) return data;
  const x = shareableArray(data.x.length);
  const y = shareableArray(data.y.length);
  x.set(data.x);
  y.set(data.y);
  return { ...data, x, y };
}

function fitWithBackgroundSetting(data: RegressionData, options: MixtureOptions): MixtureFit {
  if (options.background !== "auto") return fitAtDepth(data, options, 0);
  // "auto": the background only when the fit without it shows rows far from every regression.
  const plain = fitAtDepth(data, { ...options, background: false }, 0);
  if (!backgroundMayHelp(data, plain)) return plain;
  // The trial matters only if its BIC comes below the plain fit's (and below any the caller
  // set): its runs on all rows stop once it cannot (unwantedFitStop.ts), and the plain fit is kept.
  const wanted = options.mattersBelowBic && options.mattersBelowBic.bic < plain.bic ? options.mattersBelowBic : { bic: plain.bic, reason: BACKGROUND_TRIAL_STOPPED };
  return chooseBackground(plain, fitAtDepth(data, { ...options, background: true, mattersBelowBic: wanted }, 0));
}

/** Why a trial with the background ended early (never shown: the plain fit is kept then). */
const BACKGROUND_TRIAL_STOPPED = "the fit with the background could not come below the BIC of the fit without it";

/**
 * The driver: a pipeline of named phases (mixture/), each with a typed input and output.
 *
 *   screen starts     draw starts on the working rows, refine each briefly, land those
 *                     heading for an exact fit on it (screenStarts.ts, exactComponents.ts)
 *   refine best       the best start (and a close runner-up) to convergence (refineBest.ts)
 *   annealed landing  when nothing is exact on few rows that may be noiseless, two tries
 *                     (annealedLanding.ts)
 *   restructure       split-and-merge and peeling, only when no two starts agreed and
 *                     annealed landing did not replace the fit (restructure.ts)
 *   annealed landing  the tries left, when the first did not replace the fit
 *   all rows          from a subsample to all rows on large inputs (finishOnAllRows.ts)
 *   exact components  exact peeling and the noiseless polish (finishExactComponents.ts)
 *   report            reports, warnings, memberships, BIC, ICL, order (reportFit.ts)
 */
function fitAtDepth(data: RegressionData, options: MixtureOptions, depth: number, inherited?: Float64Array, expectExact = false, strays = false, anneal = true): MixtureFit {
  const settings = checkInput(data, options);
  const full = withBackground(createWorkspace(data, settings.k, settings.intercept, settings.model === "joint"), settings.background);
  const guards = createGuards(full.q, full.yVariance);
  if (settings.k === 1) return fitSingleComponent(full, settings, guards);
  const random = createRandom(settings.seed);
  const subsampleSize = Math.max(SUBSAMPLE_MIN_ROWS, SUBSAMPLE_ROWS_PER_PARAMETER * settings.k * full.q);
  const subsampleRows = full.n > 2 * subsampleSize ? sampleIndices(full.n, subsampleSize, random) : null;
  const working = subsampleRows ? withBackground(createWorkspace(data, settings.k, settings.intercept, full.joint, subsampleRows), settings.background, full) : full;
  const ctx: FitContext = {
    data, settings, guards, random, full, working, subsampleRows, depth, inherited, expectExact, strays,
    annealing: anneal ? { triesLeft: annealingTries(full, expectExact), designTried: false } : null,
    trialRandom: createRandom(settings.seed + TRIAL_SEED_OFFSET),
    // On rows expected to be exact, long runs end once their exact components stop changing.
    runStop: expectExact ? stopOnExactPlateau : null,
    tolerance: settings.tolerance,
    signal: options.signal,
    previous: options.previous,
    unwanted: stopWhenUnwanted(options, full, settings),
  };

  const starts = screenStarts(ctx);
  const incumbent = refineBest(ctx, starts.candidates);
  const landedEarly = landByAnnealing(ctx, incumbent, EARLY_TRIES);
  const splits = starts.foundTwice || landedEarly || options.restructure === false ? 0 : restructure(ctx, incumbent);
  const landed = landedEarly || landByAnnealing(ctx, incumbent, Infinity);
  const onAllRows = finishOnAllRows(ctx, incumbent);
  const finished = finishExactComponents(ctx, incumbent, onAllRows.membershipsCurrent, !landed);
  return reportFit(ctx, { starts, incumbent, splits, onAllRows, finished });
}

/** What a phase asks of a sub-problem: K components on some of the parent's rows. */
export interface SubProblem {
  /** Rows of the parent's data. */
  rows: number[];
  k: number;
  /** Random-partition starts (default: the parent's). */
  restarts?: number;
  /** The parent's estimate of these components (k·q coefficients), tried first. */
  start?: Float64Array;
  /** The rows are expected to lie exactly on k regressions (the parent fitted others exactly). */
  expectExact?: boolean;
  /**
   * Rows of components outside the sub-problem may lie among its rows: they were chosen by a
   * noisy fit (a peel's band, a split's members), here or further up (default: the parent's).
   */
  strays?: boolean;
  /** A flat background component beside the k regressions, to take rows none of them fits. */
  background?: boolean;
  /**
   * The sub-problem may try annealed landing (annealedLanding.ts) when nothing else fits its
   * rows exactly (default false: only the finishing phase's peels and annealed landing's own
   * ask for it, so the many sub-problems of the search do not each pay for it).
   */
  anneal?: boolean;
}

/**
 * The one way a phase fits a subset of rows: the whole pipeline on those rows, one level
 * deeper, with the parent's settings, the caller's cancel signal and a seed drawn from the
 * parent's generator.
 */
export function fitSubProblem(parent: FitContext, sub: SubProblem): MixtureFit {
  const { settings } = parent;
  const options: MixtureOptions = {
    k: sub.k,
    seed: parent.random.integer(2147483647),
    intercept: settings.intercept,
    model: settings.model,
    restarts: sub.restarts ?? settings.restarts,
    tolerance: settings.tolerance,
    maxIterations: settings.maxIterations,
    signal: parent.signal,
    background: sub.background ?? false,
  };
  return fitAtDepth(selectRows(parent.data, sub.rows), options, parent.depth + 1, sub.start, sub.expectExact ?? parent.expectExact, sub.strays ?? parent.strays, sub.anneal ?? false);
}
