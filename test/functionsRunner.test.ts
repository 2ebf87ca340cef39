import { afterEach, beforeAll, describe, expect, it } from "vitest";
import { createRandom } from "../src/engine/random";
import { fit, labels } from "../src/functions/functions";
import { engineCallCounts, WORKER_MIN_CELLS, type WorkerReply, type WorkerRequest } from "../src/service/engineRunner";
import * as runner from "../src/service/engineRunner";
import { engineService } from "../src/service/engineService";
import { Cancellation } from "../src/service/cancellation";
import { SkeinError } from "../src/engine/errors";
import { buildDesign } from "../src/engine/design";
import { permuteComponents } from "../src/engine/alignComponents";
import { installCustomFunctionsDouble, WorksheetErrorDouble } from "./support/customFunctionsDouble";

/*
 * The path that keeps Excel responsive: large fits go to the fit worker. Node has no Web
 * Worker, so a stand-in plays the browser's part: it runs the real worker script
 * (src/service/engineWorker.ts, loaded once into a fake worker scope) on this thread after a
 * turn of the event loop, passes messages through structuredClone as the browser does, and
 * records terminate(). A stand-in for Excel's CustomFunctions error class is installed too.
 */

type Mode = "works" | "fails-to-load";
let mode: Mode = "works";
let terminations = 0;
const workerUrls: string[] = [];
const replyTo = new Map<number, FakeWorker>();
const workerScope = {
  onmessage: null as ((event: { data: WorkerRequest }) => void) | null,
  postMessage(reply: WorkerReply) {
    const worker = replyTo.get(reply.id);
    if (reply.kind !== "progress") replyTo.delete(reply.id);
    if (worker && !worker.terminated) worker.onmessage?.({ data: structuredClone(reply) } as MessageEvent<WorkerReply>);
  },
};

class FakeWorker {
  terminated = false;
  onmessage: ((event: MessageEvent<WorkerReply>) => void) | null = null;
  onerror: ((event: ErrorEvent) => void) | null = null;

  constructor(url: URL) {
    workerUrls.push(String(url));
  }

  postMessage(request: WorkerRequest): void {
    if (mode === "fails-to-load") {
      setTimeout(() => this.onerror?.({ message: "script blocked", preventDefault() {} } as ErrorEvent), 0);
      return;
    }
    replyTo.set(request.id, this);
    const copy = structuredClone(request);
    setTimeout(() => workerScope.onmessage!({ data: copy }), 0);
  }

  terminate(): void {
    this.terminated = true;
    terminations++;
  }
}

beforeAll(async () => {
  const scope = globalThis as Record<string, unknown>;
  installCustomFunctionsDouble();
  scope.self = workerScope;
  await import("../src/service/engineWorker");
});

afterEach(() => {
  engineService.clear();
  delete (globalThis as Record<string, unknown>).Worker;
  mode = "works";
});

function useWorkers(): void {
  (globalThis as Record<string, unknown>).Worker = FakeWorker;
}

/** Invented demo data: y = 2 + 3x or y = −1 − 2x with noise SD 0.2, x in [−5, 5]. */
function demo(rows: number, seed: number): { y: number[][]; x: number[][] } {
  const random = createRandom(seed);
  const y: number[][] = [];
  const x: number[][] = [];
  for (let i = 0; i < rows; i++) {
    const xv = 10 * random.next() - 5;
    y.push([(i % 3 === 0 ? 2 + 3 * xv : -1 - 2 * xv) + 0.2 * random.normal()]);
    x.push([xv]);
  }
  return { y, x };
}

