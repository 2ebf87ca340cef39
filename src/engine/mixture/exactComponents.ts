import { leastSquares } from "../leastSquares";
import type { CancelSignal } from "../mixtureTypes";
import { gatherRows } from "../rowSubset";
import { alternatingLeastSquares } from "../warmStart/alternatingLeastSquares";
import type { EmRun, FitContext } from "./fitContext";
import { copyParameters, type MixtureParameters } from "./mixtureParameters";
import type { MixtureWorkspace } from "./mixtureWorkspace";
import type { Guards } from "./mStep";
import { concentrationRuns } from "./concentrationSteps";
import { parametersFromCoefficients } from "./starts";
import { runEm } from "./runEm";
import type { EmStop } from "./fitContext";
import { computeResiduals, eStep } from "./eStep";
import { rowResidual } from "../rowResiduals";

/**
 * Exact components: on noiseless data (or data where some groups lie exactly on their
 * regressions) a component fits its own rows to rounding level. EM approaches such a fit only
 * linearly, so a start heading for it is landed on it directly: concentration steps
 * (Rousseeuw & Van Driessen 2006) find the exact components one at a time, hard assignment
 * (Späth 1979) confirms a fit exact on every row, and trimmed refits snap the components
 * already close. A fit exact on every row cannot be beaten by any other start.
 */

/**
 * The one tolerance for "exact": a residual, or a component's noise SD, of at most
 * EXACT_RELATIVE times SD(y). Rounding in least-squares fits of tens of coefficients leaves
 * about 1e-14 of SD(y), and a row of another component misses by the separation of the
 * components (0.1 of SD(y) or more in any problem worth fitting): 1e-6 is far from both.
 * The variance floor (mixtureSettings.ts) sits far below its square, so EM on an exact
 * component stops at the floor rather than near the tolerance.
 */
export const EXACT_RELATIVE = 1e-6;

/**
 * The one rule for "enough rows for a component": any q rows are fitted exactly by some
 * coefficient vector (a spurious fit), so a component is identified, and an exact one
 * certified, only by clearly more: q + max(3, ⌈q/10⌉) rows. (The EM guard that a component
 * keeps more than q rows' worth of membership, mixtureSettings.ts, is the weaker condition
 * under which its likelihood stays finite.)
 */
export function enoughRows(q: number): number {
  return q + Math.max(3, Math.ceil(0.1 * q));
}

/**
 * The one rule for "thin rows": at most THIN_ROWS rows per coefficient per component (n ≤
 * THIN_ROWS · K · q). There the starts miss noiseless problems (at 10 rows and more they land
 * them), and EM's components shrunk onto a few rows they overfit are part of what the
 * likelihood rewards, on noisy sheets too.
 */
const THIN_ROWS = 8;

export function thinRows(n: number, k: number, q: number): boolean {
  return n <= THIN_ROWS * k * q;
}

/** Absolute residual counted as exact on these rows. */
export function exactTolerance(ws: MixtureWorkspace): number {
  return EXACT_RELATIVE * Math.sqrt(ws.yVariance);
}
/** Rows within SNAP_WIDTH noise SDs of a near-exact component count as its own (4 SDs miss 6e-5 of them). */
const SNAP_WIDTH = 4;
/** Trimmed refits per near-exact component: the second uses the first's far smaller SD. */
const SNAP_ROUNDS = 2;
/**
 * Trimmed refits of a component counted exact before its rows are set aside (exact peeling):
 * with barely more rows than coefficients in the first refit, a stray row of another
 * component can hold the refit off for a few rounds (in test/mixturePhases.test.ts it is
 * exact after the fifth refit).
 */
export const PEEL_SNAP_ROUNDS = 8;
/** Hard-assignment steps tried: from inside its basin alternating least squares settles in a few; 50 leave room for slow last movers. */
const EXACT_POLISH_ITERATIONS = 50;
/**
 * Concentration steps: subsets of half the rows a component holds (at least 1.5q, so the
 * least-squares fits stay well determined), at most 20 steps (starts that lead to an exact
 * fit reach it within about ten).
 */
const CONCENTRATION_MIN_SUBSET = 1.5;
const CONCENTRATION_SUBSET_FRACTION = 0.5;
const CONCENTRATION_STEPS = 20;

