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
import type { OptionName } from "../engine/options";
import { FILE_OPTIONS_HELP, optionFlags, optionHelp, parseArgs, parseHeaderRow, parseList, parseWholeNumber, readGivenOption, readOption, type FlagKinds } from "./args";
import { loadDesign, type ColumnReport } from "./loadDesign";
import { formatFitTable } from "./formatTable";
import { formatNotices } from "./formatNotices";

/** The options of the table that skein fit takes. */
const FIT_OPTIONS: readonly OptionName[] = ["k", "model", "seed", "restarts", "tolerance", "max_iterations", "intercept"];

export const FIT_USAGE = `Usage: skein fit FILE --y COLUMN [--x COLUMN,COLUMN,...] [options]

Fits K linear regressions of the y column on the x columns, each holding for
one hidden group of rows, to a .csv or .xlsx file whose first row names the
columns. Rows with a blank, text or error cell in a used column are skipped
and listed.

  --y COLUMN        the response column (required)
  --x COLUMNS       predictor columns, separated by commas; default: every
                    other column of numbers or categories (dates and
                    identifier columns are left out, and the output says so)
${optionHelp(FIT_OPTIONS, 20)}
  --bootstrap N     standard errors from N bootstrap refits (components
                    matched to this fit in each) instead of the observed
                    information; slower
  --json            write one JSON object instead of a table
  --help            show this help
${FILE_OPTIONS_HELP}
Example: skein fit sales.csv --y revenue --x price,advertising
`;

const FIT_FLAGS: FlagKinds = {
  y: "value",
  x: "value",
  sheet: "value",
  "header-row": "value",
  ...optionFlags(FIT_OPTIONS),
  bootstrap: "value",
  json: "switch",
  help: "switch",
  h: "switch",
};

export interface FitSettings {
  file: string;
  sheet?: string;
  /** 1-based row (line) of the header; undefined: the first non-empty one. */
  headerRow?: number;
  y: string;
  /** Predictor names (or letters, #numbers) in the user's order; undefined: every other number or category column. */
  x?: string[];
  k: number;
  seed: number;
  intercept: boolean;
  model: MixtureModel;
  /** undefined: the engine's default. */
  restarts?: number;
  tolerance?: number;
  maxIterations?: number;
  /** Bootstrap replicates for the standard errors; undefined: observed information. */
  bootstrap?: number;
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
  /** Every column of the file: its kind (number, category, date, identifier, text, empty) and role. */
  columns: ColumnReport[];
  /** How the file was read: encoding, sheet, conversions, renamed headers, columns left out. */
  notices: string[];
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
}

/** Turns the fit command's arguments into settings, or "help". */
export function parseFitSettings(argv: readonly string[]): FitSettings | "help" {
  const parsed = parseArgs(argv, FIT_FLAGS, "fit");
  const { positionals, values, switches } = parsed;
  if (switches.has("help") || switches.has("h")) return "help";
  if (positionals.length === 0) throw new SkeinError("bad-input", "No data file given; name one, as in: skein fit data.csv --y COLUMN");
  if (positionals.length > 1) {
    throw new SkeinError("bad-input", `fit takes one data file but got ${positionals.length} (${positionals.join(", ")}); list predictors as --x A,B without spaces, or quote the list`);
  }
  const y = values.get("y");
  if (y === undefined) throw new SkeinError("bad-input", "No response column given; name it, as in --y COLUMN");
  const xText = values.get("x");
  const bootstrapText = values.get("bootstrap");
  return {
    file: positionals[0],
    sheet: values.get("sheet"),
    headerRow: parseHeaderRow(values.get("header-row"), "fit"),
    y,
    x: xText === undefined ? undefined : parseList(xText, "x", "fit"),
    k: readOption(parsed, "k", "fit") as number,
    seed: readOption(parsed, "seed", "fit") as number,
    intercept: readOption(parsed, "intercept", "fit") as boolean,
    model: readOption(parsed, "model", "fit") as MixtureModel,
    restarts: readGivenOption(parsed, "restarts", "fit") as number | undefined,
    tolerance: readGivenOption(parsed, "tolerance", "fit") as number | undefined,
    maxIterations: readGivenOption(parsed, "max_iterations", "fit") as number | undefined,
    bootstrap: bootstrapText === undefined ? undefined : parseWholeNumber(bootstrapText, "bootstrap", "fit", 10, 10000),
    json: switches.has("json"),
  };
}

/**
 * Fits the model the settings ask for: the mixture engine for any K, with standard errors
 * from the observed information (Louis 1982). With one plain component the mixture is
 * ordinary least squares, and the report gives the classical least-squares standard
 * errors (n − q degrees of freedom), the ones regression tables and NIST certify.
 */
export function fitModel(design: Design, settings: Pick<FitSettings, "k" | "seed" | "intercept" | "model" | "restarts" | "tolerance" | "maxIterations" | "bootstrap">): ModelFit {
  const { k, seed, intercept, model, restarts, tolerance, maxIterations } = settings;
  const mixture = withColumnNames(design, settings.intercept, () => fitMixture(design, { k, seed, intercept, model, restarts, tolerance, maxIterations }));
  const errors =
    settings.bootstrap === undefined
      ? standardErrors(design, mixture)
      : standardErrors(design, mixture, { method: "bootstrap", replicates: settings.bootstrap, seed: settings.seed, fitOptions: { restarts, tolerance, maxIterations } });
  let coefficientErrors = errors.coefficients.map((c) => Array.from(c));
  let method: string = errors.method;
  if (settings.k === 1 && settings.model === "plain" && settings.bootstrap === undefined) {
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
  const { design, sheetName, columns, notices } = await loadDesign(settings);
  const readMs = performance.now() - readStart;

  const fitStart = performance.now();
  const model = fitModel(design, settings);
  const fitMs = performance.now() - fitStart;

  const labels: (number | null)[] = new Array(design.inputRows).fill(null);
  for (let i = 0; i < design.n; i++) labels[design.rowIndex[i]] = model.labels[i] + 1;
  // Schwarz (1978): BIC = −2 log L + ν ln n.
  const bic = -2 * model.logLikelihood + model.parameterCount * Math.log(design.n);
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
    warnings: [...model.mixture.warnings, ...(model.separation?.warnings ?? [])],
    separation: model.separation,
    stdErrors: { method: model.stdErrorMethod, weights: model.weightStdErrors, sigmas: model.sigmaStdErrors },
    timings: { readMs, fitMs },
    columns,
    notices,
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
  else io.stdout(formatFitTable(report, { file: path.basename(settings.file), sheetName }) + formatNotices(report.notices));
  return 0;
}
