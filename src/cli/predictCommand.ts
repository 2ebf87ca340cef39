import * as path from "path";
import { SkeinError } from "../engine/errors";
import { fitMixture } from "../engine/fitMixture";
import { predictRows } from "../engine/predictRows";
import type { MixtureModel } from "../engine/mixtureTypes";
import type { OptionName } from "../engine/options";
import { FILE_OPTIONS_HELP, optionFlags, optionHelp, parseArgs, parseHeaderRow, parseList, readBackground, readGivenOption, readOption, type FlagKinds } from "./args";
import { formatNotices } from "./formatNotices";
import { formatNumber } from "./formatTable";
import { loadDesign, loadNewRows, type ColumnReport } from "./loadDesign";

/** The options of the table that skein predict takes. */
const PREDICT_OPTIONS: readonly OptionName[] = ["k", "model", "seed", "restarts", "tolerance", "max_iterations", "background", "intercept"];

export const PREDICT_USAGE = `Usage: skein predict FILE --y COLUMN [--x COLUMN,COLUMN,...] --k N --new NEWFILE [options]

Fits K components to FILE (as skein fit does), then predicts the rows of
NEWFILE, which must hold the same x columns (by name; y is not needed). For
each new row: every component's prediction, the membership-weighted
prediction and its spread (SD). With --model joint the memberships come from
where the new row's x lie; with the plain model they are the weights.

  --y COLUMN          the response column of FILE (required)
  --x COLUMNS         predictor columns, separated by commas; default: every
                      other column of FILE of numbers or categories (dates and
                      identifier columns are left out, and the output says so)
  --new NEWFILE       .csv or .xlsx file of new rows (required)
  --new-sheet NAME    the worksheet of an .xlsx NEWFILE (default: the first
                      sheet holding a table of numbers)
${optionHelp(PREDICT_OPTIONS, 22, { k: "required" })}
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
  spread: number;
  memberships: number[];
}

/** The --json output of skein predict. */
export interface PredictReport {
  k: number;
  model: string;
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
export async function predictCommand(argv: readonly string[], io: { stdout: (s: string) => void }): Promise<number> {
  const parsed = parseArgs(argv, PREDICT_FLAGS, "predict");
  const { positionals, values, switches } = parsed;
  if (switches.has("help") || switches.has("h")) {
    io.stdout(PREDICT_USAGE);
    return 0;
  }
  if (positionals.length !== 1) throw new SkeinError("bad-input", "skein predict takes one data file to fit, as in: skein predict data.csv --y COLUMN --k 2 --new new.csv");
  const y = values.get("y");
  if (y === undefined) throw new SkeinError("bad-input", "skein predict needs the response column, as in --y COLUMN");
  const kText = values.get("k");
  if (kText === undefined) throw new SkeinError("bad-input", "skein predict needs the number of components, as in --k 2 (skein scan suggests one)");
  const newFile = values.get("new");
  if (newFile === undefined) throw new SkeinError("bad-input", "skein predict needs the file of new rows, as in --new new.csv");
  const k = readOption(parsed, "k", "predict") as number;
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
    k,
  });
  const fit = fitMixture(design, {
    k,
    seed: readOption(parsed, "seed", "predict") as number,
    intercept,
    model,
    restarts: readGivenOption(parsed, "restarts", "predict") as number | undefined,
    tolerance: readGivenOption(parsed, "tolerance", "predict") as number | undefined,
    maxIterations: readGivenOption(parsed, "max_iterations", "predict") as number | undefined,
    background: readBackground(parsed, "predict"),
  });
  const newRows = await loadNewRows(newFile, design.columns, values.get("new-sheet"));
  const prediction = predictRows(fit, newRows.x, newRows.m);
  const rows: (PredictedRow | null)[] = new Array(newRows.inputRows).fill(null);
  newRows.rowIndex.forEach((row, i) => {
    rows[row] = {
      perComponent: Array.from(prediction.perComponent.subarray(i * k, i * k + k)),
      weighted: prediction.weighted[i],
      spread: prediction.spread[i],
      memberships: Array.from(prediction.memberships.subarray(i * k, i * k + k)),
    };
  });
  const report: PredictReport = {
    k,
    model,
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
  const header = ["new row", ...fit.components.map((_, c) => `component ${c + 1}`), "weighted", "spread"];
  const table: string[][] = [header];
  rows.forEach((row, r) => {
    if (row === null) table.push([String(r + 1), ...fit.components.map(() => ""), "skipped", ""]);
    else table.push([String(r + 1), ...row.perComponent.map(formatNumber), formatNumber(row.weighted), formatNumber(row.spread)]);
  });
  const widths = header.map((_, j) => Math.max(...table.map((t) => t[j].length)));
  for (const t of table) lines.push("  " + t.map((cell, j) => cell.padStart(widths[j])).join("   "));
  if (newRows.skipped.length > 0) lines.push(`Skipped new rows (a predictor cell is blank, or not a number where one is needed): ${newRows.skipped.join(", ")}`);
  io.stdout(lines.join("\n") + "\n" + formatNotices(report.notices));
  return 0;
}