describe("where fits run", () => {
  it("sends ranges of at least WORKER_MIN_CELLS numbers to the fit worker, with the same result as on the page", async () => {
    const rows = Math.ceil(WORKER_MIN_CELLS / 2) + 10;
    const { y, x } = demo(rows, 3);
    useWorkers();
    const before = workerUrls.length;
    const inWorker = await fit(y, x, 2);
    expect(runner.lastJobPlace).toBe("worker");
    expect(workerUrls.length - before).toBe(1);
    expect(workerUrls.at(-1)).toMatch(/engineWorker\.ts$/);

    engineService.clear();
    delete (globalThis as Record<string, unknown>).Worker;
    const onPage = await fit(y, x, 2);
    expect(runner.lastJobPlace).toBe("page");
    // Same code, same seed: bit for bit.
    expect(inWorker).toEqual(onPage);
  });

  it("keeps small ranges on the page", async () => {
    const { y, x } = demo(60, 5);
    useWorkers();
    await fit(y, x, 2);
    expect(runner.lastJobPlace).toBe("page");
  });

  it("reuses an idle worker for the next fit", async () => {
    useWorkers();
    await fit(...(Object.values(demo(600, 7)) as [number[][], number[][]]), 2);
    const before = workerUrls.length;
    await fit(...(Object.values(demo(600, 8)) as [number[][], number[][]]), 2);
    expect(runner.lastJobPlace).toBe("worker");
    expect(workerUrls.length - before).toBe(0);
  });

  it("turns an engine error raised inside the worker back into the engine's error", async () => {
    useWorkers();
    const { y, x } = demo(600, 9);
    const data = { y: Float64Array.from(y, (r) => r[0]), x: Float64Array.from(x, (r) => r[0]), n: 600, p: 1 };
    // k = 0 passes no check of the adapter (it is called directly here); fitMixture rejects it in the worker.
    const failure = runner.runJob({ kind: "fit", data, options: { k: 0 } }, { cancellation: new Cancellation() });
    await expect(failure).rejects.toBeInstanceOf(SkeinError);
    await expect(failure).rejects.toMatchObject({ code: "bad-input" });
    expect(runner.lastJobPlace).toBe("worker");
  });
});

describe("cancelling a fit in the worker", () => {
  it("terminates the worker and rejects the call; the next call fits afresh", async () => {
    useWorkers();
    const { y, x } = demo(800, 11);
    const invocation: { address: string; onCanceled?: () => void } = { address: "Sheet1!A1" };
    const terminatedBefore = terminations;
    const pending = fit(y, x, 2, null as never, invocation);
    // Let the job reach the worker, then cancel as Excel does when an input changes.
    await new Promise((resolve) => setTimeout(resolve, 0));
    invocation.onCanceled!();
    const error = (await pending.catch((e: unknown) => e)) as WorksheetErrorDouble;
    expect(error.code).toBe("#N/A");
    expect(terminations - terminatedBefore).toBe(1);
    const again = await fit(y, x, 2);
    expect(again).toHaveLength(2);
  });
});

describe("the engine worker's protocol", () => {
  it("reports a scan's progress from the worker, one message per K, and gives the page's result", async () => {
    useWorkers();
    const { y, x } = demo(80, 17);
    const data = { y: Float64Array.from(y, (r) => r[0]), x: Float64Array.from(x, (r) => r[0]), n: 80, p: 1 };
    const progress: string[] = [];
    const inWorker = await runner.runJob({ kind: "scan", data, options: { kMax: 3, seed: 2 } }, { cancellation: new Cancellation(), place: "worker", onProgress: (k, of) => progress.push(`${k}/${of}`) });
    expect(runner.lastJobPlace).toBe("worker");
    expect(progress).toEqual(["1/3", "2/3", "3/3"]);
    delete (globalThis as Record<string, unknown>).Worker;
    const onPage = await runner.runJob({ kind: "scan", data, options: { kMax: 3, seed: 2 } }, { cancellation: new Cancellation() });
    expect(runner.lastJobPlace).toBe("page");
    expect(inWorker.rows.map((r) => r.bic)).toEqual(onPage.rows.map((r) => r.bic));
  });
});

describe("a host where the worker cannot start", () => {
  it("falls back to the page and stays there", async () => {
    useWorkers();
    mode = "fails-to-load";
    const { y, x } = demo(700, 13);
    const before = engineCallCounts.fits;
    const result = await labels(y, x, 2);
    expect(result).toHaveLength(700);
    expect(runner.lastJobPlace).toBe("page");
    expect(engineCallCounts.fits - before).toBe(1);
    mode = "works";
    await fit(...(Object.values(demo(700, 14)) as [number[][], number[][]]), 2);
    expect(runner.lastJobPlace).toBe("page");
  });
});

describe("the engine service's cache", () => {
  it("hands a cached fit to a caller with its own previous fit renumbered to match that fit", async () => {
    const { y, x } = demo(90, 19);
    const design = buildDesign(y, x);
    const request = { version: "test|demo", options: { k: 2, seed: 1 }, build: () => ({ design }), bytes: 1 };
    const first = await engineService.fit(request).promise;
    const swapped = permuteComponents(first.fit, [1, 0]);
    const again = engineService.fit({ ...request, previous: swapped });
    expect(again.shared).toBe(true);
    const shown = (await again.promise).fit;
    expect(shown.components.map((c) => c.coefficients[1])).toEqual(swapped.components.map((c) => c.coefficients[1]));
    // The cached entry itself keeps its own numbering for the other callers.
    expect((await engineService.fit(request).promise).fit).toBe(first.fit);
  });
});
