/**
 * One fit per data version, shared by the worksheet functions (through the engine service).
 *
 * SKEIN.FIT, LABELS, MEMBERSHIP, CHECK and PREDICT on the same y and x ranges, k and settings
 * ask the engine service for the same data version (a fingerprint of the cells) and options,
 * so they get the same fit object, the same component numbering, and one engine fit between
 * them. When a formula's data change, the new fit starts from the fit that formula showed last
 * (the service remembers it by the cell address Excel passes under @requiresAddress) and is
 * renumbered to match it. Excel's cancellation of a call (its inputs changed mid-fit)
 * withdraws that call from the shared fit, which stops when nobody waits for it any more.
 */
import { buildDesign, type Design } from "../engine/design";
import { SkeinError } from "../engine/errors";
import { checkRowsForComponents } from "../engine/fitMixture";
import { DEFAULT_KMAX, MAX_COMPONENTS } from "../engine/options";
import type { MixtureFit } from "../engine/mixtureTypes";
import type { ScanResult, SeparationReport } from "../engine/trustTypes";
import type { StrayRowsReport } from "../engine/strayRows";
import { engineService } from "../service/engineService";
import { hashCells } from "../service/hashCells";
import type { Lease } from "../service/resultCache";
import { defaultKMax } from "../engine/scanComponents";
import { rowsThroughLastData, type RowLayout } from "./spill";
import { fitSettingsKey, parseSettings, type FunctionSettings } from "./settings";

/** A fit and the data it was made from, as cached (the same object for every formula). */
export interface SharedFit {
  design: Design;
  fit: MixtureFit;
  /** Where per-row results put each used row, and how many rows they show. */
  layout: RowLayout;
  /** Filled the first time SKEIN.CHECK asks for it. */
  separation?: SeparationReport;
  /** Rows no component explains; filled the first time SKEIN.CHECK asks for them. */
  stray?: StrayRowsReport;
}

export interface SharedScan {
  design: Design;
  scan: ScanResult;
}

/** A call's answer: the shared result and this call's own settings (headers differ per formula). */
export interface Answer<T> {
  shared: T;
  settings: FunctionSettings;
  /** True when k was left out and the scan's suggested K was used. */
  kFromScan?: boolean;
}

/** What a call needs of Excel's invocation object (absent in direct calls and tests). */
export type Invocation = Pick<CustomFunctions.CancelableInvocation, "address" | "onCanceled">;

/** `value` as a whole number from `low` to `high`, or `fallback` when omitted. */
export function readWholeNumber(value: unknown, name: string, fallback: number, low: number, high: number): number {
  if (value === null || value === undefined || (typeof value === "string" && value.trim() === "")) return fallback;
  const number = typeof value === "number" ? value : typeof value === "string" ? Number(value.trim()) : NaN;
  if (!Number.isInteger(number) || number < low || number > high) {
    throw new SkeinError("bad-input", `${name} must be a whole number from ${low} to ${high}; it was ${typeof value === "string" ? `"${value}"` : String(value)}.`);
  }
  return number;
}

/** The engine's own row check (K x (coefficients + 1) rows), said with the rows skipped, before any work starts. */
export function checkRowsForK(design: Design, k: number, intercept: boolean): void {
  try {
    checkRowsForComponents(design.n, design.p + (intercept ? 1 : 0), k);
  } catch (error) {
    if (!(error instanceof SkeinError) || design.skipped.length === 0) throw error;
    const skipped = `${design.skipped.length} row${design.skipped.length === 1 ? " was" : "s were"} skipped for blanks, text or errors`;
    throw new SkeinError(error.code, `${error.message} (${skipped}.)`);
  }
}

function layoutOf(design: Design, y: unknown[][], x: unknown[][]): RowLayout {
  return { shownRows: rowsThroughLastData([y, x], design.hasHeaderRow ? 1 : 0), rowIndex: design.rowIndex, n: design.n };
}

/** Rough memory an entry keeps: the design's and the fit's per-row arrays (8 bytes a double). */
function entryBytes(y: unknown, x: unknown, k: number): number {
  const rows = Array.isArray(y) ? y.length : 0;
  const firstRow = Array.isArray(x) && Array.isArray(x[0]) ? x[0].length : 0;
  return rows * (8 * (firstRow + 1) + 8 * k + 4 + 4) + 1024;
}

/** Makes Excel's cancellation of this call withdraw it from the shared computation. */
function follow<T>(lease: Lease<T>, invocation: Invocation | undefined): Promise<T> {
  if (invocation) invocation.onCanceled = () => lease.cancel();
  return lease.promise;
}

/** The shared fit for these arguments, computing it if no formula has yet. */
export async function sharedFit(y: unknown, x: unknown, kArgument: unknown, settingsArgument: unknown, invocation?: Invocation): Promise<Answer<SharedFit>> {
  const settings = parseSettings(settingsArgument);
  // k left out: the K the scan suggests (kmax DEFAULT_KMAX, or fewer when rows are few).
  const given = readWholeNumber(kArgument, "k", 0, 1, MAX_COMPONENTS);
  const kFromScan = given === 0;
  const k = kFromScan ? (await sharedScan(y, x, undefined, settingsArgument, invocation)).shared.scan.chosenK : given;
  const lease = engineService.fit({
    version: `cells|${hashCells(y, x)}`,
    options: {
      k,
      seed: settings.seed,
      intercept: settings.intercept,
      model: settings.model,
      restarts: settings.restarts,
      tolerance: settings.tolerance,
      maxIterations: settings.maxIterations,
      background: settings.background,
    },
    bytes: entryBytes(y, x, k),
    viewer: invocation?.address,
    build: () => {
      const design = buildDesign(y as unknown[][], x as unknown[][], { intercept: settings.intercept });
      checkRowsForK(design, k, settings.intercept);
      return { design, layout: layoutOf(design, y as unknown[][], x as unknown[][]) } as { design: Design; layout: RowLayout; separation?: SeparationReport; stray?: StrayRowsReport };
    },
  });
  return { shared: await follow(lease, invocation), settings, kFromScan };
}

/** The shared K scan for these arguments. */
export async function sharedScan(y: unknown, x: unknown, kMaxArgument: unknown, settingsArgument: unknown, invocation?: Invocation): Promise<Answer<SharedScan>> {
  const settings = parseSettings(settingsArgument);
  const requested = readWholeNumber(kMaxArgument, "kmax", 0, 1, MAX_COMPONENTS);
  const lease = engineService.scan({
    version: `cells|${hashCells(y, x)}`,
    key: `${requested}|${fitSettingsKey(settings)}`,
    bytes: entryBytes(y, x, Math.max(requested, DEFAULT_KMAX)) * Math.max(requested, DEFAULT_KMAX),
    prepare: () => {
      const design = buildDesign(y as unknown[][], x as unknown[][], { intercept: settings.intercept });
      // Without kmax: up to DEFAULT_KMAX, as far as the rows allow (the engine stops where the
      // rows run out and says so in the scan's stoppedEarly); with it, every K must fit.
      const kMax = requested === 0 ? DEFAULT_KMAX : requested;
      checkRowsForK(design, requested === 0 ? 1 : kMax, settings.intercept);
      return { design, options: { kMax, seed: settings.seed, intercept: settings.intercept, model: settings.model, restarts: settings.restarts, tolerance: settings.tolerance, maxIterations: settings.maxIterations, background: settings.background } };
    },
  });
  return { shared: await follow(lease, invocation), settings };
}
