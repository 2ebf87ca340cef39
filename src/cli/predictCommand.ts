import * as path from "path";
import { SkeinError } from "../engine/errors";
import { fitMixture } from "../engine/fitMixture";
import { predictRows } from "../engine/predictRows";
import type { Design } from "../engine/design";
import type { MixtureModel, MixtureOptions } from "../engine/mixtureTypes";
import type { Prediction } from "../engine/trustTypes";
import type { OptionName } from "../engine/options";
import { FILE_OPTIONS_HELP, optionFlags, optionHelp, parseArgs, readFileFlags, readBackground, readGivenOption, readOption, type FlagKinds, type ParsedArgs } from "./args";
import { formatNotices } from "./formatNotices";
import { alignColumns, formatColumn } from "../report/formatNumber";
import { defaultKMax, scanComponents } from "../engine/scanComponents";
import { kChoiceText } from "./formatTable";
import type { CommandIO } from "./commandIO";
import { scanProgress } from "./progressLines";
import { loadDesign, loadNewRows, type ColumnReport, type DesignSource, type NewRows } from "./loadDesign";

/** The options of the table that skein predict takes. */
const PREDICT_OPTIONS: readonly OptionName[] = ["k", "model", "seed", "restarts", "tolerance", "max_iterations", "background", "intercept"];

export const PREDICT_USAGE = `Usage: skein predict FILE --y COLUMN [--x COLUMN,COLUMN,...] [--k N] --new NEWFILE [options]

Fits K components to FILE (as skein fit does), then predicts the outcome for
the rows of NEWFILE, which must hold the same predictor columns (by name; the
outcome is not needed). For each new row: every component's prediction, the
weighted prediction and the prediction SD (how far the outcome may typically
lie from the weighted prediction). With --model joint the weights come from
where the new row's predictors lie; with the plain model they are the
component weights.

  --y COLUMN          the outcome column of FILE (required)
  --x COLUMNS         predictor columns, separated by commas; default: every
                      other column of FILE of numbers or categories (dates and
                      identifier columns are left out, and the output says so)
  --new NEWFILE       .csv or .xlsx file of new rows (required)
  --new-sheet NAME    the worksheet of an .xlsx NEWFILE (default: the first
                      sheet holding a table of numbers)
${optionHelp(PREDICT_OPTIONS, 22)}
  --json              write one JSON object instead of a table
  --help              show this help
${FILE_OPTIONS_HELP}--sheet and --header-row apply to FILE; NEWFILE's column names are in its
first non-empty row.

Example: skein predict sales.csv --y revenue --x price,advertising --k 2 --new next.csv --model joint
`;

const PREDICT_FLAGS: FlagKinds = {
  y: "value",
  x: "value",
  new: "value",
  sheet: "value",
  "header-row": "value",
  "new-sheet": "value",
  ...optionFlags(PREDICT_OPTIONS),
  json: "switch",
  help: "switch",
  h: "switch",
};

/** One new row's prediction; null in `rows` for a new row skipped for a non-numeric cell. */
export interface PredictedRow {
  perComponent: number[];
  weighted: number;
  /** Prediction SD. */
  predictionSd: number;
  /** The same as predictionSd (its older name). */
  spread: number;
  memberships: number[];
}

/** The --json output of skein predict. */
export interface PredictReport {
  k: number;
  /** How K was chosen: given with --k, or the scan's suggestion over K = 1..kMax. */
  kChosenBy: { by: "given" } | { by: "scan"; kMax: number };
  model: string;
  /** The outcome column's name. */
  outcome: string;
  /** The same as outcome (its older name). */
  response: string;
  predictors: string[];
  components: { weight: number; sigma: number; coefficients: number[] }[];
  /** One per data row of NEWFILE, in order. */
  rows: (PredictedRow | null)[];
  /** 1-based data rows of NEWFILE left out. */
  skipped: number[];
  /** Every column of FILE: its kind and role. */
  columns: ColumnReport[];
  /** How FILE and NEWFILE were read: encoding, sheet, conversions, renamed headers, columns left out. */
  notices: string[];
}

/** What skein predict was asked for, up to the file to fit on. */
interface PredictRequest {
  file: string;
  newFile: string;
  k: number | undefined;
  model: MixtureModel;
  intercept: boolean;
  source: DesignSource;
}

/** The fit's own settings, which skein predict passes to the scan and the fit alike. */
type PredictFitOptions = Required<Pick<MixtureOptions, "seed" | "intercept" | "model" | "background">> & Pick<MixtureOptions, "restarts" | "tolerance" | "maxIterations">;

/** `skein predict`: returns the exit status; SkeinErrors propagate to main. */
export async function predictCommand(argv: readonly string[], io: CommandIO): Promise<number> {
  const parsed = parseArgs(argv, PREDICT_FLAGS, "predict");
  if (parsed.switches.has("help") || parsed.switches.has("h")) {
    io.stdout(PREDICT_USAGE);
    return 0;
  }
  const request = readPredictRequest(parsed);
  const { design, columns, notices } = await loadDesign(request.source);
  // The fit's options are read only once FILE is loaded, so a problem with the file is
  // reported before a problem with these options, as it always was.
  const options = readFitOptions(parsed, request);
  const { k, kChosenBy } = chooseK(design, request.k, options, io);
  const fit = fitMixture(design, { k, ...options });
  const newRows = await loadNewRows(request.newFile, design.columns, parsed.values.get("new-sheet"));
  const prediction = predictRows(fit, newRows.x, newRows.m);
  const report: PredictReport = {
    k,
    kChosenBy,
    model: request.model,
    outcome: design.yName,
    response: design.yName,
    predictors: design.predictorNames,
    components: fit.components.map((c) => ({ weight: c.weight, sigma: c.sigma, coefficients: Array.from(c.coefficients) })),
    rows: predictedRows(prediction, newRows, k),
    skipped: newRows.skipped,
    columns,
    notices: [...notices, ...newRows.notices],
  };
  if (parsed.switches.has("json")) io.stdout(JSON.stringify(report) + "\n");
  else io.stdout(formatPredictTable(report, request) + formatNotices(report.notices));
  return 0;
}

