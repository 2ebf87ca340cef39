/**
 * Where the engine work of a worksheet function runs, so that Excel never freezes.
 *
 * Custom functions in a shared runtime run on the add-in page's one thread, together with the
 * task pane; a fit that takes seconds there would freeze both. So:
 *
 * - Large ranges (at least WORKER_MIN_CELLS numbers) go to a Web Worker (fitWorker.ts, a
 *   separate chunk that webpack builds from the `new Worker(new URL(...))` below). Cancelling
 *   terminates the worker at once, mid-fit; the next job starts a fresh one.
 * - Small ranges, and every range where no Worker exists (Node, the tests) or the worker
 *   cannot start (a host that forbids it), run on the page after yielding once to the event
 *   loop, so Excel can deliver a cancellation or the other formulas of the same recalculation
 *   first. Such a fit, once started, runs to its end: the engine checks the cancel flag
 *   between passes, but nothing can raise it while the single thread is busy fitting.
 */
import { SkeinError, type SkeinErrorCode } from "../engine/errors";
import type { MixtureFit } from "../engine/mixtureTypes";
import type { ScanResult } from "../engine/trustTypes";
import { Cancellation } from "./cancellation";
import { runFitJob, runScanJob, type EngineJob, type FitJob, type ScanJob } from "./fitJobs";

/**
 * Below this many numbers (rows x (predictors + 1)) a fit runs on the page: it takes a few
 * milliseconds, less than starting a worker. Above it the fit goes to a worker even when it is
 * still fairly quick, because the engine's restarts make small fits cost more than their size
 * suggests (bench/functionsBench.ts, in Node: about 150 ms for 200 rows x 10 predictors with
 * K = 3, 280 ms for 1,000 rows), and 100 ms is already a visible stall.
 */
export const WORKER_MIN_CELLS = 1000;
/** Workers running at once; further jobs wait for one to finish. */
const MAX_WORKERS = 2;

export interface WorkerRequest {
  id: number;
  job: EngineJob;
}

export type WorkerReply =
  | { id: number; ok: true; result: unknown }
  | { id: number; ok: false; code?: string; message: string };

/** How many engine fits and scans the worksheet functions have started, cancelled ones before their start not counted (tests assert on these). */
export const engineCallCounts = { fits: 0, scans: 0 };

/** Where the last job ran, for tests and the bench to report honestly. */
export let lastJobPlace: "page" | "worker" = "page";

export function runFit(job: FitJob, cancellation: Cancellation): Promise<MixtureFit> {
  return runJob(job, cancellation) as Promise<MixtureFit>;
}

export function runScan(job: ScanJob, cancellation: Cancellation): Promise<ScanResult> {
  return runJob(job, cancellation) as Promise<ScanResult>;
}

function cellsOf(job: EngineJob): number {
  return job.data.n * (job.data.p + 1);
}

function count(job: EngineJob, by = 1): void {
  if (job.kind === "fit") engineCallCounts.fits += by;
  else engineCallCounts.scans += by;
}

function uncount(job: EngineJob): void {
  count(job, -1);
}

async function runJob(job: EngineJob, cancellation: Cancellation): Promise<unknown> {
  if (workersUsable() && cellsOf(job) >= WORKER_MIN_CELLS) {
    try {
      lastJobPlace = "worker";
      return await pool.run(job, cancellation);
    } catch (error) {
      if (!(error instanceof WorkerUnavailable)) throw error;
      // The job never ran: it is counted again where it does run.
      uncount(job);
      workersBroken = true;
    }
  }
  lastJobPlace = "page";
  return runOnPage(job, cancellation);
}

async function runOnPage(job: EngineJob, cancellation: Cancellation): Promise<unknown> {
  await new Promise<void>((resolve) => setTimeout(resolve, 0));
  if (cancellation.aborted) throw new SkeinError("cancelled", "The calculation was cancelled before it started.");
  count(job);
  return job.kind === "fit" ? runFitJob(job, cancellation) : runScanJob(job, cancellation);
}

let workersBroken = false;

function workersUsable(): boolean {
  return !workersBroken && typeof Worker !== "undefined";
}

/** The worker script could not be started or loaded; the job falls back to the page. */
class WorkerUnavailable extends Error {}

const SKEIN_CODES: readonly string[] = ["bad-input", "numeric", "not-found", "cancelled"];

class WorkerPool {
  private idle: Worker[] = [];
  private running = 0;
  private readonly queue: (() => void)[] = [];
  private nextId = 1;

  async run(job: EngineJob, cancellation: Cancellation): Promise<unknown> {
    if (this.running >= MAX_WORKERS) await new Promise<void>((resolve) => this.queue.push(resolve));
    this.running++;
    try {
      if (cancellation.aborted) throw new SkeinError("cancelled", "The calculation was cancelled before it started.");
      return await this.runOn(this.idle.pop() ?? this.create(), job, cancellation);
    } finally {
      this.running--;
      this.queue.shift()?.();
    }
  }

  private create(): Worker {
    try {
      return new Worker(new URL("./fitWorker.ts", import.meta.url));
    } catch (error) {
      throw new WorkerUnavailable(error instanceof Error ? error.message : String(error));
    }
  }

  private runOn(worker: Worker, job: EngineJob, cancellation: Cancellation): Promise<unknown> {
    const id = this.nextId++;
    return new Promise<unknown>((resolve, reject) => {
      let done = false;
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
        finish(true);
        if (reply.ok) resolve(reply.result);
        else if (reply.code !== undefined && SKEIN_CODES.includes(reply.code)) reject(new SkeinError(reply.code as SkeinErrorCode, reply.message));
        else reject(new Error(reply.message));
      };
      worker.onerror = (event: ErrorEvent) => {
        if (done) return;
        event.preventDefault();
        finish(false);
        // An error before any reply means the script itself failed (not found, blocked, syntax).
        reject(new WorkerUnavailable(event.message || "the fit worker could not start"));
      };
      cancellation.onAbort(() => {
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