/** Whether every component's noise SD is within the exact tolerance: the fit is exact on every row. */
export function isNoiseless(params: MixtureParameters, ws: MixtureWorkspace): boolean {
  const limit = EXACT_RELATIVE * EXACT_RELATIVE * ws.yVariance;
  for (let c = 0; c < params.k; c++) if (!(params.variances[c] <= limit)) return false;
  return true;
}

/**
 * The components that fit enoughRows(q) rows or more within the exact tolerance (their noise
 * SD may still sit at the variance-ratio bound while others are noisy), each counting only
 * rows no component taken before it fits: EM can leave two components on one group's rows,
 * and the copy is not a second exact component (the one fitting more rows is taken first, the
 * lower index on a tie). Listed by index. Traced on a held-out d = 100, K = 10 problem: three
 * components fitted the same 823 rows exactly; counted as three, exact peeling left three
 * components for the rows of five groups, a sub-problem that searched for 15 s and could fit
 * nothing exactly (DEVELOPERS.md). Leaves the residuals of `params` in ws.residuals.
 */
export function exactComponentsOf(ws: MixtureWorkspace, params: MixtureParameters): number[] {
  const { n, q, k } = ws;
  const threshold = exactTolerance(ws);
  computeResiduals(ws, params);
  const exactRows = new Int32Array(k);
  for (let i = 0; i < n; i++) for (let c = 0; c < k; c++) if (Math.abs(ws.residuals[i * k + c]) <= threshold) exactRows[c]++;
  const order: number[] = [];
  for (let c = 0; c < k; c++) if (exactRows[c] >= enoughRows(q)) order.push(c);
  if (order.length < 2) return order;
  order.sort((a, b) => exactRows[b] - exactRows[a] || a - b);
  const taken = new Uint8Array(n);
  const exact: number[] = [];
  for (const c of order) {
    let own = 0;
    for (let i = 0; i < n; i++) if (!taken[i] && Math.abs(ws.residuals[i * k + c]) <= threshold) own++;
    if (own < enoughRows(q)) continue;
    exact.push(c);
    for (let i = 0; i < n; i++) if (Math.abs(ws.residuals[i * k + c]) <= threshold) taken[i] = 1;
  }
  return exact.sort((a, b) => a - b);
}

/**
 * The rows of `ws` that none of the listed components fits within the exact tolerance, read
 * from ws.residuals (which must be those of the parameters the components belong to, as
 * exactComponentsOf leaves them).
 */
export function rowsNotFitExactly(ws: MixtureWorkspace, components: readonly number[]): number[] {
  const { n, k, residuals } = ws;
  const threshold = exactTolerance(ws);
  const rows: number[] = [];
  for (let i = 0; i < n; i++) {
    let fitted = false;
    for (const c of components) if (Math.abs(residuals[i * k + c]) <= threshold) fitted = true;
    if (!fitted) rows.push(i);
  }
  return rows;
}

/** Iterations between counts of the exact components in a run watched by one of the stops below. */
const EXACT_CHECK_INTERVAL = 10;
/**
 * Iterations a count of exact components must hold before a watched run ends on it: after a
 * gain (stopOnExactGain), because one newly exact component often brings others soon after;
 * at a plateau (stopOnExactPlateau), because in sub-problems at d = 100, K = 10 runs went on
 * for 300-460 iterations after their last newly exact component without fitting another
 * (traced: the bench's problem 1 spent about 30 of its 53 s so), and ending them lets the
 * restructuring and finishing phases peel what is exact. Plateaus of 30, 50 and 100 gave the
 * same fits on the 50 noiseless d = 50 and d = 20 grid fits and on d = 100 problems 0-3 and
 * 5-7 (30 and 50), and 30 took 0.93 and 0.97 of 50's time on problems 1 and 0 (DEVELOPERS.md).
 */
const EXACT_COUNT_HOLD = 30;

/**
 * A stop that counts `params`' exact components (params is updated in place by the run) every
 * EXACT_CHECK_INTERVAL iterations and ends the run when `ends(count, held)` says so, held
 * being the iterations the count has stayed the same. `last` is the count to compare the first
 * check with.
 */
