/**
 * The engine service's cache of fits and scans: one computation per data version and options,
 * shared by every caller (worksheet formulas, the task pane) that asks for it.
 *
 * - Key: made by the engine service from the caller's data version (a fingerprint of the cell
 *   values, hashCells) and the options that change the result.
 * - Sharing: a key being computed is shared too, so SKEIN.FIT, LABELS, MEMBERSHIP and CHECK on
 *   the same ranges, recalculated together, wait on one fit instead of starting four.
 * - Bounded: least recently used entries go first once the entries' estimated memory passes
 *   CACHE_BYTE_LIMIT or their number passes CACHE_ENTRY_LIMIT. Entries still being computed are
 *   never evicted (someone is waiting on them).
 * - Cancellation: each caller holds a lease; when every caller of a running computation has
 *   cancelled (Excel cancels a call when its inputs change mid-calculation), the computation's
 *   Cancellation is raised and the entry dropped.
 * - Failures are not kept: the next call tries again (an input error is cheap to find again).
 */
import { SkeinError } from "../engine/errors";
import { Cancellation } from "./cancellation";

/**
 * Memory the cache may hold, estimated from the arrays each entry keeps (8 bytes per double):
 * a 100,000-row, 10-predictor fit with K = 3 keeps about 11 MB (rows x (predictors + 1) for
 * the data, rows x K memberships, row indices and labels), so 96 MiB holds the last eight or so
 * large fits and hundreds of small ones, well within a browser tab's few-GB heap.
 */
export const CACHE_BYTE_LIMIT = 96 * 1024 * 1024;
/** Cap on the number of entries, whatever their size (many tiny fits cost Map overhead). */
export const CACHE_ENTRY_LIMIT = 256;

interface Entry<T> {
  promise: Promise<T>;
  bytes: number;
  settled: boolean;
  waiters: number;
  cancellation: Cancellation;
}

/** One caller's claim on a cached or running computation. */
export interface Lease<T> {
  /** Settles with the value, or rejects with the computation's error, or a "cancelled" SkeinError after cancel(). */
  readonly promise: Promise<T>;
  /** Withdraws this caller; the computation stops when no caller is left. */
  cancel(): void;
  /** True when the value was cached or already being computed by another caller. */
  readonly shared: boolean;
}

export interface CacheStatistics {
  hits: number;
  misses: number;
  evictions: number;
  entries: number;
  bytes: number;
}

export class ResultCache<T> {
  // A Map iterates in insertion order; touching an entry re-inserts it, so the first key is the least recently used.
  private readonly entries = new Map<string, Entry<T>>();
  private totalBytes = 0;
  private hits = 0;
  private misses = 0;
  private evictions = 0;

  constructor(
    private readonly byteLimit: number = CACHE_BYTE_LIMIT,
    private readonly entryLimit: number = CACHE_ENTRY_LIMIT,
  ) {}

  /**
   * The value for `key`: the cached one, the one being computed, or a new computation
   * `compute(cancellation)` whose result is estimated to keep `bytes` of memory.
   */
  obtain(key: string, bytes: number, compute: (cancellation: Cancellation) => Promise<T>): Lease<T> {
    let entry = this.entries.get(key);
    const shared = entry !== undefined;
    if (entry !== undefined) {
      this.hits++;
      this.entries.delete(key);
      this.entries.set(key, entry);
    } else {
      this.misses++;
      entry = this.start(key, bytes, compute);
    }
    return this.lease(key, entry, shared);
  }

  /** The value for `key` if it is cached and finished, without counting a hit. */
  peek(key: string): Promise<T> | undefined {
    const entry = this.entries.get(key);
    return entry?.settled ? entry.promise : undefined;
  }

  statistics(): CacheStatistics {
    return { hits: this.hits, misses: this.misses, evictions: this.evictions, entries: this.entries.size, bytes: this.totalBytes };
  }

  /** Forgets every entry (running computations are cancelled). */
  clear(): void {
    for (const entry of this.entries.values()) if (!entry.settled) entry.cancellation.abort();
    this.entries.clear();
    this.totalBytes = 0;
  }

  private start(key: string, bytes: number, compute: (cancellation: Cancellation) => Promise<T>): Entry<T> {
    const cancellation = new Cancellation();
    const entry: Entry<T> = { promise: undefined as unknown as Promise<T>, bytes, settled: false, waiters: 0, cancellation };
    // Started through a resolved promise so a compute that throws at once still rejects its waiters.
    entry.promise = Promise.resolve().then(() => compute(cancellation));
    entry.promise.then(
      () => {
        entry.settled = true;
        this.evict();
      },
      () => this.remove(key, entry),
    );
    this.entries.set(key, entry);
    this.totalBytes += bytes;
    this.evict();
    return entry;
  }

  private lease(key: string, entry: Entry<T>, shared: boolean): Lease<T> {
    entry.waiters++;
    let rejectCancelled: ((reason: unknown) => void) | undefined;
    let withdrawn = false;
    const cancelled = new Promise<never>((_, reject) => (rejectCancelled = reject));
    const promise = Promise.race([entry.promise, cancelled]);
    return {
      promise,
      shared,
      cancel: () => {
        if (withdrawn) return;
        withdrawn = true;
        rejectCancelled!(new SkeinError("cancelled", "The calculation was cancelled."));
        entry.waiters--;
        if (entry.waiters === 0 && !entry.settled) {
          entry.cancellation.abort();
          this.remove(key, entry);
        }
      },
    };
  }

  private remove(key: string, entry: Entry<T>): void {
    if (this.entries.get(key) !== entry) return;
    this.entries.delete(key);
    this.totalBytes -= entry.bytes;
  }

  private evict(): void {
    for (const [key, entry] of this.entries) {
      if (this.totalBytes <= this.byteLimit && this.entries.size <= this.entryLimit) return;
      if (!entry.settled) continue;
      this.remove(key, entry);
      this.evictions++;
    }
  }
}
