import { threadsLine } from "./helperThread";
import * as path from "path";
import type { Design } from "../engine/design";
import { designMatrix } from "../engine/designMatrix";
import { SkeinError } from "../engine/errors";
import { leastSquares } from "../engine/leastSquares";
import { fitMixture } from "../engine/fitMixture";
import { checkSeparation } from "../engine/checkSeparation";
import { standardErrors } from "../engine/standardErrors";
import type { CancelSignal, MixtureFit, MixtureModel } from "../engine/mixtureTypes";
import type { SeparationReport } from "../engine/trustTypes";
import { findStrayRows } from "../engine/strayRows";
import type { OptionName } from "../engine/options";
import { FILE_OPTIONS_HELP, optionFlags, optionHelp, parseArgs, readFileFlags, parseRowList, parseWholeNumber, readBackground, readGivenOption, readOption, type FlagKinds } from "./args";
import { loadDesign } from "./loadDesign";
import { formatFitTable, kChoiceText } from "./formatTable";
import { isExactFit } from "../engine/exactFit";
import { withHostControls } from "../report/warningControls";
import { defaultKMax, scanComponents, startsAgree } from "../engine/scanComponents";
import type { CommandIO } from "./commandIO";
import type { ComponentReport, FitReport } from "./fitReport";
import { fitProgress, scanProgress } from "./progressLines";
import { writeRowResults } from "./writeRowResults";
import { readDataTable } from "../io/readTable";
import { formatNotices } from "./formatNotices";

/** The options of the table that skein fit takes. */
const FIT_OPTIONS: readonly OptionName[] = ["k", "model", "seed", "restarts", "tolerance", "max_iterations", "background", "intercept"];

