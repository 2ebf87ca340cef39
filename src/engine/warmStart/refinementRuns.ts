import type { CancelSignal } from "../mixtureTypes";
import { ROW_MULTIPLY_ADDS_PER_MICROSECOND, allShared, helperFor, shareableArray, shareableInts, type HelperJob } from "../helperThread";
import { alternatingLeastSquares, type AlternatingFit, type AssignmentRule } from "./alternatingLeastSquares";

/**
 * Least estimated time, in microseconds, of one start's refinement (its assignments' n·k·q
 * multiply-adds for the predictions, each iteration) for the starts to be shared between the
 * threads. In a fresh process the helper's copy of the code starts cold, and the two threads
 * share the memory bus and the cores the compiler needs: as `skein fit` processes, sharing the
 * d = 50, K = 7 refinements (about 20-30 ms a start) made the fits 1.04 times as long, sharing
 * the d = 100, K = 10 ones (70-300 ms) 0.92 times (DEVELOPERS.md).
 */
const SPLIT_MINIMUM_MICROSECONDS = 50_000;

/** How each start is refined: alternatingLeastSquares's settings. */
export interface RefinementSettings {
  maxIterations: number;
  exactTolerance: number;
  minimumRows: number;
  rule: AssignmentRule;
}

/**
 * The best hard-assignment refinement of several starts (betterFit), taken in the starts'
 * order and ending at the first that fits every row exactly. Each start is refined whole on
 * one thread: with a helper thread (helperThread.ts) both threads claim the next start from a
 * shared counter, as concentrationRuns does, and no start is begun once one has fitted every
 * row. The best is then chosen in the starts' order, so the result is the one the starts give
 * one after the other, in less time (the moment warm start's three lifted candidates mostly
 * all run their 25 iterations: on d = 100, K = 10 about 0.2-0.3 s each).
 */
export function bestRefinement(design: Float64Array, n: number, q: number, y: Float64Array, starts: readonly Float64Array[][], settings: RefinementSettings, signal?: CancelSignal): AlternatingFit | null {
  const count = starts.length;
  if (count === 0) return null;
  const rows: RefinementRows = { design, n, q, y, ...settings };
  const job = sharedRefinements(rows, starts, signal);
  let best: AlternatingFit | null = null;
  for (let s = 0; s < count; s++) {
    // Refined here: every start on one thread, or one a failed helper claimed and did not finish.
    const fit = job && !Number.isNaN(job.figures[2 * s]) ? readFit(job, s) : refineStart(rows, starts[s], signal);
    if (!best || betterFit(fit, best)) best = fit;
    if (best.exactRows === n) break;
  }
  return best;
}

/**
 * The starts refined by both threads, when a helper thread is ready and each start's
 * refinement is long enough (SPLIT_MINIMUM_MICROSECONDS); null otherwise (no start refined).
 */
function sharedRefinements(rows: RefinementRows, starts: readonly Float64Array[][], signal?: CancelSignal): RefinementJob | null {
  const { design, n, q, y, maxIterations } = rows;
  const count = starts.length;
  const k = starts[0].length;
  const helper = count > 1 && allShared(design, y) ? helperFor((n * k * q * maxIterations) / ROW_MULTIPLY_ADDS_PER_MICROSECOND, SPLIT_MINIMUM_MICROSECONDS) : null;
  if (helper === null) return null;
  const flat = new Float64Array(count * k * q);
  starts.forEach((start, s) => start.forEach((c, index) => flat.set(c.subarray(0, q), (s * k + index) * q)));
  const job: RefinementJob = {
    kind: "refinement", ...rows, k, count, starts: flat,
    claims: shareableInts(2),
    coefficients: shareableArray(count * k * q),
    scales: shareableArray(count * k),
    figures: shareableArray(2 * count).fill(NaN),
    labels: shareableInts(count * n),
  };
  helper.start(job);
  refineStarts(job, signal);
  helper.finish();
  return job;
}

/** More rows fitted exactly wins; otherwise the smaller product of component scales. */
export function betterFit(a: AlternatingFit, b: AlternatingFit): boolean {
  if (a.exactRows !== b.exactRows) return a.exactRows > b.exactRows;
  let logA = 0;
  let logB = 0;
  for (let c = 0; c < a.scales.length; c++) {
    logA += Math.log(a.scales[c] + Number.MIN_VALUE);
    logB += Math.log(b.scales[c] + Number.MIN_VALUE);
  }
  return logA < logB;
}

/** Several starts' refinements for bestRefinement, claimed one at a time by either thread. */
export interface RefinementJob extends HelperJob, RefinementRows {
  kind: "refinement";
  k: number;
  count: number;
  /** The starts, k·q coefficients each. */
  starts: Float64Array;
  /** Slot 0: the next start to claim; slot 1: 1 once a refinement fitted every row exactly. */
  claims: Int32Array;
  /** Per start: its refined k·q coefficients, k scales and n labels. */
  coefficients: Float64Array;
  scales: Float64Array;
  labels: Int32Array;
  /** Per start: rows fitted exactly (NaN until done) and iterations. */
  figures: Float64Array;
}

/** Claims starts from the job's counter and refines each, until none is left or one has fitted every row. */
export function refineStarts(job: RefinementJob, signal?: CancelSignal): void {
  const { claims, count, n, k, q } = job;
  for (let s = Atomics.add(claims, 0, 1); s < count && Atomics.load(claims, 1) === 0; s = Atomics.add(claims, 0, 1)) {
    const start = Array.from({ length: k }, (_, c) => job.starts.subarray((s * k + c) * q, (s * k + c + 1) * q));
    const fit = refineStart(job, start, signal);
    fit.coefficients.forEach((c, index) => job.coefficients.set(c, (s * k + index) * q));
    job.scales.set(fit.scales, s * k);
    job.labels.set(fit.labels, s * n);
    job.figures[2 * s + 1] = fit.iterations;
    job.figures[2 * s] = fit.exactRows;
    if (fit.exactRows === n) Atomics.store(claims, 1, 1);
  }
}

/** The rows and settings every start's refinement shares. */
interface RefinementRows extends RefinementSettings {
  design: Float64Array;
  n: number;
  q: number;
  y: Float64Array;
}

function refineStart(rows: RefinementRows, start: Float64Array[], signal?: CancelSignal): AlternatingFit {
  const { design, n, q, y, maxIterations, exactTolerance, minimumRows, rule } = rows;
  return alternatingLeastSquares(design, n, q, y, start, maxIterations, exactTolerance, minimumRows, signal, rule);
}

function readFit(job: RefinementJob, s: number): AlternatingFit {
  const { n, q, k } = job;
  return {
    coefficients: Array.from({ length: k }, (_, c) => job.coefficients.slice((s * k + c) * q, (s * k + c + 1) * q)),
    labels: job.labels.slice(s * n, (s + 1) * n),
    exactRows: job.figures[2 * s],
    scales: job.scales.slice(s * k, (s + 1) * k),
    iterations: job.figures[2 * s + 1],
  };
}
