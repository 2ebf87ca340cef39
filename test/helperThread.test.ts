import { availableParallelism } from "node:os";
import { fileURLToPath } from "node:url";
import { afterEach, describe, expect, it } from "vitest";
import { fitMixture } from "../src/engine/fitMixture";
import { standardErrors } from "../src/engine/standardErrors";
import { helperThread, useHelperThread, type HelperJob, type HelperThread } from "../src/engine/helperThread";
import { runHelperJob } from "../src/engine/mixture/helperJobs";
import { installHelperThread } from "../src/cli/helperThread";
import { createRandom } from "../src/engine/random";
import { noiselessProblem, noisyProblem } from "../src/synthetic/generateProblems";

// The helper thread may only change how long a fit takes: every sum it takes over runs in the
// same order as on one thread, so each check compares whole fits to the bit.

function fingerprint(value: unknown): string {
  return JSON.stringify(value, (key, v) => (key === "timings" ? undefined : v instanceof Float64Array ? Array.from(v) : v));
}

/** A noiseless d = 40, K = 4 fit (sub-problems, exact components) and a noisy one (d = 30, K = 3, 5,400 rows: large enough that its M-steps are split too) with standard errors. */
function fits(): string {
  const noiseless = noiselessProblem(40, 4, 20, createRandom(31));
  const noisy = noisyProblem(30, 3, 60, createRandom(32));
  const exact = fitMixture(noiseless.data, { k: 4, intercept: false, seed: 3 });
  const fit = fitMixture(noisy.data, { k: 3, intercept: true, seed: 3 });
  return fingerprint([exact.components, exact.logLikelihood, exact.memberships, fit.components, fit.logLikelihood, fit.memberships, standardErrors(noisy.data, fit)]);
}

/**
 * A helper on the calling thread, its jobs counted by kind: "works" runs each job when started;
 * "fails" does nothing and reports failure; "failsAfterWriting" runs the job, then reports
 * failure anyway (a share left written, which the caller must make again, not add to).
 */
function inlineHelper(behaviour: "works" | "fails" | "failsAfterWriting"): { helper: HelperThread; jobs: Map<string, number> } {
  const jobs = new Map<string, number>();
  const helper: HelperThread = {
    ready: () => true,
    start(job: HelperJob) {
      jobs.set(job.kind, (jobs.get(job.kind) ?? 0) + 1);
      if (behaviour !== "fails") runHelperJob(job);
    },
    finish: () => behaviour === "works",
    lastJobMs: () => 1,
  };
  return { helper, jobs };
}

afterEach(() => useHelperThread(null));

describe("the helper thread", () => {
  const alone = fits();

  it("hands over Gram sums and rows, and the fits are the same to the bit", () => {
    const { helper, jobs } = inlineHelper("works");
    useHelperThread(helper);
    expect(fits()).toBe(alone);
    expect(jobs.get("componentSums") ?? 0).toBeGreaterThan(0);
    expect(jobs.get("rows") ?? 0).toBeGreaterThan(0);
  });

  it("when a job fails, before or after writing its share, the calling thread makes that share and the fits are still the same", () => {
    for (const behaviour of ["fails", "failsAfterWriting"] as const) {
      const { helper, jobs } = inlineHelper(behaviour);
      useHelperThread(helper);
      expect(fits(), behaviour).toBe(alone);
      expect(jobs.get("componentSums") ?? 0, behaviour).toBeGreaterThan(0);
    }
  });

  it.skipIf(availableParallelism() < 2)("runs as a worker thread beside the fit, with the same fits", async () => {
    const worker = installHelperThread(fileURLToPath(new URL("./support/helperThreadEntry.cjs", import.meta.url)), []);
    expect(worker).not.toBeNull();
    try {
      const began = Date.now();
      while (!helperThread() && Date.now() - began < 20000) await new Promise((resolve) => setTimeout(resolve, 10));
      const started = helperThread();
      expect(started).not.toBeNull();
      // Count the jobs the worker finished (it reports each job's time).
      let finished = 0;
      useHelperThread({
        ready: () => started!.ready(),
        start: (job) => started!.start(job),
        finish: () => {
          const done = started!.finish();
          if (done && started!.lastJobMs() > 0) finished++;
          return done;
        },
        lastJobMs: () => started!.lastJobMs(),
      });
      expect(fits()).toBe(alone);
      expect(finished).toBeGreaterThan(10);
    } finally {
      await worker?.terminate();
    }
  }, 60000);

  it("is not started when SKEIN_THREADS is 1", () => {
    const before = process.env.SKEIN_THREADS;
    process.env.SKEIN_THREADS = "1";
    try {
      expect(installHelperThread(fileURLToPath(new URL("./support/helperThreadEntry.cjs", import.meta.url)), [])).toBeNull();
    } finally {
      if (before === undefined) delete process.env.SKEIN_THREADS;
      else process.env.SKEIN_THREADS = before;
    }
  });
});