/** The files, the columns and the number of components, checked in the order the messages have always come in. */
function readPredictRequest(parsed: ParsedArgs): PredictRequest {
  const { positionals, values } = parsed;
  if (positionals.length !== 1) throw new SkeinError("bad-input", "skein predict takes one data file to fit, as in: skein predict data.csv --y COLUMN --k 2 --new new.csv");
  const y = values.get("y");
  if (y === undefined) throw new SkeinError("bad-input", "skein predict needs the outcome column, as in --y COLUMN");
  const newFile = values.get("new");
  if (newFile === undefined) throw new SkeinError("bad-input", "skein predict needs the file of new rows, as in --new new.csv");
  const k = readGivenOption(parsed, "k", "predict") as number | undefined;
  const model = readOption(parsed, "model", "predict") as MixtureModel;
  const intercept = readOption(parsed, "intercept", "predict") as boolean;
  const source: DesignSource = {
    file: positionals[0],
    ...readFileFlags(parsed, "predict"),
    y,
    intercept,
    k,
  };
  return { file: positionals[0], newFile, k, model, intercept, source };
}

/** Read after FILE is loaded (see predictCommand). */
function readFitOptions(parsed: ParsedArgs, request: PredictRequest): PredictFitOptions {
  const seed = readOption(parsed, "seed", "predict") as number;
  const restarts = readGivenOption(parsed, "restarts", "predict") as number | undefined;
  const tolerance = readGivenOption(parsed, "tolerance", "predict") as number | undefined;
  const maxIterations = readGivenOption(parsed, "max_iterations", "predict") as number | undefined;
  const background = readBackground(parsed, "predict");
  return { seed, intercept: request.intercept, model: request.model, restarts, tolerance, maxIterations, background };
}

/** The K given with --k, or else the one a scan of FILE suggests. */
function chooseK(design: Design, givenK: number | undefined, options: PredictFitOptions, io: CommandIO): Pick<PredictReport, "k" | "kChosenBy"> {
  if (givenK !== undefined) return { k: givenK, kChosenBy: { by: "given" } };
  const progress = scanProgress(io);
  const kMax = defaultKMax(design.n, design.p + (options.intercept ? 1 : 0));
  const scan = scanComponents(design, { kMax, ...options, onProgress: progress.onProgress });
  progress.finish();
  return { k: scan.chosenK, kChosenBy: { by: "scan", kMax: scan.rows.length } };
}

/** One entry per data row of NEWFILE: its predictions, or null for a skipped row. */
function predictedRows(prediction: Prediction, newRows: NewRows, k: number): (PredictedRow | null)[] {
  const rows: (PredictedRow | null)[] = new Array(newRows.inputRows).fill(null);
  newRows.rowIndex.forEach((row, i) => {
    rows[row] = {
      perComponent: Array.from(prediction.perComponent.subarray(i * k, i * k + k)),
      weighted: prediction.weighted[i],
      predictionSd: prediction.spread[i],
      spread: prediction.spread[i],
      memberships: Array.from(prediction.memberships.subarray(i * k, i * k + k)),
    };
  });
  return rows;
}

/** The readable output of skein predict: a line on the fit, then one row per new row. */
function formatPredictTable(report: PredictReport, files: Pick<PredictRequest, "file" | "newFile">): string {
  const { k, model, rows } = report;
  const lines: string[] = [];
  lines.push(`Predictions of ${report.outcome} for ${path.basename(files.newFile)} from ${k} component${k === 1 ? "" : "s"} fitted to ${path.basename(files.file)} (${model} model)`);
  lines.push(kChoiceText(report));
  const header = ["new row", ...report.components.map((_, c) => `component ${c + 1}`), "weighted prediction", "prediction SD"];
  const table: string[][] = [header];
  // Each column at one number of decimals, so the decimal points line up.
  const used = rows.filter((row): row is PredictedRow => row !== null);
  const shownColumns = [...report.components.map((_, c) => used.map((row) => row.perComponent[c])), used.map((row) => row.weighted), used.map((row) => row.predictionSd)].map((values) => formatColumn(values));
  let u = 0;
  rows.forEach((row, r) => {
    if (row === null) table.push([String(r + 1), ...report.components.map(() => ""), "skipped", ""]);
    else {
      table.push([String(r + 1), ...shownColumns.map((column) => column[u])]);
      u++;
    }
  });
  lines.push(...alignColumns(table, "  "));
  if (report.skipped.length > 0) lines.push(`Skipped new rows (a predictor cell is blank, or not a number where one is needed): ${report.skipped.join(", ")}`);
  return lines.join("\n") + "\n";
}
