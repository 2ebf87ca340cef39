import * as path from "path";
import { SkeinError } from "../engine/errors";
import { fitMixture } from "../engine/fitMixture";
import { predictRows } from "../engine/predictRows";
import type { MixtureModel } from "../engine/mixtureTypes";
import type { OptionName } from "../engine/options";
import { FILE_OPTIONS_HELP, optionFlags, optionHelp, parseArgs, parseHeaderRow, parseList, readBackground, readGivenOption, readOption, type FlagKinds } from "./args";
import { formatNotices } from "./formatNotices";
import { alignColumns, formatColumn } from "../report/formatNumber";
import { defaultKMax, scanComponents } from "../engine/scanComponents";
import { kChoiceText } from "./formatTable";
import type { CommandIO } from "./main";
import { scanProgress } from "./scanProgress";
import { loadDesign, loadNewRows, type ColumnReport } from "./loadDesign";

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

/** `skein predict`: returns the exit status; SkeinErrors propagate to main. */
export async function predictCommand(argv: readonly string[], io: CommandIO): Promise<number> {
  const parsed = parseArgs(argv, PREDICT_FLAGS, "predict");
  const { positionals, values, switches } = parsed;
  if (switches.has("help") || switches.has("h")) {
    io.stdout(PREDICT_USAGE);
    return 0;
  }
  if (positionals.length !== 1) throw new SkeinError("bad-input", "skein predict takes one data file to fit, as in: skein predict data.csv --y COLUMN --k 2 --new new.csv");
  const y = values.get("y");
  if (y === undefined) throw new SkeinError("bad-input", "skein predict needs the outcome column, as in --y COLUMN");
  const newFile = values.get("new");
  if (newFile === undefined) throw new SkeinError("bad-input", "skein predict needs the file of new rows, as in --new new.csv");
  const givenK = readGivenOption(parsed, "k", "predict") as number | undefined;
  const xText = values.get("x");
  const model = readOption(parsed, "model", "predict") as MixtureModel;
  const intercept = readOption(parsed, "intercept", "predict") as boolean;
  const { design, columns, notices } = await loadDesign({
    file: positionals[0],
    sheet: values.get("sheet"),
    headerRow: parseHeaderRow(values.get("header-row"), "predict"),
    y,
    x: xText === undefined ? undefined : parseList(xText, "x", "predict"),
    intercept,
    k: givenK,
  });
  const seed = readOption(parsed, "seed", "predict") as number;
  const restarts = readGivenOption(parsed, "restarts", "predict") as number | undefined;
  const tolerance = readGivenOption(parsed, "tolerance", "predict") as number | undefined;
  const maxIterations = readGivenOption(parsed, "max_iterations", "predict") as number | undefined;
  const background = readBackground(parsed, "predict");
  let k = givenK;
  let kChosenBy: PredictReport["kChosenBy"] = { by: "given" };
  if (k === undefined) {
    const progress = scanProgress(io);
    const scan = scanComponents(design, { kMax: defaultKMax(design.n, design.p + (intercept ? 1 : 0)), seed, intercept, model, restarts, tolerance, maxIterations, background, onProgress: progress.onProgress });
    progress.finish();
    k = scan.chosenK;
    kChosenBy = { by: "scan", kMax: scan.rows.length };
  }
  const fit = fitMixture(design, { k, seed, intercept, model, restarts, tolerance, maxIterations, background });
  const newRows = await loadNewRows(newFile, design.columns, values.get("new-sheet"));
  const prediction = predictRows(fit, newRows.x, newRows.m);
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
  const report: PredictReport = {
    k,
    kChosenBy,
    model,
    outcome: design.yName,
    response: design.yName,
    predictors: design.predictorNames,
    components: fit.components.map((c) => ({ weight: c.weight, sigma: c.sigma, coefficients: Array.from(c.coefficients) })),
    rows,
    skipped: newRows.skipped,
    columns,
    notices: [...notices, ...newRows.notices],
  };
  if (switches.has("json")) {
    io.stdout(JSON.stringify(report) + "\n");
    return 0;
  }
  const lines: string[] = [];
  lines.push(`Predictions of ${design.yName} for ${path.basename(newFile)} from ${k} component${k === 1 ? "" : "s"} fitted to ${path.basename(positionals[0])} (${model} model)`);
  lines.push(kChoiceText({ k, kChosenBy }));
  const header = ["new row", ...fit.components.map((_, c) => `component ${c + 1}`), "weighted prediction", "prediction SD"];
  const table: string[][] = [header];
  // Each column at one number of decimals, so the decimal points line up.
  const used = rows.filter((row): row is PredictedRow => row !== null);
  const shownColumns = [...fit.components.map((_, c) => used.map((row) => row.perComponent[c])), used.map((row) => row.weighted), used.map((row) => row.predictionSd)].map((values) => formatColumn(values));
  let u = 0;
  rows.forEach((row, r) => {
    if (row === null) table.push([String(r + 1), ...fit.components.map(() => ""), "skipped", ""]);
    else {
      table.push([String(r + 1), ...shownColumns.map((column) => column[u])]);
      u++;
    }
  });
  lines.push(...alignColumns(table, "  "));
  if (newRows.skipped.length > 0) lines.push(`Skipped new rows (a predictor cell is blank, or not a number where one is needed): ${newRows.skipped.join(", ")}`);
  io.stdout(lines.join("\n") + "\n" + formatNotices(report.notices));
  return 0;
}
