import { availableParallelism } from "node:os";
import { fileURLToPath } from "node:url";
import { afterEach, describe, expect, it } from "vitest";
import { fitMixture } from "../src/engine/fitMixture";
import { standardErrors } from "../src/engine/standardErrors";
import { helperFor, shareableArray, useHelperThread, type HelperJob, type HelperThread } from "../src/engine/helperThread";
import { runHelperJob } from "../src/engine/mixture/helperJobs";
import type { RowsJob } from "../src/engine/mixture/eStep";
import { ConcentrationSteps, concentrationRuns, type ConcentrationJob } from "../src/engine/mixture/concentrationSteps";
import { alternatingLeastSquares, type AlternatingFit } from "../src/engine/warmStart/alternatingLeastSquares";
import { bestRefinement, betterFit, type RefinementJob, type RefinementSettings } from "../src/engine/warmStart/refinementRuns";
import { installHelperThread } from "../src/cli/helperThread";
import { createRandom } from "../src/engine/random";
import { noiselessProblem, noisyProblem } from "../src/synthetic/generateProblems";

// The helper thread may only change how long a fit takes: every sum it takes over runs in the
// same order as on one thread, so each check compares whole fits to the bit.

function fingerprint(value: unknown): string {
  return JSON.stringify(value, (key, v) => (key === "timings" ? undefined : v instanceof Float64Array ? Array.from(v) : v));
}

/**
 * A noiseless d = 40, K = 4 fit (sub-problems, exact components), a noisy one (d = 30, K = 3,
 * 5,400 rows: large enough that its M-steps are split too) with standard errors, and the noisy
 * one with the background (its E-steps carry the background's term).
 */
function fits(): string {
  const noiseless = noiselessProblem(40, 4, 20, createRandom(31));
  const noisy = noisyProblem(30, 3, 60, createRandom(32));
  const exact = fitMixture(noiseless.data, { k: 4, intercept: false, seed: 3 });
  const fit = fitMixture(noisy.data, { k: 3, intercept: true, seed: 3 });
  const withBackground = fitMixture(noisy.data, { k: 3, intercept: true, seed: 3, background: true });
  return fingerprint([exact.components, exact.logLikelihood, exact.memberships, fit.components, fit.logLikelihood, fit.memberships, standardErrors(noisy.data, fit), withBackground]);
}

/**
 * A helper on the calling thread, its jobs counted by kind: "works" runs each job when started;
 * "fails" does nothing and reports failure; "failsAfterWriting" runs the job, then reports
 * failure anyway (a share left written, which the caller must make again, not add to).
 */
