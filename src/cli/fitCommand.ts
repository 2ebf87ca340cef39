import * as path from "path";
import type { Design } from "../engine/design";
import { designMatrix } from "../engine/designMatrix";
import { SkeinError } from "../engine/errors";
import { leastSquares } from "../engine/leastSquares";
import { fitMixture } from "../engine/fitMixture";
import { checkSeparation } from "../engine/checkSeparation";
import { standardErrors } from "../engine/standardErrors";
import type { MixtureFit, MixtureModel, RefinementReport, WarmStartReport } from "../engine/mixtureTypes";
import type { SeparationReport } from "../engine/trustTypes";
import { findStrayRows } from "../engine/strayRows";
import { parseArgs, parseBackground, parseList, parseModel, parseRowList, parseWholeNumber, type FlagKinds } from "./args";
import { loadDesign } from "./loadDesign";
import { formatFitTable } from "./formatTable";

export const FIT_USAGE = `Usage: skein fit FILE --y COLUMN [--x COLUMN,COLUMN,...] [options]

Fits K linear regressions of the y column on the x columns, each holding for
one hidden group of rows, to a .csv or .xlsx file whose first row names the
columns. A predictor column of mostly text (or yes/no, TRUE/FALSE) becomes
indicator columns against its most frequent value. Rows with a blank or error
cell, or text in a numeric column, are skipped and listed.

  --y COLUMN        the response column (required)
  --x COLUMNS       predictor columns, separated by commas; default: every
                    other column that holds mostly numbers
  --sheet NAME      the worksheet of an .xlsx file (default: the first)
  --k N             number of components (default 1)
  --model NAME      plain (y given x per component, the default) or joint
                    (each component also models where its x lie)
  --restarts N      alternative starts refined briefly before the best is
                    refined fully (default: the engine's choice)
  --seed S          seed for the random starts of a mixture fit (default 1)
  --bootstrap N     standard errors from N bootstrap refits (components
                    matched to this fit in each) instead of the observed
                    information; slower
  --background B    auto (default), yes or no: a background component with a
                    flat density over the range of y, so rows far from every
                    regression (typing slips) do not take a component of
                    their own; auto adds it only when the fit without it has
                    stray rows or a tiny component, and keeps the smaller BIC
  --leave-out ROWS  data rows to leave out of the fit, separated by commas
                    (counted from 1 below the header), e.g. stray rows
  --no-intercept    fit without an intercept
  --json            write one JSON object instead of a table
  --help            show this help

Example: skein fit sales.csv --y revenue --x price,advertising
`;

const FIT_FLAGS: FlagKinds = {
  y: "value",
  x: "value",
  sheet: "value",
  k: "value",
  model: "value",
  restarts: "value",
  seed: "value",
  bootstrap: "value",
  "no-intercept": "switch",
  background: "value",
  "leave-out": "value",
  json: "switch",
  help: "switch",
  h: "switch",
};

/** Largest K the command accepts as an argument; the fit itself decides what is available. */
const MAX_COMPONENTS = 50;

export interface FitSettings {
  file: string;
  sheet?: string;
  y: string;
  /** Predictor names in the user's order; undefined: every other mostly numeric column. */
  x?: string[];
  k: number;
  seed: number;
  intercept: boolean;
  model: MixtureModel;
  /** undefined: the engine's default. */
  restarts?: number;
  /** Bootstrap replicates for the standard errors; undefined: observed information. */
  bootstrap?: number;
  /** A flat background component (Banfield & Raftery 1993): always, never or "auto". */
  background: boolean | "auto";
  /** 1-based data rows to leave out. */
  leaveOut?: number[];
  json: boolean;
}

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
  /** Rows used in the fit. */
  n: number;
  /** Rows used in the fit (the same as n). */
  rowsUsed: number;
  rowsSkipped: number;
  skipped: SkippedReport[];
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
  /** Pairwise separation, estimated misclassification, entropy (null for one component). */
  separation: SeparationReport | null;
  /** Standard errors: per component coefficients (as in components[].stdErrors), weights and noise SDs. */
  stdErrors: { method: string; weights: number[]; sigmas: number[] };
  timings: { readMs: number; fitMs: number };
  /** What was done to the input columns (category columns made into indicators, with their reference level). */
  notices: string[];
  /** Rows no component explains, and the rule that picks them. */
  strayRows: StrayRowReport[];
  strayRowsRule: string;
  /** Weight of the background component (--background), else null. */
  backgroundWeight: number | null;
}

