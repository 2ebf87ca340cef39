/**
 * A second thread the EM steps may hand half their work to: an M-step's weighted Gram sums of
 * some components, an E-step's or a residual pass's later rows, and some of the concentration
 * steps' starts (concentrationSteps.ts). Each such share depends on
 * nothing the other thread computes, and each sum runs in the same order as on one thread, so a
 * fit is the same to the bit with or without it (the log-likelihood is still summed in row
 * order, after both halves are done).
 *
 * The engine stays host-free: it never starts a thread. A host that can block on shared memory
 * (the command line, with Node's worker threads) installs one through useHelperThread; the
 * worksheet functions and the task pane run without (a workbook's runtime is not
 * cross-origin isolated, so it has no shared memory to hand rows over in).
 */

/** A share of a step (Gram sums, rows, concentration starts), run on the helper by runHelperJob (mixture/helperJobs.ts). */
export interface HelperJob {
  kind: string;
}

export interface HelperThread {
  /**
   * Starts the thread if it has not been started: asked for by the first step large enough to
   * share (helperFor), so a fit whose steps are all small never pays for a thread's start.
   */
  begin(): void;
  /** Whether the thread has started and waits for jobs (until then the steps run on their own). */
  ready(): boolean;
  /** Starts `job` on the helper thread and returns at once. */
  start(job: HelperJob): void;
  /** Blocks until the started job is done; false when it failed (the caller then does that share itself). */
  finish(): boolean;
  /** Milliseconds the last finished job took on the helper thread. */
  lastJobMs(): number;
}

let installed: HelperThread | null = null;

/** Installs the helper thread the EM steps may use (null: none, every step on the calling thread). */
export function useHelperThread(helper: HelperThread | null): void {
  installed = helper;
}

/**
 * Per kind of job, the helper's speed relative to the calling thread's (work per millisecond),
 * smoothed over the jobs so far. The two threads need not run equally fast on the same work
 * (the helper also takes the job from its port, and the two share caches), so each split
 * gives the helper the part that makes both end together. Which thread sums what never
 * changes a bit of the result, only how long the caller waits.
 */
const helperSpeeds = new Map<string, number>();

/** The part of a job of this kind to hand to the helper (a half until speeds are measured). */
export function helperShare(kind: string): number {
  const speed = helperSpeeds.get(kind) ?? 1;
  return speed / (1 + speed);
}

/** Weight of the newest measurement in the smoothed speed. */
const SPEED_SMOOTHING = 0.1;

/** Records one split job's work and time on each thread (work in any unit proportional to time). */
function recordSpeeds(kind: string, ownWork: number, ownMs: number, helperWork: number, helperMs: number): void {
  if (!(ownWork > 0 && ownMs > 0 && helperWork > 0 && helperMs > 0)) return;
  const measured = Math.min(4, Math.max(0.25, helperWork / helperMs / (ownWork / ownMs)));
  const speed = helperSpeeds.get(kind) ?? 1;
  helperSpeeds.set(kind, speed + SPEED_SMOOTHING * (measured - speed));
}

/**
 * One split step: starts `handed` on the helper, runs `own` here, waits for the helper (or, when
 * its job failed, runs `handedHere`, the same share, here), and records both threads' speeds
 * for the next split of this kind (work in any unit proportional to time). When this thread
 * had to wait, the helper's share counts from the moment it was handed over to the end of the
 * wait (its passage and the helper's waking included); otherwise by the helper's own timing.
 */
export function shareWork(helper: HelperThread, handed: HelperJob, ownWork: number, handedWork: number, own: () => void, handedHere: () => void): void {
  const began = performance.now();
  helper.start(handed);
  const ownBegan = performance.now();
  own();
  const ownEnded = performance.now();
  if (!helper.finish()) {
    handedHere();
    return;
  }
  const ended = performance.now();
  const helperMs = ended - ownEnded > WAITED_MS ? ended - began : helper.lastJobMs();
  recordSpeeds(handed.kind, ownWork, ownEnded - ownBegan, handedWork, helperMs);
}

/** A wait longer than this (5 µs) means the helper ended after this thread's share. */
const WAITED_MS = 0.005;

/**
 * The helper thread for a step estimated to take `microseconds` on one thread: the installed
 * thread when the step is long enough to split (at least `minimum`) and the thread is ready;
 * otherwise null. A step long enough that finds the thread not yet started starts it (and runs
 * on its own this time).
 */
export function helperFor(microseconds: number, minimum = HELPER_MINIMUM_MICROSECONDS): HelperThread | null {
  if (installed === null || !(microseconds >= minimum)) return null;
  if (installed.ready()) return installed;
  installed.begin();
  return null;
}

/**
 * A zeroed Float64Array the helper thread can read and write: over a SharedArrayBuffer while a
 * helper is installed, an ordinary one otherwise. The workspaces' per-row arrays come from here.
 */
export function shareableArray(length: number): Float64Array {
  return sharing() ? new Float64Array(new SharedArrayBuffer(length * 8)) : new Float64Array(length);
}

/** Zeroed 32-bit integers both threads can read and write (Atomics included): shared while a helper is installed. */
export function shareableInts(length: number): Int32Array {
  return sharing() ? new Int32Array(new SharedArrayBuffer(length * 4)) : new Int32Array(length);
}

/** A counter (one zeroed 32-bit slot) both threads can take numbers from with Atomics.add. */
export function shareableCounter(): Int32Array {
  return shareableInts(1);
}

/** Whether new arrays go to shared memory: a helper is installed (ready or still starting) and the runtime has it. */
export function sharing(): boolean {
  return installed !== null && typeof SharedArrayBuffer === "function";
}

/** Whether every array lives in shared memory (a step hands work over only then). */
export function allShared(...arrays: readonly Float64Array[]): boolean {
  return typeof SharedArrayBuffer === "function" && arrays.every((a) => a.buffer instanceof SharedArrayBuffer);
}

/**
 * Least estimated time, in microseconds, of a step's whole work for it to be split between the
 * threads: handing a share over and waiting for it cost some tens of microseconds (measured
 * here: 12-40 µs for an empty job back and forth while the helper is awake, 50-100 µs when
 * it has to be woken), and steps of a few hundred microseconds gained nothing split.
 */
export const HELPER_MINIMUM_MICROSECONDS = 500;

/**
 * Rough speeds for that estimate on this kind of machine, measured on a d = 50, K = 7
 * workspace of 2,100 rows: an M-step's Gram sums, with the gathering, weighing and block
 * overheads around them, about 1,500 multiply-adds of the sums per µs (2.3 million in 1.6 ms);
 * residuals about 1,400 multiply-adds per µs (2,100 rows x 7 components x 50 in 0.52 ms); an
 * E-step's log term, exponential and membership per row and component about as long as
 * ROW_TERM_MULTIPLY_ADDS of them (14,700 in 0.32 ms).
 */
export const GRAM_MULTIPLY_ADDS_PER_MICROSECOND = 1_500;
export const ROW_MULTIPLY_ADDS_PER_MICROSECOND = 1_400;
export const ROW_TERM_MULTIPLY_ADDS = 30;