function inlineHelper(behaviour: "works" | "fails" | "failsAfterWriting"): { helper: HelperThread; jobs: Map<string, number> } {
  const jobs = new Map<string, number>();
  const helper: HelperThread = {
    begin: () => undefined,
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

/** A helper that claims the first start from the job's counter, writes nothing and fails. */
function claimsOneAndFails(counter: (job: HelperJob) => Int32Array): HelperThread {
  return { begin: () => undefined, ready: () => true, start: (job) => void Atomics.add(counter(job), 0, 1), finish: () => false, lastJobMs: () => 1 };
}

afterEach(() => useHelperThread(null));

/**
 * Concentration steps from each component of a noiseless d = 30, K = 5 problem moved 5% away
 * (6,000 rows: enough work to be shared), run by concentrationRuns; the same starts one after
 * the other on this thread, as a fingerprint to compare with.
 */
function concentrationCase(): { run: () => string; alone: string } {
  const problem = noiselessProblem(30, 5, 40, createRandom(33));
  const { x, y, n, p } = problem.data;
  const random = createRandom(34);
  const starts = problem.coefficients.map((beta) => beta.map((value) => value * (1 + 0.05 * (2 * random.next() - 1))));
  const subsets = starts.map(() => Math.floor(n / 10));
  // The rows copied into memory a helper can read (shared while one is installed), as a fit's are.
  const run = () => {
    const shared = { x: shareableArray(x.length), y: shareableArray(y.length) };
    shared.x.set(x);
    shared.y.set(y);
    return fingerprint(concentrationRuns(shared.x, n, p, shared.y, starts, subsets, 20, 1e-9));
  };
  const steps = new ConcentrationSteps(x, n, p, y);
  return { run, alone: fingerprint(starts.map((start, s) => steps.run(start, subsets[s], 20, 1e-9))) };
}

/**
 * The warm start's refinement of several starts on a noiseless d = 40, K = 5 problem (16,000
 * rows: each start's refinement long enough to be shared): two starts drawn anywhere, then
 * one 2% away from every component (it fits every row exactly) and one more after it (never
 * begun). bestRefinement's result, and the same starts one after the other on this thread
 * (best by betterFit, ending at the first exact one), as fingerprints to compare.
 */
function refinementCase(): { run: () => string; alone: string; settings: RefinementSettings } {
  const problem = noiselessProblem(40, 5, 80, createRandom(35));
  const { x, y, n, p } = problem.data;
  const random = createRandom(36);
  const away = (share: number) => problem.coefficients.map((beta) => Float64Array.from(beta, (value) => value * (1 + share * (2 * random.next() - 1))));
  const anywhere = () => problem.coefficients.map((beta) => Float64Array.from(beta, () => 2 * random.next() - 1));
  const starts = [anywhere(), anywhere(), away(0.02), away(0.02)];
  const settings: RefinementSettings = { maxIterations: 25, exactTolerance: 1e-9, minimumRows: p + 1, rule: "classification" };
  const run = () => {
    const shared = { x: shareableArray(x.length), y: shareableArray(y.length) };
    shared.x.set(x);
    shared.y.set(y);
    return fingerprint(bestRefinement(shared.x, n, p, shared.y, starts, settings));
  };
  let best: AlternatingFit | null = null;
  let refined = 0;
  for (const start of starts) {
    const fit = alternatingLeastSquares(x, n, p, y, start, settings.maxIterations, settings.exactTolerance, settings.minimumRows, undefined, settings.rule);
    refined++;
    if (!best || betterFit(fit, best)) best = fit;
    if (best.exactRows === n) break;
  }
  expect(refined, "starts refined one after the other").toBe(3);
  expect(best!.exactRows, "the third start fits every row").toBe(n);
  return { run, alone: fingerprint(best), settings };
}

describe("the helper thread", () => {
  const alone = fits();

  it("hands over Gram sums and rows, the background's E-step rows too, and the fits are the same to the bit", () => {
    const { helper, jobs } = inlineHelper("works");
    let backgroundRows = 0;
    useHelperThread({ ...helper, start: (job: HelperJob) => {
      if (job.kind === "rows" && (job as RowsJob).terms?.extra) backgroundRows++;
      helper.start(job);
    } });
    expect(fits()).toBe(alone);
    expect(jobs.get("componentSums") ?? 0).toBeGreaterThan(0);
    expect(jobs.get("rows") ?? 0).toBeGreaterThan(0);
    expect(backgroundRows).toBeGreaterThan(0);
  });

  it("takes its shares once ready when it was still starting as the fit began, the fits the same to the bit", () => {
    // The command line starts its thread when the first step large enough to share asks for it;
    // the thread is ready some time later, and the steps in between run on their own.
    const problem = noisyProblem(30, 3, 60, createRandom(32));
    const fitOf = () => fingerprint(fitMixture(problem.data, { k: 3, intercept: true, seed: 3 }));
    const oneThread = fitOf();
    const { helper, jobs } = inlineHelper("works");
    let begun = 0;
    let asked = 0;
    useHelperThread({ ...helper, begin: () => void begun++, ready: () => begun > 0 && ++asked > 1 });
    expect(fitOf()).toBe(oneThread);
    expect(begun).toBeGreaterThan(0);
    expect(asked).toBeGreaterThan(1);
    expect(jobs.get("componentSums") ?? 0).toBeGreaterThan(0);
  });

  it("when a job fails, before or after writing its share, the calling thread makes that share and the fits are still the same", () => {
    for (const behaviour of ["fails", "failsAfterWriting"] as const) {
      const { helper, jobs } = inlineHelper(behaviour);
      useHelperThread(helper);
      expect(fits(), behaviour).toBe(alone);
      expect(jobs.get("componentSums") ?? 0, behaviour).toBeGreaterThan(0);
    }
  });

  it("shares concentration steps start by start, and runs a start the helper claimed but left unfinished", () => {
    const { run, alone } = concentrationCase();
    const landed = JSON.parse(alone) as { exactRows: number }[];
    expect(landed.filter((result) => result.exactRows > 30).length, "starts that land their component").toBeGreaterThan(0);
    for (const behaviour of ["works", "fails", "failsAfterWriting"] as const) {
      const { helper, jobs } = inlineHelper(behaviour);
      useHelperThread(helper);
      expect(run(), behaviour).toBe(alone);
      expect(jobs.get("concentration"), behaviour).toBe(1);
    }
    useHelperThread(claimsOneAndFails((job) => (job as ConcentrationJob).next));
    expect(run()).toBe(alone);
  });

  it("shares the warm start's refinements start by start, begins none after an exact one, and refines a start the helper claimed but left unfinished", () => {
    const { run, alone } = refinementCase();
    for (const behaviour of ["works", "fails", "failsAfterWriting"] as const) {
      const { helper, jobs } = inlineHelper(behaviour);
      let begun = 0;
      useHelperThread({ ...helper, start: (job) => {
        helper.start(job);
        begun = Atomics.load((job as RefinementJob).claims, 0);
      } });
      expect(run(), behaviour).toBe(alone);
      expect(jobs.get("refinement"), behaviour).toBe(1);
      // The inline helper ran first: it claimed the three starts up to the exact one, and one claim more that it did not begin.
      if (behaviour !== "fails") expect(begun, behaviour).toBe(4);
    }
    useHelperThread(claimsOneAndFails((job) => (job as RefinementJob).claims));
    expect(run()).toBe(alone);
  });

  it.skipIf(availableParallelism() < 2)("starts its worker only when a step is large enough to share", () => {
    const installed = installHelperThread(fileURLToPath(new URL("./support/helperThreadEntry.cjs", import.meta.url)), []);
    expect(installed).not.toBeNull();
    // A small noisy sheet (600 rows, 3 predictors, K = 2): none of its steps reaches the split's minimum.
    const small = noisyProblem(3, 2, 100, createRandom(35));
    const fit = fitMixture(small.data, { k: 2, intercept: true, seed: 1 });
    expect(fit.components).toHaveLength(2);
    standardErrors(small.data, fit);
    expect(installed!.worker()).toBeNull();
    // A step below the minimum neither gets the thread nor starts it.
    expect(helperFor(100)).toBeNull();
    expect(installed!.worker()).toBeNull();
  });

  it.skipIf(availableParallelism() < 2)("runs as a worker thread beside the fit, with the same fits", async () => {
    const installed = installHelperThread(fileURLToPath(new URL("./support/helperThreadEntry.cjs", import.meta.url)), []);
    expect(installed).not.toBeNull();
    try {
      // The first step long enough starts the worker and runs on its own; later ones get it once it is ready.
      expect(helperFor(Infinity)).toBeNull();
      expect(installed!.worker()).not.toBeNull();
      const began = Date.now();
      while (!helperFor(Infinity) && Date.now() - began < 20000) await new Promise((resolve) => setTimeout(resolve, 10));
      const started = helperFor(Infinity);
      expect(started).not.toBeNull();
      // Count the jobs the worker finished (it reports each job's time).
      let finished = 0;
      useHelperThread({
        begin: () => started!.begin(),
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
      const concentration = concentrationCase();
      expect(concentration.run()).toBe(concentration.alone);
      const refinement = refinementCase();
      expect(refinement.run()).toBe(refinement.alone);
    } finally {
      await installed?.worker()?.terminate();
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