/** What a model fit hands back, whatever the number of components. */
export interface ModelFit {
  components: ComponentReport[];
  /** For each used row, its 0-based component. */
  labels: Int32Array;
  logLikelihood: number;
  /** Free parameters ν, for the BIC. */
  parameterCount: number;
  /** The mixture fit behind the report. */
  mixture: MixtureFit;
  separation: SeparationReport | null;
  stdErrorMethod: string;
  weightStdErrors: number[];
  sigmaStdErrors: number[];
  /** Why standard errors are missing, when some are. */
  stdErrorWarnings: string[];
}

/** Turns the fit command's arguments into settings, or "help". */
export function parseFitSettings(argv: readonly string[]): FitSettings | "help" {
  const { positionals, values, switches } = parseArgs(argv, FIT_FLAGS, "fit");
  if (switches.has("help") || switches.has("h")) return "help";
  if (positionals.length === 0) throw new SkeinError("bad-input", "No data file given; name one, as in: skein fit data.csv --y COLUMN");
  if (positionals.length > 1) {
    throw new SkeinError("bad-input", `fit takes one data file but got ${positionals.length} (${positionals.join(", ")}); list predictors as --x A,B without spaces, or quote the list`);
  }
  const y = values.get("y");
  if (y === undefined) throw new SkeinError("bad-input", "No response column given; name it, as in --y COLUMN");
  const xText = values.get("x");
  const kText = values.get("k");
  const seedText = values.get("seed");
  const restartsText = values.get("restarts");
  const bootstrapText = values.get("bootstrap");
  return {
    file: positionals[0],
    sheet: values.get("sheet"),
    y,
    x: xText === undefined ? undefined : parseList(xText, "x", "fit"),
    k: kText === undefined ? 1 : parseWholeNumber(kText, "k", "fit", 1, MAX_COMPONENTS),
    seed: seedText === undefined ? 1 : parseWholeNumber(seedText, "seed", "fit", 0, 2 ** 32 - 1),
    intercept: !switches.has("no-intercept"),
    model: parseModel(values.get("model"), "fit"),
    restarts: restartsText === undefined ? undefined : parseWholeNumber(restartsText, "restarts", "fit", 0, 1000),
    bootstrap: bootstrapText === undefined ? undefined : parseWholeNumber(bootstrapText, "bootstrap", "fit", 10, 10000),
    background: parseBackground(values.get("background"), "fit"),
    leaveOut: values.has("leave-out") ? parseRowList(values.get("leave-out") as string, "leave-out", "fit") : undefined,
    json: switches.has("json"),
  };
}

/**
 * Fits the model the settings ask for: the mixture engine for any K, with standard errors
 * from the observed information (Louis 1982). With one plain component the mixture is
 * ordinary least squares, and the report gives the classical least-squares standard
 * errors (n − q degrees of freedom), the ones regression tables and NIST certify.
 */
export function fitModel(design: Design, settings: Pick<FitSettings, "k" | "seed" | "intercept" | "model" | "restarts" | "bootstrap"> & { background?: boolean | "auto" }): ModelFit {
  const mixture = withColumnNames(design, settings.intercept, () =>
    fitMixture(design, { k: settings.k, seed: settings.seed, intercept: settings.intercept, model: settings.model, restarts: settings.restarts, background: settings.background }),
  );
  const errors =
    settings.bootstrap === undefined
      ? standardErrors(design, mixture)
      : standardErrors(design, mixture, { method: "bootstrap", replicates: settings.bootstrap, seed: settings.seed, fitOptions: { restarts: settings.restarts } });
  let coefficientErrors = errors.coefficients.map((c) => Array.from(c));
  let method: string = errors.method;
  if (settings.k === 1 && settings.model === "plain" && settings.bootstrap === undefined && mixture.background === undefined) {
    coefficientErrors = [classicalStdErrors(design, settings.intercept)];
    method = "least-squares";
  }
  return {
    components: mixture.components.map((component, c) => ({
      weight: component.weight,
      sigma: component.sigma,
      coefficients: Array.from(component.coefficients),
      stdErrors: coefficientErrors[c],
    })),
    labels: mixture.labels,
    logLikelihood: mixture.logLikelihood,
    parameterCount: mixture.parameterCount,
    mixture,
    separation: settings.k > 1 ? checkSeparation(design, mixture) : null,
    stdErrorMethod: method,
    weightStdErrors: Array.from(errors.weights),
    sigmaStdErrors: Array.from(errors.sigmas),
    stdErrorWarnings: method === "least-squares" ? [] : errors.warnings,
  };
}

