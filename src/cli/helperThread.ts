import { availableParallelism } from "node:os";
import { existsSync, realpathSync } from "node:fs";
import * as path from "node:path";
import { MessageChannel, Worker, receiveMessageOnPort, workerData, type MessagePort } from "node:worker_threads";
import { useHelperThread, type HelperJob, type HelperThread } from "../engine/helperThread";
import { runHelperJob } from "../engine/mixture/helperJobs";

/**
 * The command line's helper thread (the engine's side: src/engine/helperThread.ts): a Node
 * worker thread running skein-helper.js (helperEntry.ts), which waits on a shared flag, takes
 * each job from its message port without returning to its event loop, and flags the job done.
 * The calling thread blocks on that flag (Atomics.wait), so the engine's steps stay
 * synchronous. A helper that fails a job, or ends, is not used again.
 */

/** Slots of the shared control array: the helper is waiting for jobs; a job was posted; the job's state. */
const READY = 0;
const POSTED = 1;
const STATE = 2;
/** Slots of the shared timing array: how long the last job took on the helper, in milliseconds. */
const JOB_MS = 0;
/** STATE values. */
const RUNNING = 0;
const DONE = 1;
const FAILED = 2;

/** Jobs the helper thread has finished in this process (the verbose output's threads line). */
let finishedJobs = 0;
let helperInstalled = false;
let helperStarted = false;

/** One line for --verbose: how many threads the fit ran on. */
export function threadsLine(): string {
  if (!helperInstalled) return "Threads: 1.";
  if (!helperStarted) return "Threads: 1 (no step of this fit was large enough to share with a second thread).";
  if (finishedJobs === 0) return "Threads: 1 (a second thread was started, but no step of this fit was handed to it).";
  return `Threads: 2 (the second thread took part in ${finishedJobs.toLocaleString("en-US")} steps of the fit; SKEIN_THREADS=1 keeps to one).`;
}

/** The helper thread's workerData. */
interface HelperData {
  control: Int32Array;
  timing: Float64Array;
  port: MessagePort;
}

/**
 * The helper thread's script: skein-helper.js beside the running skein.js (the built command
 * line), or null (run from the TypeScript sources, the command keeps to one thread).
 */
export function helperScript(): string | null {
  const entry = process.argv[1];
  if (!entry) return null;
  try {
    const script = path.join(path.dirname(realpathSync(entry)), "skein-helper.js");
    return existsSync(script) ? script : null;
  } catch {
    return null;
  }
}

/** A helper thread installed for the engine: its worker once a step has asked for it. */
export interface InstalledHelper {
  /** The worker (unreferenced: it never keeps the process alive), or null before it is started. */
  worker(): Worker | null;
}

/**
 * Installs a helper thread for the engine, when the machine has a second core and SKEIN_THREADS
 * is not 1; returns null otherwise. The worker, running `script` (helperScript()), is started
 * only when the first step large enough to share asks for it: a fit of a small sheet shares no
 * step, and starting a thread there costs it time (the new thread's start-up competes with
 * the compiler's background work for the second core). `execArgv`: Node options for the
 * worker (none by default: it needs none of the process's own).
 */
export function installHelperThread(script: string, execArgv: string[] = []): InstalledHelper | null {
  if (availableParallelism() < 2 || process.env.SKEIN_THREADS === "1" || typeof SharedArrayBuffer !== "function") return null;
  const control = new Int32Array(new SharedArrayBuffer(3 * 4));
  const timing = new Float64Array(new SharedArrayBuffer(8));
  const channel = new MessageChannel();
  let worker: Worker | null = null;
  let failed = false;
  const begin = () => {
    if (worker !== null || failed) return;
    try {
      worker = new Worker(script, { workerData: { control, timing, port: channel.port2 } satisfies HelperData, transferList: [channel.port2], execArgv });
    } catch {
      failed = true;
      return;
    }
    worker.unref();
    helperStarted = true;
    // A helper that cannot start (or stops) is never used again; the steps then run on one thread.
    worker.on("error", () => {
      failed = true;
    });
  };
  const port = channel.port1;
  const helper: HelperThread = {
    begin,
    ready: () => !failed && Atomics.load(control, READY) === 1,
    start(job: HelperJob): void {
      Atomics.store(control, STATE, RUNNING);
      port.postMessage(job);
      Atomics.store(control, POSTED, 1);
      Atomics.notify(control, POSTED);
    },
    finish(): boolean {
      awaitChange(control, STATE, RUNNING);
      if (Atomics.load(control, STATE) === DONE) {
        finishedJobs++;
        return true;
      }
      failed = true;
      return false;
    },
    lastJobMs: () => timing[JOB_MS],
  };
  useHelperThread(helper);
  helperInstalled = true;
  return { worker: () => worker };
}

/**
 * How long a thread checks a flag before it sleeps on it: waking a sleeping thread takes 50-100
 * µs on this kind of machine (a futex), as long as a mid-sized job, while the EM steps hand
 * jobs over every few hundred microseconds; checking for a few milliseconds first answers in a
 * few microseconds.
 */
const SPIN_MS = 3;

/** Returns once control[slot] is no longer `value`: checked for SPIN_MS, then slept on. */
function awaitChange(control: Int32Array, slot: number, value: number): void {
  const began = performance.now();
  do {
    for (let spin = 0; spin < 1000; spin++) if (Atomics.load(control, slot) !== value) return;
  } while (performance.now() - began < SPIN_MS);
  while (Atomics.load(control, slot) === value) Atomics.wait(control, slot, value);
}

/** The helper thread's loop: wait for a posted job, run it, flag it done (or failed), forever. */
export function runHelperLoop(): void {
  const { control, timing, port } = workerData as HelperData;
  // Should the thread end, a caller waiting on a job is released and uses it no more.
  process.on("exit", () => {
    Atomics.store(control, READY, 0);
    Atomics.store(control, STATE, FAILED);
    Atomics.notify(control, STATE);
  });
  Atomics.store(control, READY, 1);
  for (;;) {
    awaitChange(control, POSTED, 0);
    Atomics.store(control, POSTED, 0);
    // Timed from here: taking the job from the port is part of the helper's share.
    const began = performance.now();
    let state = FAILED;
    try {
      const received = receiveMessageOnPort(port);
      if (received) {
        runHelperJob(received.message as HelperJob);
        timing[JOB_MS] = performance.now() - began;
        state = DONE;
      }
    } catch {
      state = FAILED;
    }
    Atomics.store(control, STATE, state);
    Atomics.notify(control, STATE);
  }
}
