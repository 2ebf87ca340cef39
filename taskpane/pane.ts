import { buildDesign, type Design } from "../src/engine/design";
import { isSkeinError } from "../src/engine/errors";
import type { RegressionData } from "../src/engine/mixtureTypes";
import type { SheetHost } from "./host";
import { CancelFlag, type PaneEngine } from "./paneEngine";
import { initialState, type PaneState } from "./paneState";

/** The pane fits as the worksheet functions do by default: a background component when far-off rows call for one. */
const BACKGROUND = "auto" as const;

/** Quiet time after the last edit before the pane refits: typing a column of numbers fires one refit, not one per cell. */
export const REFRESH_DELAY_MS = 600;

export function messageOf(error: unknown): string {
  if (isSkeinError(error)) return error.message;
  return `Skein could not finish: ${error instanceof Error ? error.message : String(error)}`;
}

function regressionData(design: Design): RegressionData {
  return { y: design.y, x: design.x, n: design.n, p: design.p };
}

/**
 * The pane's controller: holds the state, talks to the host and the engine, and
 * tells the sections to redraw after every change.
 */
export class Pane {
  state: PaneState = initialState();
  private readonly listeners: ((state: PaneState) => void)[] = [];
  private scanFlag: CancelFlag | null = null;
  private refitFlag: CancelFlag | null = null;
  private stopWatching: (() => void) | null = null;
  private refreshTimer: ReturnType<typeof setTimeout> | null = null;
  /** Bumped on each data read, so a slow read or refit that lost the race is dropped. */
  private dataVersion = 0;

  constructor(readonly host: SheetHost, readonly engine: PaneEngine) {}

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
      const design = buildDesign(y, x, { headers: "auto", intercept: true, leaveOut: new Set(this.state.leftOut) });
      this.update({ design, dataProblem: null, rangeRows: y.length });
      return design;
    } catch (error) {
      if (version === this.dataVersion) this.update({ design: null, dataProblem: messageOf(error) });
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

  /**
   * Re-reads the ranges and refits the shown K, warm-started from the shown fit so
   * component 1 stays component 1 unless the data truly changed.
   */
  async refresh(): Promise<void> {
    const previous = this.state.fit;
    const design = await this.readData();
    if (!design) return;
    if (this.state.scan) this.update({ scanStale: true });
    if (!previous || this.state.chosenK === null) return;
    this.refitFlag?.abort();
    const flag = new CancelFlag();
    this.refitFlag = flag;
    try {
      const data = regressionData(design);
      const fit = await this.engine.fit(data, { k: previous.k, seed: this.state.seed, intercept: true, background: BACKGROUND, previous }, flag);
      if (flag.aborted) return;
      const description = await this.engine.describe(data, fit);
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
    const flag = new CancelFlag();
    this.scanFlag = flag;
    const kMax = this.state.kMax;
    this.update({ scanning: true, progress: { k: 0, kMax }, scanProblem: null });
    try {
      const data = regressionData(design);
      const scan = await this.engine.scan(data, { kMax, seed: this.state.seed, intercept: true, background: BACKGROUND }, (k, of) => this.update({ progress: { k, kMax: of } }), flag);
      if (flag.aborted) return;
      this.update({ scan, scanStale: false, scanning: false, progress: null, refreshNote: null });
      await this.chooseK(scan.chosenK);
    } catch (error) {
      const problem = flag.aborted || (isSkeinError(error) && error.code === "cancelled") ? "Scan cancelled. The results shown before it (if any) are unchanged." : messageOf(error);
      this.update({ scanning: false, progress: null, scanProblem: problem });
    } finally {
      if (this.scanFlag === flag) this.scanFlag = null;
    }
  }

  cancelScan(): void {
    this.scanFlag?.abort();
    this.update({ scanning: false, progress: null, scanProblem: "Scan cancelled. The results shown before it (if any) are unchanged." });
  }

  /** Shows the scan's fit with k components in Components and Checks. */
  async chooseK(k: number): Promise<void> {
    const row = this.state.scan?.rows.find((r) => r.k === k);
    if (!row || !this.state.design) return;
    const data = regressionData(this.state.design);
    try {
      // After an edit the scan's fits describe the old rows: refit this K on the
      // current rows, warm-started from the scan's fit.
      const fit = this.state.scanStale ? await this.engine.fit(data, { k, seed: this.state.seed, intercept: true, background: BACKGROUND, previous: row.fit }, new CancelFlag()) : row.fit;
      this.update({ chosenK: k, fit, description: null, refreshNote: null });
      const description = await this.engine.describe(data, fit);
      if (this.state.fit === fit) this.update({ description });
    } catch (error) {
      this.update({ scanProblem: messageOf(error) });
    }
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
