import { buildDesign, type Design } from "../src/engine/design";
import { isSkeinError } from "../src/engine/errors";
import { alignToPrevious } from "../src/engine/alignComponents";
import type { MixtureFit } from "../src/engine/mixtureTypes";
import { Cancellation } from "../src/service/cancellation";
import type { FitJobOptions } from "../src/service/engineJobs";
import { regressionData, type EngineService } from "../src/service/engineService";
import { hashCells } from "../src/service/hashCells";
import type { SheetHost } from "./host";
import { initialState, type PaneState } from "./paneState";

/** The background setting's text as the engine takes it: "auto", true for yes, false for no. */
function backgroundOption(value: string): boolean | "auto" {
  return value === "yes" ? true : value === "no" ? false : "auto";
}

/** Quiet time after the last edit before the pane refits: typing a column of numbers fires one refit, not one per cell. */
export const REFRESH_DELAY_MS = 600;

/** Office's error codes for a range that is not there or not a range (Excel JavaScript API, OfficeExtension.ErrorCodes). */
const RANGE_NOT_FOUND_CODES = new Set(["ItemNotFound", "InvalidArgument", "InvalidReference", "InvalidSelection"]);

/** A failure as the pane shows it: the engine's own message, or a plain sentence. */
export function messageOf(error: unknown): string {
  if (isSkeinError(error)) return error.message;
  const code = (error as { code?: unknown } | null)?.code;
  if (typeof code === "string" && RANGE_NOT_FOUND_CODES.has(code)) {
    return "Excel has no such range: check the sheet name and the cell addresses (as in Sheet1!B2:B101), or select the cells and press Use selection.";
  }
  const text = error instanceof Error ? error.message : String(error);
  return `${text.replace(/\.?$/, ".")} If this keeps happening, please report it.`;
}

/**
 * How the engine service knows the pane among the callers it remembers fits for: one name
 * per K, so a fit of K components is numbered like the last one the pane showed with K.
 */
export function paneViewer(k: number): string {
  return `task pane, K = ${k}`;
}

/** Rough memory a cached result keeps: the design's and the fit's per-row arrays (8 bytes a double). */
function entryBytes(design: Design, k: number): number {
  return design.n * (8 * (design.p + 1) + 8 * k + 8) + 1024;
}

function cancelledScan(): string {
  return "Scan cancelled. The results shown before it (if any) are unchanged.";
}

/**
 * The pane's controller: holds the state, talks to the host and the engine, and
 * tells the sections to redraw after every change.
 */
export class Pane {
  state: PaneState = initialState();
  private readonly listeners: ((state: PaneState) => void)[] = [];
  private scanFlag: Cancellation | null = null;
  private refitFlag: Cancellation | null = null;
  private stopWatching: (() => void) | null = null;
  private refreshTimer: ReturnType<typeof setTimeout> | null = null;
  /** Bumped on each data read, so a slow read or refit that lost the race is dropped. */
  private dataVersion = 0;
  /** Fingerprint of the cell values last read: the data version the engine service caches by. */
  private dataKey = "";

  constructor(readonly host: SheetHost, readonly engine: EngineService) {}

  subscribe(listener: (state: PaneState) => void): void {
    this.listeners.push(listener);
    listener(this.state);
  }

  update(change: Partial<PaneState>): void {
    this.state = { ...this.state, ...change };
    for (const listener of this.listeners) listener(this.state);
  }

  /** Takes the host's current selection as the address of y or x, then reads the data. */
  async useSelection(which: "y" | "x"): Promise<void> {
    try {
      const address = await this.host.selectedAddress();
      await this.setAddresses(which === "y" ? address : this.state.yAddress, which === "x" ? address : this.state.xAddress);
    } catch (error) {
      this.update({ dataProblem: messageOf(error) });
    }
  }

  /** New ranges: read them, drop any scan of other data, and listen for edits to them. */
  async setAddresses(yAddress: string, xAddress: string): Promise<void> {
    const changed = yAddress !== this.state.yAddress || xAddress !== this.state.xAddress;
    this.update({ yAddress, xAddress });
    if (changed) {
      this.scanFlag?.abort();
      this.update({ scan: null, scanStale: false, chosenK: null, fit: null, description: null, refreshNote: null, scanProblem: null, leftOut: [] });
    }
    await this.readData();
    if (changed) {
      await this.watchRanges();
      if (this.state.design) await this.host.saveRanges({ yAddress, xAddress }).catch(() => undefined);
    }
  }

