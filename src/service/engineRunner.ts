/**
 * Where the engine service runs a request, so that neither Excel nor the task pane freezes.
 *
 * Custom functions in a shared runtime run on the add-in page's one thread, together with the
 * task pane; a fit that takes seconds there would freeze both. So:
 *
 * - Large requests (at least WORKER_MIN_CELLS numbers), and every request a caller sends with
 *   place "worker" (the pane's scans and fits, which report progress and can be cancelled by
 *   a click), go to a Web Worker (engineWorker.ts, a separate chunk that webpack builds from
 *   the `new Worker(new URL(...))` below). Cancelling terminates the worker at once, mid-fit;
 *   the next request starts a fresh one.
 * - Small requests, and every request where no Worker exists (Node, the tests) or the worker
 *   cannot start (a host that forbids it), run on the page after yielding once to the event
 *   loop, so a cancellation or the other formulas of the same recalculation come first. Such a
 *   request, once started, runs to its end: the engine checks the cancel flag between passes,
 *   but nothing can raise it while the single thread is busy fitting.
 */
import { SkeinError, type SkeinErrorCode } from "../engine/errors";
import type { Cancellation } from "./cancellation";
import { jobCells, runEngineJob, type EngineJob, type JobResult, type Progress } from "./engineJobs";

/**
 * Below this many numbers (rows x (predictors + 1)) a request runs on the page when the caller
 * leaves the place to the service: it takes a few milliseconds, less than starting a worker.
 * Above it the request goes to a worker even when it is still fairly quick, because the
 * engine's restarts make small fits cost more than their size suggests
 * (bench/functionsBench.ts, in Node: about 150 ms for 200 rows x 10 predictors with K = 3,
 * 280 ms for 1,000 rows), and 100 ms is already a visible stall.
 */
export const WORKER_MIN_CELLS = 1000;
/** Workers running at once; further requests wait for one to finish. */
const MAX_WORKERS = 2;

export interface WorkerRequest {
  id: number;
  job: EngineJob;
}

export type WorkerReply =
  | { id: number; kind: "progress"; k: number; kMax: number }
  | { id: number; kind: "done"; result: unknown }
  | { id: number; kind: "failed"; code?: string; message: string };

/** "auto": by size (WORKER_MIN_CELLS); "worker": in a worker whenever one can start. */
export type Place = "auto" | "worker";

export interface RunControl {
  cancellation: Cancellation;
  onProgress?: Progress;
  place?: Place;
}

/** How many engine fits and scans the service has started, cancelled ones before their start not counted (tests assert on these). */
export const engineCallCounts = { fits: 0, scans: 0 };

/** Where the last request ran, for tests and the bench to report honestly. */
export let lastJobPlace: "page" | "worker" = "page";

function count(job: EngineJob, by = 1): void {
  if (job.kind === "fit") engineCallCounts.fits += by;
  else if (job.kind === "scan") engineCallCounts.scans += by;
}

export async function runJob<J extends EngineJob>(job: J, control: RunControl): Promise<JobResult<J>> {
  return (await runAnywhere(job, control)) as JobResult<J>;
}

async function runAnywhere(job: EngineJob, control: RunControl): Promise<unknown> {
  const wanted = control.place === "worker" || jobCells(job) >= WORKER_MIN_CELLS;
  if (wanted && workersUsable()) {
    try {
      lastJobPlace = "worker";
      return await pool.run(job, control);
    } catch (error) {
      if (!(error instanceof WorkerUnavailable)) throw error;
      // The request never ran: it is counted again where it does run.
      count(job, -1);
      workersBroken = true;
    }
  }
  lastJobPlace = "page";
  return runOnPage(job, control);
}

async function runOnPage(job: EngineJob, control: RunControl): Promise<unknown> {
  await new Promise<void>((resolve) => setTimeout(resolve, 0));
  if (control.cancellation.aborted) throw new SkeinError("cancelled", "The calculation was cancelled before it started.");
  count(job);
  return runEngineJob(job, control.cancellation, control.onProgress);
}

let workersBroken = false;

function workersUsable(): boolean {
  return !workersBroken && typeof Worker !== "undefined";
}

/** The worker script could not be started or loaded; the request falls back to the page. */
class WorkerUnavailable extends Error {}

const SKEIN_CODES: readonly string[] = ["bad-input", "numeric", "not-found", "cancelled"];

class WorkerPool {
  private idle: Worker[] = [];
  private running = 0;
  private readonly queue: (() => void)[] = [];
  private nextId = 1;

  async run(job: EngineJob, control: RunControl): Promise<unknown> {
    if (this.running >= MAX_WORKERS) await new Promise<void>((resolve) => this.queue.push(resolve));
    this.running++;
    try {
      if (control.cancellation.aborted) throw new SkeinError("cancelled", "The calculation was cancelled before it started.");
      return await this.runOn(this.idle.pop() ?? this.create(), job, control);
    } finally {
      this.running--;
      this.queue.shift()?.();
    }
  }

  private create(): Worker {
    try {
      return new Worker(new URL("./engineWorker.ts", import.meta.url));
    } catch (error) {
      throw new WorkerUnavailable(error instanceof Error ? error.message : String(error));
    }
  }

  private runOn(worker: Worker, job: EngineJob, control: RunControl): Promise<unknown> {
    const id = this.nextId++;
    return new Promise<unknown>((resolve, reject) => {
      let done = false;
      let replied = false;
      const finish = (keepWorker: boolean) => {
        done = true;
        worker.onmessage = null;
        worker.onerror = null;
        if (keepWorker) this.idle.push(worker);
        else worker.terminate();
      };
      worker.onmessage = (event: MessageEvent<WorkerReply>) => {
        const reply = event.data;
        if (reply.id !== id || done) return;
        replied = true;
        if (reply.kind === "progress") {
          control.onProgress?.(reply.k, reply.kMax);
          return;
        }
        finish(true);
        if (reply.kind === "done") resolve(reply.result);
        else if (reply.code !== undefined && SKEIN_CODES.includes(reply.code)) reject(new SkeinError(reply.code as SkeinErrorCode, reply.message));
        else reject(new Error(reply.message));
      };
      worker.onerror = (event: ErrorEvent) => {
        if (done) return;
        event.preventDefault();
        finish(false);
        // An error before any reply means the script itself failed (not found, blocked, syntax);
        // after one, the engine died mid-request (out of memory), which is not the page's to redo.
        if (!replied) reject(new WorkerUnavailable(event.message || "the engine worker could not start"));
        else reject(new SkeinError("numeric", `The engine stopped unexpectedly (${event.message || "worker error"}); try again, or with fewer rows.`));
      };
      control.cancellation.onAbort(() => {
        if (done) return;
        finish(false);
        reject(new SkeinError("cancelled", "The calculation was cancelled."));
      });
      count(job);
      worker.postMessage({ id, job } satisfies WorkerRequest);
    });
  }
}

const pool = new WorkerPool();