export const FIT_USAGE = `Usage: skein fit FILE --y COLUMN [--x COLUMN,COLUMN,...] [options]

Fits K components to a .csv or .xlsx file whose first row names the columns.
A component is a group of rows sharing one linear regression of the outcome
(--y) on the predictors (--x). A predictor column of mostly text (or yes/no,
TRUE/FALSE) becomes indicator columns against its most frequent value. Rows
with a blank or error cell, or text in a numeric column, are skipped and
listed. The output shows each component, the checks, the stray rows, and the
component of the first rows.

  --y COLUMN        the outcome column (required)
  --x COLUMNS       predictor columns, separated by commas; default: every
                    other column of numbers or categories (dates and
                    identifier columns are left out, and the output says so)
${optionHelp(FIT_OPTIONS, 20)}
  --out FILE        also write every row with its component, fitted value,
                    residual and memberships to FILE (.csv or .xlsx)
  --bootstrap N     standard errors from N bootstrap refits (components
                    matched to this fit in each) instead of from the
                    curvature of the likelihood; slower
  --verbose         also show how the starts were made and on how many threads
  --leave-out ROWS  data rows to leave out of the fit, separated by commas
                    (counted from 1 below the header), e.g. stray rows
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
  out: "value",
  verbose: "switch",
  "leave-out": "value",
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
  /** undefined: the K the scan suggests. */
  k?: number;
  seed: number;
  intercept: boolean;
  model: MixtureModel;
  /** undefined: the engine's default. */
  restarts?: number;
  tolerance?: number;
  maxIterations?: number;
  /** Bootstrap replicates for the standard errors; undefined: observed information. */
  bootstrap?: number;
  /** --out: a .csv or .xlsx file for every row's results. */
  out?: string;
  verbose: boolean;
  /** A flat background component (Banfield & Raftery 1993): always, never or "auto". */
  background: boolean | "auto";
  /** 1-based data rows to leave out. */
  leaveOut?: number[];
  json: boolean;
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
  const parsed = parseArgs(argv, FIT_FLAGS, "fit");
  const { positionals, values, switches } = parsed;
  if (switches.has("help") || switches.has("h")) return "help";
  if (positionals.length === 0) throw new SkeinError("bad-input", "No data file given; name one, as in: skein fit data.csv --y COLUMN");
  if (positionals.length > 1) {
    throw new SkeinError("bad-input", `fit takes one data file but got ${positionals.length} (${positionals.join(", ")}); list predictors as --x A,B without spaces, or quote the list`);
  }
  const y = values.get("y");
  if (y === undefined) throw new SkeinError("bad-input", "No outcome column given; name it, as in --y COLUMN");
  const bootstrapText = values.get("bootstrap");
  return {
    file: positionals[0],
    ...readFileFlags(parsed, "fit"),
    y,
    k: readGivenOption(parsed, "k", "fit") as number | undefined,
    seed: readOption(parsed, "seed", "fit") as number,
    intercept: readOption(parsed, "intercept", "fit") as boolean,
    model: readOption(parsed, "model", "fit") as MixtureModel,
    restarts: readGivenOption(parsed, "restarts", "fit") as number | undefined,
    tolerance: readGivenOption(parsed, "tolerance", "fit") as number | undefined,
    maxIterations: readGivenOption(parsed, "max_iterations", "fit") as number | undefined,
    bootstrap: bootstrapText === undefined ? undefined : parseWholeNumber(bootstrapText, "bootstrap", "fit", 10, 10000),
    out: checkOutFile(values.get("out")),
    verbose: switches.has("verbose"),
    background: readBackground(parsed, "fit"),
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
export function fitModel(design: Design, settings: Pick<FitSettings, "seed" | "intercept" | "model" | "restarts" | "tolerance" | "maxIterations" | "bootstrap"> & { k: number; background?: boolean | "auto" }, signal?: CancelSignal): ModelFit {
  const { k, seed, intercept, model, restarts, tolerance, maxIterations, background } = settings;
  const mixture = withColumnNames(design, settings.intercept, () => fitMixture(design, { k, seed, intercept, model, restarts, tolerance, maxIterations, background, signal }));
  const errors =
    settings.bootstrap === undefined
      ? standardErrors(design, mixture)
      : standardErrors(design, mixture, { method: "bootstrap", replicates: settings.bootstrap, seed: settings.seed, fitOptions: { restarts, tolerance, maxIterations } });
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
    stdErrorWarnings: method === "least-squares" ? [] : settings.bootstrap === undefined ? errors.warnings.map((w) => `${w} Or give --bootstrap N.`) : errors.warnings,
  };
}

/** The --out file, checked before any work: .csv or .xlsx. */
function checkOutFile(file: string | undefined): string | undefined {
  if (file === undefined) return undefined;
  if (!/\.(csv|xlsx)$/i.test(file)) throw new SkeinError("bad-input", `--out must name a .csv or .xlsx file, not "${file}" (see skein fit --help)`);
  return file;
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
export async function computeFitReport(settings: FitSettings, progress?: (k: number, kMax: number) => void, fitSignal?: (k: number) => CancelSignal): Promise<{ report: FitReport; sheetName?: string; design: Design; fit: MixtureFit; separation: SeparationReport | null }> {
  const readStart = performance.now();
  const { design, sheetName, columns, notices } = await loadDesign(settings);
  const readMs = performance.now() - readStart;

  const fitStart = performance.now();
  const { k, kChosenBy } = chooseK(design, settings, progress);
  const model = fitModel(design, { ...settings, k }, fitSignal?.(k));
  const fitMs = performance.now() - fitStart;

  const report = fitReport(design, model, settings, { k, kChosenBy, columns, notices, timings: { readMs, fitMs } });
  return { report, sheetName, design, fit: model.mixture, separation: model.separation };
}

/** The K given with --k, or else the one a scan suggests. */
function chooseK(design: Design, settings: FitSettings, progress?: (k: number, kMax: number) => void): Pick<FitReport, "k" | "kChosenBy"> {
  if (settings.k !== undefined) return { k: settings.k, kChosenBy: { by: "given" } };
  const kMax = defaultKMax(design.n, design.p + (settings.intercept ? 1 : 0));
  const scan = scanComponents(design, { kMax, seed: settings.seed, intercept: settings.intercept, model: settings.model, restarts: settings.restarts, tolerance: settings.tolerance, maxIterations: settings.maxIterations, background: settings.background, onProgress: progress });
  return { k: scan.chosenK, kChosenBy: { by: "scan", kMax: scan.rows.length } };
}

/** The --json report of a fit: the model's numbers, its checks and warnings, and how the file was read. */
function fitReport(design: Design, model: ModelFit, settings: FitSettings, known: Pick<FitReport, "k" | "kChosenBy" | "columns" | "notices" | "timings">): FitReport {
  // Schwarz (1978): BIC = −2 log L + ν ln n.
  const bic = -2 * model.logLikelihood + model.parameterCount * Math.log(design.n);
  const separation = model.separation;
  const exactFit = isExactFit(model.mixture, design.y);
  const stray = findStrayRows(design, model.mixture);
  return {
    k: known.k,
    kChosenBy: known.kChosenBy,
    n: design.n,
    rowsUsed: design.n,
    rowsSkipped: design.skipped.length,
    skipped: design.skipped.map((s) => ({ row: s.row + 1, column: s.column, reason: s.reason })),
    outcome: design.yName,
    response: design.yName,
    predictors: design.predictorNames,
    intercept: settings.intercept,
    components: model.components,
    labels: rowLabels(design, model),
    logLikelihood: model.logLikelihood,
    bic,
    icl: model.mixture.icl,
    model: settings.model,
    seed: settings.seed,
    warmStart: model.mixture.warmStart,
    refinement: model.mixture.refinement,
    warnings: fitWarnings(model),
    startsAgree: startsAgree(model.mixture.warmStart),
    converged: model.mixture.refinement.converged,
    exactFit,
    smallestGap: separation && Number.isFinite(separation.minGap) && !exactFit ? separation.minGap : null,
    misassignedRows: 100 * (separation?.misclassification ?? 0),
    membershipClarity: separation?.normalisedEntropy ?? 1,
    separation,
    stdErrors: { method: model.stdErrorMethod, weights: model.weightStdErrors, sigmas: model.sigmaStdErrors },
    timings: known.timings,
    columns: known.columns,
    notices: known.notices,
    strayRows: stray.rows.map((s) => ({ row: design.rowIndex[s.row] + 1, distance: s.distance, nearest: s.nearest + 1 })),
    strayRowsRule: stray.rule,
    backgroundWeight: model.mixture.background?.weight ?? null,
  };
}

/** One label per data row of the file: its 1-based component, or null for a skipped row. */
function rowLabels(design: Design, model: ModelFit): (number | null)[] {
  const labels: (number | null)[] = new Array(design.inputRows).fill(null);
  for (let i = 0; i < design.n; i++) labels[design.rowIndex[i]] = model.labels[i] + 1;
  return labels;
}

/** Every warning of the fit, its checks and its standard errors, once each. */
function fitWarnings(model: ModelFit): string[] {
  const warnings = [...new Set([...model.mixture.warnings, ...(model.separation?.warnings ?? []), ...model.stdErrorWarnings])];
  return warnings.map((warning) => withHostControls(warning, { iterations: "--max-iterations", restarts: "--restarts" }));
}

/** `skein fit`: returns the exit status; SkeinErrors propagate to main, which reports them. */
export async function fitCommand(argv: readonly string[], io: CommandIO): Promise<number> {
  const settings = parseFitSettings(argv);
  if (settings === "help") {
    io.stdout(FIT_USAGE);
    return 0;
  }
  const progress = settings.k === undefined ? scanProgress(io) : undefined;
  let fitting: ReturnType<typeof fitProgress> | undefined;
  const { report, sheetName, design, fit, separation } = await computeFitReport(settings, progress?.onProgress, (k) => {
    progress?.finish();
    fitting = fitProgress(io, k);
    return fitting.signal;
  });
  fitting?.finish();
  if (settings.out !== undefined) {
    // The table as the design read it (header row, converted numbers), so rows line up with the fit.
    const table = await readDataTable(settings.file, { sheet: settings.sheet, headerRow: settings.headerRow });
    const rows: unknown[][] = [table.names, ...table.rows];
    await writeRowResults(settings.out, { rows, design, fit, separation: separation ?? undefined, warnings: report.warnings, notes: [`skein fit ${path.basename(settings.file)}, seed ${settings.seed}; ${kChoiceText(report)}`] });
  }
  if (settings.json) io.stdout(JSON.stringify(report) + "\n");
  else io.stdout(formatFitTable(report, { file: path.basename(settings.file), sheetName, verbose: settings.verbose, out: settings.out }) + (settings.verbose ? `${threadsLine()}\n` : "") + formatNotices(report.notices));
  return 0;
}