  /** On opening: the ranges chosen last time in this document, read again and listened to again. */
  async restoreRanges(): Promise<void> {
    const saved = await this.host.savedRanges().catch(() => null);
    if (saved && this.state.yAddress === "" && this.state.xAddress === "") await this.setAddresses(saved.yAddress, saved.xAddress);
  }

  async readData(): Promise<Design | null> {
    const { yAddress, xAddress } = this.state;
    const version = ++this.dataVersion;
    if (yAddress.trim() === "" || xAddress.trim() === "") {
      this.update({ design: null, dataProblem: null, rangeRows: 0 });
      return null;
    }
    try {
      const [y, x] = await Promise.all([this.host.readValues(yAddress), this.host.readValues(xAddress)]);
      if (version !== this.dataVersion) return null;
      const design = buildDesign(y, x, { headers: "auto", intercept: this.state.intercept, leaveOut: new Set(this.state.leftOut) });
      // Rows set aside make another data version than the same cells with every row in.
      this.dataKey = `pane|${hashCells(y, x)}|${this.state.leftOut.join(",")}`;
      this.update({ design, dataProblem: null, rangeRows: y.length });
      return design;
    } catch (error) {
      const problem = isSkeinError(error) ? error.message : `Could not read ${yAddress} and ${xAddress}. ${messageOf(error)}`;
      if (version === this.dataVersion) this.update({ design: null, dataProblem: problem });
      return null;
    }
  }

  private async watchRanges(): Promise<void> {
    this.stopWatching?.();
    this.stopWatching = null;
    const { yAddress, xAddress } = this.state;
    if (!this.state.design) return;
    try {
      this.stopWatching = await this.host.watch([yAddress, xAddress], () => this.dataChanged());
    } catch {
      // Without change events the pane still works; the user refits by running the scan again.
      this.stopWatching = null;
    }
  }

  /** An edit touched the ranges: refit once the edits pause. */
  dataChanged(): void {
    if (this.refreshTimer !== null) clearTimeout(this.refreshTimer);
    this.refreshTimer = setTimeout(() => {
      this.refreshTimer = null;
      void this.refresh();
    }, REFRESH_DELAY_MS);
  }

  /** The fit options the pane's controls say, for k components. */
  private fitOptions(k: number): FitJobOptions {
    return { k, seed: this.state.seed, intercept: this.state.intercept, model: this.state.model, background: backgroundOption(this.state.background) };
  }

  /**
   * Fits k components to `design` through the engine service: warm-started from `previous`
   * and its components renumbered to match it, so component 1 stays component 1.
   */
  private refit(design: Design, k: number, previous: MixtureFit, flag: Cancellation): Promise<MixtureFit> {
    const lease = this.engine.fit({
      version: this.dataKey,
      options: this.fitOptions(k),
      build: () => ({ design }),
      bytes: entryBytes(design, k),
      viewer: paneViewer(k),
      previous,
      place: "worker",
    });
    flag.onAbort(() => lease.cancel());
    return lease.promise.then((answer) => answer.fit);
  }

  /**
   * Re-reads the ranges and refits the shown K, warm-started from the shown fit and matched to
   * it, so component 1 stays component 1 unless the data truly changed.
   */
  async refresh(): Promise<void> {
    const previous = this.state.fit;
    const design = await this.readData();
    if (!design) return;
    if (this.state.scan) this.update({ scanStale: true });
    if (!previous || this.state.chosenK === null) return;
    this.refitFlag?.abort();
    const flag = new Cancellation();
    this.refitFlag = flag;
    try {
      const fit = await this.refit(design, previous.k, previous, flag);
      if (flag.aborted) return;
      const description = await this.engine.describe(regressionData(design), fit, flag, "worker");
      if (flag.aborted) return;
      this.update({ fit, description, refreshNote: `Refitted with ${design.n} rows after the data changed; component numbers were kept by matching to the previous fit.` });
    } catch (error) {
      if (!flag.aborted) this.update({ refreshNote: `The refit after the data changed did not finish: ${messageOf(error)}` });
    }
  }