function watchExactCount(ws: MixtureWorkspace, params: MixtureParameters, last: number, ends: (count: number, held: number) => boolean): EmStop {
  let checked = 0;
  let held = 0;
  return (_logLikelihood, _gain, iterations) => {
    if (iterations - checked < EXACT_CHECK_INTERVAL) return false;
    // Recomputes the residuals of the same parameters the run's last E-step used.
    const count = exactComponentsOf(ws, params).length;
    held = count === last ? held + (iterations - checked) : 0;
    checked = iterations;
    last = count;
    return ends(count, held);
  };
}

/**
 * A stop for a run from `params` that ends it once it has fitted more components exactly than
 * it started with and that count has held for EXACT_COUNT_HOLD: the caller then peels
 * the new exact components, which costs far less than the hundreds of iterations EM may still
 * spend on the others without changing them (in d = 100 sub-problems, 400 or more).
 */
export function stopOnExactGain(ws: MixtureWorkspace, params: MixtureParameters): EmStop {
  const start = exactComponentsOf(ws, params).length;
  return watchExactCount(ws, params, start, (count, held) => count > start && held >= EXACT_COUNT_HOLD);
}

/**
 * The stop every run of a sub-problem that expects exact rows also obeys (FitContext.runStop):
 * the run ends once it fits one or more components exactly and that count has stayed the same
 * for EXACT_COUNT_HOLD. Runs too short to go on long after such a plateau (at most twice its
 * length: the short, landing and confirming runs) are not watched (null).
 */
export function stopOnExactPlateau(ws: MixtureWorkspace, params: MixtureParameters, maxIterations: number): EmStop | null {
  if (maxIterations <= 2 * EXACT_COUNT_HOLD) return null;
  return watchExactCount(ws, params, -1, (count, held) => count > 0 && held >= EXACT_COUNT_HOLD);
}

/**
 * A component's noise SD has come at least halfway (on a log scale) from SD(y) down to the
 * exact tolerance, √EXACT_RELATIVE · SD(y): EM is heading for an exact fit of it.
 */
export function nearExact(variance: number, ws: MixtureWorkspace): boolean {
  return variance <= EXACT_RELATIVE * ws.yVariance;
}

/** Some component near exact, but not every one exact yet. */
function headingForExact(params: MixtureParameters, ws: MixtureWorkspace): boolean {
  if (isNoiseless(params, ws)) return false;
  for (let c = 0; c < params.k; c++) if (nearExact(params.variances[c], ws)) return true;
  return false;
}

/**
 * A start's smallest component variance after each iteration of its runs (`stop` records it
 * and never stops the run), to tell a start falling toward an exact fit from one settling.
 */
export interface VarianceWatch {
  stop: EmStop;
  smallest: number[];
}

export function watchSmallestVariance(params: MixtureParameters, smallest: number[] = []): VarianceWatch {
  return { smallest, stop: () => (smallest.push(Math.min(...params.variances)), false) };
}

/**
 * Falling toward exact: the smallest variance at most FALL_RATIO of what it was FALL_SPAN
 * iterations before. Traced on noiseless d = 50, K = 7 problems at 5 rows per predictor per
 * component: 56 of 100 random partitions fitted a component exactly within 60 EM iterations,
 * nearly all between iterations 17 and 37 and none by 15, when their smallest variance was
 * still 2e-5 to 1e-1 of var(y), as on noisy data, but falling faster. Run on while it falls
 * so (checked every FALL_SPAN iterations, up to 60 in all), 49 of the 56 landed, at about
 * 5 iterations more per start; 290 runs on noisy problems (d = 2-50, K = 2-7) ran about 2
 * more per start (DEVELOPERS.md).
 */
const FALL_SPAN = 5;
const FALL_RATIO = 0.5;

function fallingFast({ smallest }: VarianceWatch, ratio = FALL_RATIO): boolean {
  const last = smallest.length - 1;
  return last >= FALL_SPAN && smallest[last] <= ratio * smallest[last - FALL_SPAN];
}

/**
 * A start's run continued on a copy of its parameters while the smallest variance keeps
 * falling fast (to at most `ratio` of itself every FALL_SPAN iterations; at most
 * `maxIterations` more), until a component fits enoughRows(q) rows
 * exactly: then the copy and its run. Otherwise null, with the workspace put back as the
 * start's own run left it, and re-seeding drawn from the context's trial generator, so a start
 * whose run is given up goes on as if none had been tried.
 */