/** Runs a fit, adding the column names to a singular-design message. */
function withColumnNames<T>(design: Design, intercept: boolean, run: () => T): T {
  try {
    return run();
  } catch (error) {
    if (error instanceof SkeinError && error.code === "numeric") {
      const terms = [...(intercept ? ["intercept"] : []), ...design.predictorNames];
      throw new SkeinError("numeric", `${error.message} The columns in order: ${terms.join(", ")}.`);
    }
    throw error;
  }
}

/** Classical least-squares standard errors of one regression, intercept slot first (0 when none). */
function classicalStdErrors(design: Design, intercept: boolean): number[] {
  const { matrix, q } = designMatrix(design, intercept);
  const fit = withColumnNames(design, intercept, () => leastSquares(matrix, design.n, q, design.y, { intercept }));
  const stdErrors = Array.from(fit.stdErrors);
  if (!intercept) stdErrors.unshift(0);
  return stdErrors;
}

/** Everything the command computes, before it is written out. */
export async function computeFitReport(settings: FitSettings): Promise<{ report: FitReport; sheetName?: string }> {
  const readStart = performance.now();
  const { design, sheetName } = await loadDesign(settings);
  const readMs = performance.now() - readStart;

  const fitStart = performance.now();
  const model = fitModel(design, settings);
  const fitMs = performance.now() - fitStart;

  const labels: (number | null)[] = new Array(design.inputRows).fill(null);
  for (let i = 0; i < design.n; i++) labels[design.rowIndex[i]] = model.labels[i] + 1;
  // Schwarz (1978): BIC = −2 log L + ν ln n.
  const bic = -2 * model.logLikelihood + model.parameterCount * Math.log(design.n);
  const stray = findStrayRows(design, model.mixture);
  const report: FitReport = {
    k: settings.k,
    n: design.n,
    rowsUsed: design.n,
    rowsSkipped: design.skipped.length,
    skipped: design.skipped.map((s) => ({ row: s.row + 1, column: s.column, reason: s.reason })),
    response: design.yName,
    predictors: design.predictorNames,
    intercept: settings.intercept,
    components: model.components,
    labels,
    logLikelihood: model.logLikelihood,
    bic,
    icl: model.mixture.icl,
    model: settings.model,
    seed: settings.seed,
    warmStart: model.mixture.warmStart,
    refinement: model.mixture.refinement,
    warnings: [...model.mixture.warnings, ...(model.separation?.warnings ?? []), ...model.stdErrorWarnings],
    separation: model.separation,
    stdErrors: { method: model.stdErrorMethod, weights: model.weightStdErrors, sigmas: model.sigmaStdErrors },
    timings: { readMs, fitMs },
    notices: design.notices,
    strayRows: stray.rows.map((s) => ({ row: design.rowIndex[s.row] + 1, distance: s.distance, nearest: s.nearest + 1 })),
    strayRowsRule: stray.rule,
    backgroundWeight: model.mixture.background?.weight ?? null,
  };
  return { report, sheetName };
}

/** `skein fit`: returns the exit status; SkeinErrors propagate to main, which reports them. */
export async function fitCommand(argv: readonly string[], io: { stdout: (s: string) => void }): Promise<number> {
  const settings = parseFitSettings(argv);
  if (settings === "help") {
    io.stdout(FIT_USAGE);
    return 0;
  }
  const { report, sheetName } = await computeFitReport(settings);
  if (settings.json) io.stdout(JSON.stringify(report) + "\n");
  else io.stdout(formatFitTable(report, { file: path.basename(settings.file), sheetName }));
  return 0;
}