  async runScan(): Promise<void> {
    const design = this.state.design ?? (await this.readData());
    if (!design) return;
    this.scanFlag?.abort();
    const flag = new Cancellation();
    this.scanFlag = flag;
    const { kMax, seed, intercept, model, background } = this.state;
    this.update({ scanning: true, progress: { k: 0, kMax }, scanProblem: null });
    try {
      const lease = this.engine.scan({
        version: this.dataKey,
        key: [kMax, seed, intercept ? 1 : 0, model, background].join("|"),
        prepare: () => ({ design, options: { kMax, seed, intercept, model, background: backgroundOption(background) } }),
        bytes: entryBytes(design, kMax) * kMax,
        onProgress: (k, of) => {
          if (!flag.aborted) this.update({ progress: { k, kMax: of } });
        },
        place: "worker",
      });
      flag.onAbort(() => lease.cancel());
      const { scan } = await lease.promise;
      if (flag.aborted) return;
      this.update({ scan, scanStale: false, scanning: false, progress: null, refreshNote: null });
      await this.chooseK(scan.chosenK);
    } catch (error) {
      if (this.scanFlag !== flag) return;
      const problem = flag.aborted || (isSkeinError(error) && error.code === "cancelled") ? cancelledScan() : messageOf(error);
      this.update({ scanning: false, progress: null, scanProblem: problem });
    } finally {
      if (this.scanFlag === flag) this.scanFlag = null;
    }
  }

  cancelScan(): void {
    this.scanFlag?.abort();
    this.update({ scanning: false, progress: null, scanProblem: cancelledScan() });
  }

  /** Shows the scan's fit with k components in Components and Checks. */
  async chooseK(k: number): Promise<void> {
    const row = this.state.scan?.rows.find((r) => r.k === k);
    const design = this.state.design;
    if (!row || !design) return;
    try {
      // The fit the pane showed last with this K, if any, decides the numbering, so a new
      // scan does not swap the numbers the user has been reading.
      const shownBefore = this.engine.memory.previousFor(paneViewer(k), { k, p: design.p, intercept: this.state.intercept, model: this.state.model });
      // After an edit the scan's fits describe the old rows: refit this K on the current
      // rows, warm-started from the scan's fit and numbered like the fit shown before.
      const fit = this.state.scanStale
        ? await this.refit(design, k, shownBefore ?? row.fit, new Cancellation())
        : shownBefore
          ? alignToPrevious(row.fit, shownBefore, regressionData(design))
          : row.fit;
      this.update({ chosenK: k, fit, description: null, refreshNote: null });
      this.engine.memory.remember(paneViewer(k), fit);
      const description = await this.engine.describe(regressionData(design), fit, new Cancellation(), "worker");
      if (this.state.fit === fit) this.update({ description });
    } catch (error) {
      this.update({ scanProblem: messageOf(error) });
    }
  }

  /**
   * New intercept or model: the scan and fit shown were made with the old ones, so they go
   * (as when the ranges change), and the data are read again (the checks on the predictors
   * depend on the intercept).
   */
  async setFitOptions(change: Partial<Pick<PaneState, "intercept" | "model" | "background">>): Promise<void> {
    const changed = (Object.keys(change) as (keyof typeof change)[]).some((name) => change[name] !== this.state[name]);
    if (!changed) return;
    this.scanFlag?.abort();
    this.update({ ...change, scan: null, scanStale: false, chosenK: null, fit: null, description: null, refreshNote: null, scanProblem: null });
    await this.readData();
  }

  setSeed(seed: number): void {
    this.update({ seed });
  }

  setKMax(kMax: number): void {
    this.update({ kMax });
  }

  /**
   * Sets data rows (0-based, below any header) aside, or puts every set-aside row back with
   * an empty list, then reads the data again and runs the scan on the rows that remain.
   */
  async setLeftOut(rows: readonly number[]): Promise<void> {
    this.update({ leftOut: [...new Set(rows)].sort((a, b) => a - b), scan: null, scanStale: false, chosenK: null, fit: null, description: null });
    const design = await this.readData();
    if (design) await this.runScan();
  }
}
