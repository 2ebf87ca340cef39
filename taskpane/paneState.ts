import type { Design } from "../src/engine/design";
import type { MixtureFit, MixtureModel } from "../src/engine/mixtureTypes";
import type { ScanResult } from "../src/engine/trustTypes";
import { optionSpec } from "../src/engine/options";
import type { FitDescription } from "../src/service/engineJobs";

/** Everything the sections draw from. Only the Pane changes it; sections only read it. */
export interface PaneState {
  yAddress: string;
  xAddress: string;
  /** Rows in the y range as given (header included), for the size of spilled results. */
  rangeRows: number;
  design: Design | null;
  dataProblem: string | null;
  scanning: boolean;
  progress: { k: number; kMax: number } | null;
  scan: ScanResult | null;
  /** The data changed after the scan ran. */
  scanStale: boolean;
  scanProblem: string | null;
  chosenK: number | null;
  fit: MixtureFit | null;
  description: FitDescription | null;
  /** Set after a refit that followed a change to the data. */
  refreshNote: string | null;
  seed: number;
  /** Fit an intercept in each component's regression. */
  intercept: boolean;
  model: MixtureModel;
  /** The background component setting: "auto", "yes" or "no" (the options table's choices). */
  background: string;
  kMax: number;
  /** 0-based data rows the user set aside (stray rows left out of the fit). */
  leftOut: number[];
}

export function initialState(): PaneState {
  return {
    yAddress: "",
    xAddress: "",
    rangeRows: 0,
    design: null,
    dataProblem: null,
    scanning: false,
    progress: null,
    scan: null,
    scanStale: false,
    scanProblem: null,
    chosenK: null,
    fit: null,
    description: null,
    refreshNote: null,
    seed: optionSpec("seed").default as number,
    intercept: optionSpec("intercept").default as boolean,
    model: optionSpec("model").default as MixtureModel,
    background: optionSpec("background").default as string,
    kMax: optionSpec("kmax").default as number,
    leftOut: [],
  };
}
