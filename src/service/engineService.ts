/**
 * The engine service: the one road from the hosts (worksheet functions, task pane, ribbon
 * commands) to the engine.
 *
 * - One protocol: fit, scan, describe and predict requests (engineJobs.ts), run on the page or
 *   in the engine worker (engineRunner.ts), with progress for scans and cancellation for all.
 * - One cache (resultCache.ts) of fits and scans, keyed by the caller's data version (a
 *   fingerprint of the cell values, hashCells.ts) and the options that change the result, so
 *   every caller asking the same question shares one computation and one answer.
 * - Every refit is warm-started from and renumbered to match the fit its viewer showed before:
 *   a formula cell (by address) or the pane (by name) is remembered in fitMemory.ts, or the
 *   caller passes its previous fit. A cached fit handed to a caller with its own previous fit is
 *   renumbered to match it too (formulas sharing a fit share its numbering instead).
 */
import { alignToPrevious } from "../engine/alignComponents";
import type { Design } from "../engine/design";
import type { MixtureFit, RegressionData } from "../engine/mixtureTypes";
import type { Prediction, ScanResult } from "../engine/trustTypes";
import { Cancellation } from "./cancellation";
import type { FitDescription, FitJobOptions, Progress, ScanJobOptions } from "./engineJobs";
import { runJob, type Place } from "./engineRunner";
import { FitMemory } from "./fitMemory";
import { sharedEngineService } from "./pageGlobal";
import { ResultCache, type Lease } from "./resultCache";

/** What a caller keeps with a result: at least the design it was fitted to. */
export interface Built {
  design: Design;
}

export interface FitRequest<D extends Built> {
  /** The data version: a fingerprint of the values the design is made from, with the caller's prefix. */
  version: string;
  options: FitJobOptions;
  /** Makes the design (and whatever the caller keeps with it) on a cache miss; throws for bad input. */
  build: () => D;
  /** Estimated memory the entry keeps, for the cache's bound. */
  bytes: number;
  /** Who shows the fit (a formula cell's address, "task pane"): its last fit is the warm start. */
  viewer?: string;
  /** The fit shown before, when the caller keeps it itself: warm start and numbering. */
  previous?: MixtureFit;
  place?: Place;
}

export interface ScanRequest<D extends Built> {
  version: string;
  /** Everything that changes the scan, as the caller received it (kmax before defaults are applied). */
  key: string;
  /** Makes the design and the scan's options on a cache miss; throws for bad input. */
  prepare: () => D & { options: ScanJobOptions };
  bytes: number;
  onProgress?: Progress;
  place?: Place;
}

export type FitAnswer<D extends Built> = D & { fit: MixtureFit };
export type ScanAnswer<D extends Built> = D & { scan: ScanResult };

/** The options that change a fit, in a fixed order: part of the cache key. */
export function fitOptionsKey(options: FitJobOptions): string {
  const { k, seed, intercept, model, restarts, tolerance, maxIterations, background } = options;
  return [k, seed ?? "", intercept === false ? 0 : 1, model ?? "plain", restarts ?? "", tolerance ?? "", maxIterations ?? "", String(background ?? false)].join("|");
}

export function regressionData(design: Design): RegressionData {
  return { y: design.y, x: design.x, n: design.n, p: design.p };
}

export class EngineService {
  /** Fits and scans, shared by every caller. */
  readonly results = new ResultCache<unknown>();
  readonly memory = new FitMemory();

  /** The fit for this data version and options: cached, being computed, or computed now. */
  fit<D extends Built>(request: FitRequest<D>): Lease<FitAnswer<D>> {
    const key = `fit|${request.version}|${fitOptionsKey(request.options)}`;
    const lease = this.results.obtain(key, request.bytes, async (cancellation) => {
      const built = request.build();
      const { options } = request;
      const previous =
        request.previous ??
        this.memory.previousFor(request.viewer, { k: options.k, p: built.design.p, intercept: options.intercept !== false, model: options.model ?? "plain" });
      const fit = await runJob({ kind: "fit", data: regressionData(built.design), options, previous }, { cancellation, place: request.place });
      return { ...built, fit };
    }) as Lease<FitAnswer<D>>;
    const promise = lease.promise.then((answer) => {
      let shown = answer;
      // A cached fit was numbered for whoever asked first; this caller's own previous fit decides its numbering.
      if (lease.shared && request.previous !== undefined) {
        const fit = alignToPrevious(answer.fit, request.previous, regressionData(answer.design));
        if (fit.components.some((c, i) => c !== answer.fit.components[i])) shown = { ...answer, fit };
      }
      this.memory.remember(request.viewer, shown.fit);
      return shown;
    });
    return { promise, cancel: () => lease.cancel(), shared: lease.shared };
  }

  /** The K scan for this data version and options. */
  scan<D extends Built>(request: ScanRequest<D>): Lease<ScanAnswer<D>> {
    const key = `scan|${request.version}|${request.key}`;
    return this.results.obtain(key, request.bytes, async (cancellation) => {
      const { options, ...built } = request.prepare();
      const scan = await runJob({ kind: "scan", data: regressionData(built.design), options }, { cancellation, onProgress: request.onProgress, place: request.place });
      return { ...(built as unknown as D), scan };
    }) as Lease<ScanAnswer<D>>;
  }

  /** The separation check and standard errors of a fit. */
  describe(data: RegressionData, fit: MixtureFit, cancellation = new Cancellation(), place?: Place): Promise<FitDescription> {
    return runJob({ kind: "describe", data, fit }, { cancellation, place });
  }

  /** Predictions from a fit for m new rows (m x p row-major). */
  predict(fit: MixtureFit, newX: Float64Array, m: number, cancellation = new Cancellation()): Promise<Prediction> {
    return runJob({ kind: "predict", fit, newX, m }, { cancellation });
  }

  /** Drops every cached result (running ones are cancelled); remembered fits stay, so refits keep their numbering. */
  forgetResults(): void {
    this.results.clear();
  }

  /** Drops results and remembered fits (tests). */
  clear(): void {
    this.results.clear();
    this.memory.clear();
  }
}

/** The page's one service, shared by every entry on the page (see pageGlobal.ts). */
export const engineService: EngineService = sharedEngineService(() => new EngineService());
