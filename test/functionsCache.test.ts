import { describe, expect, it } from "vitest";
import type { MixtureFit } from "../src/engine/mixtureTypes";
import { FitMemory } from "../src/service/fitMemory";
import type { Cancellation } from "../src/service/cancellation";
import { ResultCache } from "../src/service/resultCache";
import { hashCells } from "../src/service/hashCells";

/** A computation the test settles by hand, recording the cancellation it was given. */
function deferred<T>() {
  let resolve!: (value: T) => void;
  let reject!: (reason: unknown) => void;
  const promise = new Promise<T>((res, rej) => ((resolve = res), (reject = rej)));
  let cancellation: Cancellation | undefined;
  const compute = (given: Cancellation) => {
    cancellation = given;
    return promise;
  };
  return { promise, resolve, reject, compute, cancellation: () => cancellation };
}

const tick = () => new Promise((resolve) => setTimeout(resolve, 0));

describe("ResultCache", () => {
  it("computes a key once for callers that arrive while it runs and after it finished", async () => {
    const cache = new ResultCache<string>();
    let computations = 0;
    const compute = async () => {
      computations++;
      await tick();
      return "fit";
    };
    const leases = [cache.obtain("a", 10, compute), cache.obtain("a", 10, compute)];
    expect(leases.map((l) => l.shared)).toEqual([false, true]);
    expect(await Promise.all(leases.map((l) => l.promise))).toEqual(["fit", "fit"]);
    expect(await cache.obtain("a", 10, compute).promise).toBe("fit");
    expect(computations).toBe(1);
    expect(cache.statistics()).toMatchObject({ hits: 2, misses: 1, entries: 1, bytes: 10 });
  });

  it("evicts the least recently used finished entries beyond the byte limit", async () => {
    const cache = new ResultCache<string>(100, 10);
    for (const key of ["a", "b", "c"]) await cache.obtain(key, 40, async () => key).promise;
    // Three entries of 40 bytes exceed 100: "a", the least recently used, went.
    expect(cache.peek("a")).toBeUndefined();
    await cache.obtain("b", 40, async () => "again").promise;
    await cache.obtain("d", 40, async () => "d").promise;
    // "b" was used after "c", so "c" goes next.
    expect(cache.peek("c")).toBeUndefined();
    expect(await cache.peek("b")).toBe("b");
    expect(cache.statistics()).toMatchObject({ evictions: 2, entries: 2, bytes: 80 });
  });

  it("evicts beyond the entry limit whatever the sizes", async () => {
    const cache = new ResultCache<number>(1e9, 2);
    for (let i = 0; i < 5; i++) await cache.obtain(`k${i}`, 1, async () => i).promise;
    expect(cache.statistics().entries).toBe(2);
    expect(await cache.peek("k4")).toBe(4);
  });

  it("never evicts an entry still being computed", async () => {
    const cache = new ResultCache<string>(50, 10);
    const running = deferred<string>();
    const lease = cache.obtain("running", 80, running.compute);
    await cache.obtain("small", 10, async () => "small").promise;
    expect(cache.statistics().entries).toBe(1);
    running.resolve("done");
    expect(await lease.promise).toBe("done");
  });

  it("stops a computation only when every caller has cancelled", async () => {
    const cache = new ResultCache<string>();
    const work = deferred<string>();
    const first = cache.obtain("k", 1, work.compute);
    const second = cache.obtain("k", 1, work.compute);
    await tick();
    first.cancel();
    await expect(first.promise).rejects.toMatchObject({ code: "cancelled" });
    expect(work.cancellation()!.aborted).toBe(false);
    second.cancel();
    expect(work.cancellation()!.aborted).toBe(true);
    await expect(second.promise).rejects.toMatchObject({ code: "cancelled" });
    // The abandoned computation is forgotten: the next caller starts afresh.
    expect(cache.obtain("k", 1, async () => "new").shared).toBe(false);
  });

  it("does not keep failures", async () => {
    const cache = new ResultCache<string>();
    await expect(cache.obtain("k", 1, async () => Promise.reject(new Error("bad"))).promise).rejects.toThrow("bad");
    await tick();
    expect(await cache.obtain("k", 1, async () => "good").promise).toBe("good");
  });

  it("rejects its callers when the computation throws at once", async () => {
    const cache = new ResultCache<string>();
    const throwing = () => {
      throw new Error("at once");
    };
    await expect(cache.obtain("k", 1, throwing).promise).rejects.toThrow("at once");
  });
});

describe("hashCells", () => {
  it("gives equal cells the same fingerprint and tells types, values and shapes apart", () => {
    const base = [[1, 2], [3, "a"]];
    expect(hashCells(base)).toBe(hashCells([[1, 2], [3, "a"]]));
    const variants: unknown[] = [
      [[1, 2], [3, "b"]],
      [[1, 2], [3, "a "]],
      [[1, 2], [3.0000000000000004, "a"]],
      [["1", 2], [3, "a"]],
      [[true, 2], [3, "a"]],
      [[null, 2], [3, "a"]],
      [[1, 2, 3, "a"]],
      [[1], [2], [3], ["a"]],
      [[2, 1], [3, "a"]],
    ];
    const fingerprints = new Set(variants.map((v) => hashCells(v)));
    expect(fingerprints.size).toBe(variants.length);
    expect(fingerprints.has(hashCells(base))).toBe(false);
  });

  it("depends on which range a cell is in", () => {
    expect(hashCells([[1]], [[2], [3]])).not.toBe(hashCells([[1], [2]], [[3]]));
  });

  it("treats null and undefined as the same blank but not as an empty text", () => {
    expect(hashCells([[null]])).toBe(hashCells([[undefined]]));
    expect(hashCells([[null]])).not.toBe(hashCells([[""]]));
  });
});

describe("FitMemory", () => {
  const fitOf = (k: number, p: number, rows: number): MixtureFit =>
    ({
      k,
      p,
      n: rows,
      q: p + 1,
      intercept: true,
      model: "plain",
      components: [],
      memberships: new Float64Array(rows * k),
      labels: new Int32Array(rows),
      refinement: { converged: true, iterations: 1, logLikelihoodPath: [1, 2] },
    }) as unknown as MixtureFit;

  it("returns a cell's previous fit only for the same shape, without its per-row arrays", () => {
    const memory = new FitMemory();
    memory.remember("Sheet1!A1", fitOf(2, 3, 1000));
    const shape = { k: 2, p: 3, intercept: true, model: "plain" as const };
    const previous = memory.previousFor("Sheet1!A1", shape)!;
    expect(previous.k).toBe(2);
    expect(previous.memberships.length + previous.labels.length).toBe(0);
    expect(memory.previousFor("Sheet1!A1", { ...shape, k: 3 })).toBeUndefined();
    expect(memory.previousFor("Sheet1!A1", { ...shape, model: "joint" })).toBeUndefined();
    expect(memory.previousFor("Sheet1!B1", shape)).toBeUndefined();
    expect(memory.previousFor(undefined, shape)).toBeUndefined();
  });

  it("forgets the least recently refreshed cells beyond its limit", () => {
    const memory = new FitMemory(2);
    for (const address of ["A1", "A2", "A1", "A3"]) memory.remember(address, fitOf(1, 1, 5));
    expect(memory.size).toBe(2);
    const shape = { k: 1, p: 1, intercept: true, model: "plain" as const };
    expect(memory.previousFor("A2", shape)).toBeUndefined();
    expect(memory.previousFor("A1", shape)).toBeDefined();
  });
});
