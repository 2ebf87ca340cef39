import type { MixtureModel, RefinementReport, WarmStartReport } from "../engine/mixtureTypes";
import type { SeparationReport } from "../engine/trustTypes";
import type { ColumnReport } from "./loadDesign";

/** What `skein fit --json` prints (the FitReport) and its parts: the command line's output contract, read by scripts. */

/** One fitted component as reported: coefficients always start with the intercept (0 when there is none). */
export interface ComponentReport {
  weight: number;
  /** Maximum-likelihood noise SD, sqrt(RSS/n) for one component. */
  sigma: number;
  coefficients: number[];
  stdErrors: number[];
}

/** A row no component explains (rule in src/engine/strayRows.ts). */
export interface StrayRowReport {
  /** 1-based data row of the file. */
  row: number;
  /** Noise SDs to the nearest component. */
  distance: number;
  /** 1-based nearest component. */
  nearest: number;
}

export interface SkippedReport {
  /** 1-based data row of the file (the row below the header is 1). */
  row: number;
  column: string;
  reason: string;
}

/** The --json output. Later versions add fields; they never rename these. */
export interface FitReport {
  k: number;
  /** How K was chosen: given with --k, or the scan's suggestion over K = 1..kMax. */
  kChosenBy: { by: "given" } | { by: "scan"; kMax: number };
  /** Rows used in the fit. */
  n: number;
  /** Rows used in the fit (the same as n). */
  rowsUsed: number;
  rowsSkipped: number;
  skipped: SkippedReport[];
  /** The outcome column's name. */
  outcome: string;
  /** The same as outcome (its older name). */
  response: string;
  predictors: string[];
  intercept: boolean;
  components: ComponentReport[];
  /** One per data row of the file: 1-based component, null for skipped rows. */
  labels: (number | null)[];
  logLikelihood: number;
  bic: number;
  icl: number;
  model: MixtureModel;
  seed: number;
  warmStart: WarmStartReport;
  refinement: RefinementReport;
  warnings: string[];
  /** The two best starts reached the same components. */
  startsAgree: boolean;
  /** The refinement stopped by its tolerance. */
  converged: boolean;
  /** Every component fits its rows exactly (noise about 0). */
  exactFit: boolean;
  /** Smallest gap between two components, noise SDs (null for one component, or unlimited). */
  smallestGap: number | null;
  /** Misassigned rows, percent. */
  misassignedRows: number;
  /** Membership clarity, 0 to 1. */
  membershipClarity: number;
  /** Older name of the checks: pairs, minGap, misclassification (a share), normalisedEntropy; null for one component. */
  separation: SeparationReport | null;
  /** Standard errors: per component coefficients (as in components[].stdErrors), weights and noise SDs. */
  stdErrors: { method: string; weights: number[]; sigmas: number[] };
  timings: { readMs: number; fitMs: number };
  /** Every column of the file: its kind (number, category, date, identifier, text, empty) and role. */
  columns: ColumnReport[];
  /** How the file was read: encoding, sheet, conversions, renamed headers, columns left out. */
  notices: string[];
  /** Rows no component explains, and the rule that picks them. */
  strayRows: StrayRowReport[];
  strayRowsRule: string;
  /** Weight of the background component (--background), else null. */
  backgroundWeight: number | null;
}
