import * as path from "path";
import { SkeinError } from "../engine/errors";
import { fitMixture } from "../engine/fitMixture";
import { predictRows } from "../engine/predictRows";
import { parseArgs, parseBackground, parseList, parseModel, parseWholeNumber, type FlagKinds } from "./args";
import { formatNumber } from "./formatTable";
import { loadDesign, loadNewRows } from "./loadDesign";

export const PREDICT_USAGE = `Usage: skein predict FILE --y COLUMN [--x COLUMN,COLUMN,...] --k N --new NEWFILE [options]

Fits K components to FILE (as skein fit does), then predicts the rows of
NEWFILE, which must hold the same x columns (by name; y is not needed). For
each new row: every component's prediction, the membership-weighted
prediction and its spread (SD). With --model joint the memberships come from
where the new row's x lie; with the plain model they are the weights.

  --y COLUMN          the response column of FILE (required)
  --x COLUMNS         predictor columns, separated by commas; default: every
                      other column of FILE that holds mostly numbers
  --k N               number of components (required)
  --new NEWFILE       .csv or .xlsx file of new rows (required)
  --sheet NAME        the worksheet of an .xlsx FILE (default: the first)
  --new-sheet NAME    the worksheet of an .xlsx NEWFILE (default: the first)
  --seed S            seed for the random starts (default 1)
  --model plain|joint (default plain)
  --background B      auto (default), yes or no (see skein fit)
  --no-intercept      fit without an intercept
  --json              write one JSON object instead of a table
  --help              show this help

Example: skein predict sales.csv --y revenue --x price,advertising --k 2 --new next.csv --model joint
`;

const PREDICT_FLAGS: FlagKinds = {
  y: "value",
  x: "value",
  k: "value",
  new: "value",
  sheet: "value",
  "new-sheet": "value",
  seed: "value",
  model: "value",
  "no-intercept": "switch",
  background: "value",
  json: "switch",
  help: "switch",
  h: "switch",
};

const MAX_COMPONENTS = 50;

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
  /** What was done to the fitted data's columns (category columns made into indicators). */
  notices: string[];
}

/** `skein predict`: returns the exit status; SkeinErrors propagate to main. */
export async function predictCommand(argv: readonly string[], io: { stdout: (s: string) => void }): Promise<number> {
  const { positionals, values, switches } = parseArgs(argv, PREDICT_FLAGS, "predict");
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
  const k = parseWholeNumber(kText, "k", "predict", 1, MAX_COMPONENTS);
  const seedText = values.get("seed");
  const xText = values.get("x");
  const model = parseModel(values.get("model"), "predict");
  const intercept = !switches.has("no-intercept");
  const { design } = await loadDesign({ file: positionals[0], sheet: values.get("sheet"), y, x: xText === undefined ? undefined : parseList(xText, "x", "predict"), intercept, k });
  const fit = fitMixture(design, { k, seed: seedText === undefined ? 1 : parseWholeNumber(seedText, "seed", "predict", 0, 2 ** 32 - 1), intercept, model, background: parseBackground(values.get("background"), "predict") });
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
    notices: design.notices,
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
  for (const notice of design.notices) lines.push(`Note: ${notice}`);
  io.stdout(lines.join("\n") + "\n");
  return 0;
}