export function runWhileFalling(ctx: FitContext, params: MixtureParameters, watch: VarianceWatch, maxIterations: number, ratio = FALL_RATIO): { params: MixtureParameters; run: EmRun } | null {
  const ws = ctx.working;
  if (maxIterations <= 0 || !fallingFast(watch, ratio) || headingForExact(params, ws) || isNoiseless(params, ws)) return null;
  const trial = copyParameters(params);
  const trialWatch = watchSmallestVariance(trial, watch.smallest.slice());
  const backgroundWeight = ws.background?.weight ?? 0;
  let landed = false;
  const stop: EmStop = (logLikelihood, gain, iterations) => {
    trialWatch.stop(logLikelihood, gain, iterations);
    // Near exact, the run goes on until a component fits enough rows exactly: on noisy data
    // a surplus component can shrink onto a few rows without ever doing so.
    if (nearExact(trialWatch.smallest[trialWatch.smallest.length - 1], ws)) return (landed = exactComponentsOf(ws, trial).length > 0);
    return iterations % FALL_SPAN === 0 && !fallingFast(trialWatch, ratio);
  };
  const run = runEm(ws, trial, { ...ctx, random: ctx.trialRandom }, maxIterations, null, { stop });
  if (landed || isNoiseless(trial, ws)) return { params: trial, run };
  if (ws.background) ws.background.weight = backgroundWeight;
  eStep(ws, params, true);
  return null;
}

/** A briefly refined start after landing: its parameters and run, and what exact peeling should start from. */
export interface Landed {
  params: MixtureParameters;
  run: EmRun;
  peelFrom: MixtureParameters;
}

/**
 * Phase of the start screen: a start heading for an exact fit is landed on it. A start whose
 * smallest variance is still falling fast first runs on while it does (runWhileFalling, at
 * most `falling.iterations` more), and is kept only when that fits a component exactly.
 * Landing: concentration steps from each component; failing those, a start that may run
 * longer (`extraIterations`) gets more EM. Then hard assignment: exact on every row replaces the
 * start; otherwise the near-exact components are snapped onto their own rows, and exact
 * peeling starts from the result.
 */
export function landOnExactFit(ctx: FitContext, params: MixtureParameters, run: EmRun, extraIterations: number, falling: { watch: VarianceWatch; iterations: number; ratio?: number }): Landed {
  const { working: ws, guards } = ctx;
  const fell = runWhileFalling(ctx, params, falling.watch, falling.iterations, falling.ratio);
  if (fell) ({ params, run } = fell);
  const concentrated = headingForExact(params, ws) ? concentrateComponents(ws, params, guards) : null;
  if (!concentrated && extraIterations > 0 && !run.converged && headingForExact(params, ws)) run = runEm(ws, params, ctx, extraIterations);
  if (!Number.isFinite(run.logLikelihood)) return { params, run, peelFrom: params };
  if (concentrated && concentrated.exactComponents < ws.k) return { params, run, peelFrom: concentrated.params };
  if (!concentrated && !headingForExact(params, ws)) return { params, run, peelFrom: params };
  const exact = exactFitByHardAssignment(ws, concentrated ? concentrated.params : params, guards, ctx.signal);
  if (exact) return { params: exact, run: runEm(ws, exact, ctx, SHORT_ITERATIONS), peelFrom: exact };
  return { params, run, peelFrom: snapNearExactComponents(ws, params, guards) ?? params };
}

/** EM iterations each start gets before the starts are compared (short exploratory runs, Biernacki, Celeux & Govaert 2003). */
export const SHORT_ITERATIONS = 15;

/**
 * Alternating least squares from `params`' coefficients; parameters when it ends with every
 * row fitted within the exact tolerance, else null.
 */
function exactFitByHardAssignment(ws: MixtureWorkspace, params: MixtureParameters, guards: Guards, signal: CancelSignal | undefined): MixtureParameters | null {
  const { n, q, k } = ws;
  const start: Float64Array[] = [];
  for (let c = 0; c < k; c++) start.push(params.coefficients.slice(c * q, c * q + q));
  const fit = alternatingLeastSquares(ws.design, n, q, ws.y, start, EXACT_POLISH_ITERATIONS, exactTolerance(ws), guards.minimumSize, signal);
  if (fit.exactRows < n) return null;
  const coefficients = new Float64Array(k * q);
  fit.coefficients.forEach((c, index) => coefficients.set(c, index * q));
  return parametersFromCoefficients(ws, coefficients, guards);
}

