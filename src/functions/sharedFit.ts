/**
 * One fit per data version, shared by the worksheet functions.
 *
 * SKEIN.FIT, LABELS, MEMBERSHIP, CHECK and PREDICT on the same y and x ranges, k and settings
 * ask for the same key (a fingerprint of the cells, k and the fit settings), so they get the
 * same fit object, the same component numbering, and one engine fit between them (fitCache).
 * When a formula's data change, the new fit starts from the fit that formula showed last
 * (addressMemory, by the cell address Excel passes under @requiresAddress) and is renumbered
 * to match it. Excel's cancellation of a call (its inputs changed mid-fit) withdraws that
 * call from the shared fit, which stops when nobody waits for it any more.
 */
import { buildDesign, type Design } from "../engine/design";
import { SkeinError } from "../engine/errors";
import type { MixtureFit } from "../engine/mixtureTypes";
import type { ScanResult, SeparationReport } from "../engine/trustTypes";
import type { StrayRowsReport } from "../engine/strayRows";
import { AddressMemory } from "./addressMemory";
import { runFit, runScan } from "./engineRunner";
import { FitCache, type Lease } from "./fitCache";
import { hashCells } from "./hashCells";
import { rowsThroughLastData, type RowLayout } from "./spill";
import { fitSettingsKey, parseSettings, type FunctionSettings } from "./settings";

/** Largest K the functions accept (the command line's cap too). */
export const MAX_COMPONENTS = 50;
/** SCAN's kmax when none is given: enough for most data, and cheap. */
export const DEFAULT_KMAX = 5;

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
}

/** What a call needs of Excel's invocation object (absent in direct calls and tests). */
export type Invocation = Pick<CustomFunctions.CancelableInvocation, "address" | "onCanceled">;

export const fitCache = new FitCache<SharedFit>();
export const scanCache = new FitCache<SharedScan>();
export const addressMemory = new AddressMemory();

/** `value` as a whole number from `low` to `high`, or `fallback` when omitted. */
export function readWholeNumber(value: unknown, name: string, fallback: number, low: number, high: number): number {
  if (value === null || value === undefined || (typeof value === "string" && value.trim() === "")) return fallback;
  const number = typeof value === "number" ? value : typeof value === "string" ? Number(value.trim()) : NaN;
  if (!Number.isInteger(number) || number < low || number > high) {
    throw new SkeinError("bad-input", `${name} must be a whole number from ${low} to ${high}; it was ${typeof value === "string" ? `"${value}"` : String(value)}.`);
  }
  return number;
}

/**
 * Each component needs at least one more row than it has coefficients (issue 3's minimum
 * component size), so K components need K x (coefficients + 1) usable rows.
 */
export function checkRowsForK(design: Design, k: number, intercept: boolean): void {
  const coefficients = design.p + (intercept ? 1 : 0);
  const needed = k * (coefficients + 1);
  if (design.n < needed) {
    const skipped = design.skipped.length > 0 ? ` (${design.skipped.length} row${design.skipped.length === 1 ? " was" : "s were"} skipped for blanks, text or errors)` : "";
    throw new SkeinError(
      "bad-input",
      `k = ${k} needs at least ${needed} usable rows (each component needs one more row than its ${coefficients} coefficient${coefficients === 1 ? "" : "s"}), but there are ${design.n}${skipped}. Use a smaller k or add rows.`,
    );
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
  const k = readWholeNumber(kArgument, "k", 1, 1, MAX_COMPONENTS);
  const key = `fit|${hashCells(y, x)}|${k}|${fitSettingsKey(settings)}`;
  const address = invocation?.address;
  const lease = fitCache.obtain(key, entryBytes(y, x, k), async (cancellation) => {
    const design = buildDesign(y as unknown[][], x as unknown[][], { intercept: settings.intercept });
    checkRowsForK(design, k, settings.intercept);
    const previous = addressMemory.previousFor(address, { k, p: design.p, intercept: settings.intercept, model: settings.model });
    const fit = await runFit(
      {
        kind: "fit",
        data: { y: design.y, x: design.x, n: design.n, p: design.p },
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
        previous,
      },
      cancellation,
    );
    return { design, fit, layout: layoutOf(design, y as unknown[][], x as unknown[][]) };
  });
  const shared = await follow(lease, invocation);
  addressMemory.remember(address, shared.fit);
  return { shared, settings };
}

/** The shared K scan for these arguments. */
export async function sharedScan(y: unknown, x: unknown, kMaxArgument: unknown, settingsArgument: unknown, invocation?: Invocation): Promise<Answer<SharedScan>> {
  const settings = parseSettings(settingsArgument);
  const requested = readWholeNumber(kMaxArgument, "kmax", 0, 1, MAX_COMPONENTS);
  const key = `scan|${hashCells(y, x)}|${requested}|${fitSettingsKey(settings)}`;
  const lease = scanCache.obtain(key, entryBytes(y, x, Math.max(requested, DEFAULT_KMAX)) * Math.max(requested, DEFAULT_KMAX), async (cancellation) => {
    const design = buildDesign(y as unknown[][], x as unknown[][], { intercept: settings.intercept });
    const coefficients = design.p + (settings.intercept ? 1 : 0);
    // Without kmax: up to DEFAULT_KMAX, as far as the rows allow; with it, every K must fit.
    const kMax = requested === 0 ? Math.max(1, Math.min(DEFAULT_KMAX, Math.floor(design.n / (coefficients + 1)))) : requested;
    checkRowsForK(design, kMax, settings.intercept);
    const result = await runScan(
      {
        kind: "scan",
        data: { y: design.y, x: design.x, n: design.n, p: design.p },
        options: { kMax, seed: settings.seed, intercept: settings.intercept, model: settings.model, restarts: settings.restarts, background: settings.background },
      },
      cancellation,
    );
    // The default kmax cut to what the rows allow says so (the engine reports its own stops).
    const cut =
      requested === 0 && kMax < DEFAULT_KMAX
        ? `Tried K = 1 to ${kMax}, not up to ${DEFAULT_KMAX} (the default kmax): K = ${kMax + 1} needs at least ${(kMax + 1) * (coefficients + 1)} usable rows (each component needs one more row than its ${coefficients} coefficient${coefficients === 1 ? "" : "s"}), and there are ${design.n}.`
        : null;
    const scan = { ...result, stoppedEarly: result.stoppedEarly ?? cut };
    return { design, scan };
  });
  return { shared: await follow(lease, invocation), settings };
}