/**
 * Components whose variance is already far below the data's refitted by least squares on the
 * rows within SNAP_WIDTH of their SDs (snapComponents). Null when no component qualifies.
 */
export function snapNearExactComponents(ws: MixtureWorkspace, params: MixtureParameters, guards: Guards): MixtureParameters | null {
  const near: number[] = [];
  for (let c = 0; c < params.k; c++) if (nearExact(params.variances[c], ws)) near.push(c);
  return snapComponents(ws, params, near, (c) => SNAP_WIDTH * Math.sqrt(params.variances[c]), guards);
}

/**
 * The listed components refitted by least squares on the rows within `firstWidth(c)` of them,
 * then again on the rows within SNAP_WIDTH times the last refit's SD (never below the exact
 * tolerance), up to `rounds` refits or until the rows stay the same (trimmed least squares):
 * on noiseless data a stray row of another component that lay within the first width drops
 * out as the refit closes in, and the component ends exact to rounding, fitting every one of
 * its rows. Null when no listed component had enoughRows(q) rows to refit on.
 */
export function snapComponents(ws: MixtureWorkspace, params: MixtureParameters, components: readonly number[], firstWidth: (c: number) => number, guards: Guards, rounds = SNAP_ROUNDS): MixtureParameters | null {
  const { n, q } = ws;
  const coefficients = params.coefficients.slice();
  let snapped = false;
  for (const c of components) {
    let width = firstWidth(c);
    let previous: number[] = [];
    for (let round = 0; round < rounds; round++) {
      const rows: number[] = [];
      for (let i = 0; i < n; i++) {
        if (Math.abs(rowResidual(ws.design, i * q, q, coefficients, c * q, ws.y[i])) <= width) rows.push(i);
      }
      // Any q rows are fitted exactly by some vector: only clearly more identify the component.
      if (rows.length < enoughRows(q) || sameRows(rows, previous)) break;
      previous = rows;
      const chosen = gatherRows(ws.design, q, ws.y, rows);
      let fit: ReturnType<typeof leastSquares>;
      try {
        fit = leastSquares(chosen.matrix, rows.length, q, chosen.y);
      } catch {
        break;
      }
      coefficients.set(fit.coefficients, c * q);
      snapped = true;
      width = Math.max(SNAP_WIDTH * fit.mlSigma, exactTolerance(ws));
    }
  }
  return snapped ? parametersFromCoefficients(ws, coefficients, guards) : null;
}

/** Whether two lists of rows hold the same rows in the same order. */
export function sameRows(a: readonly number[], b: readonly number[]): boolean {
  return a.length === b.length && a.every((row, t) => row === b[t]);
}

/**
 * Concentration steps from every component, with subsets of half the rows the component
 * holds (at least 1.5q): the components that end fitting enough rows exactly take the exact
 * coefficients. Null when none did.
 */
function concentrateComponents(ws: MixtureWorkspace, params: MixtureParameters, guards: Guards): { params: MixtureParameters; exactComponents: number } | null {
  const { n, q, k } = ws;
  const coefficients = params.coefficients.slice();
  const starts = Array.from({ length: k }, (_, c) => params.coefficients.subarray(c * q, c * q + q));
  const subsets = Array.from({ length: k }, (_, c) => Math.max(Math.ceil(CONCENTRATION_MIN_SUBSET * q), Math.floor(CONCENTRATION_SUBSET_FRACTION * params.weights[c] * n)));
  const results = concentrationRuns(ws.design, n, q, ws.y, starts, subsets, CONCENTRATION_STEPS, exactTolerance(ws));
  let found = 0;
  results.forEach((result, c) => {
    if (result.exactRows < enoughRows(q)) return;
    coefficients.set(result.coefficients, c * q);
    found++;
  });
  return found > 0 ? { params: parametersFromCoefficients(ws, coefficients, guards), exactComponents: found } : null;
}
