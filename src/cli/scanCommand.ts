import * as path from "path";
import { SkeinError } from "../engine/errors";
import type { MixtureModel } from "../engine/mixtureTypes";
import { scanComponents } from "../engine/scanComponents";
import { parseArgs, parseList, parseModel, parseWholeNumber, type FlagKinds } from "./args";
import { alignColumns, formatColumn, formatGap } from "../report/formatNumber";
import type { CommandIO } from "./main";
import { scanProgress } from "./scanProgress";
import { loadDesign } from "./loadDesign";

export const SCAN_USAGE = `Usage: skein scan FILE --y COLUMN [--x COLUMN,COLUMN,...] --k-max N [options]

Fits 1, 2, ..., N components to a .csv or .xlsx file whose first row names the
columns, and compares them: BIC, ICL, log-likelihood, the smallest gap between
two components (in noise SDs), whether the starts agree and whether the fit
converged. It suggests a number of components and says why each other number
is not suggested. A scan that runs longer than a second or two shows its
progress on stderr (when stderr is a terminal).

  --y COLUMN          the outcome column (required)
  --x COLUMNS         predictor columns, separated by commas; default: every
                      other column that holds mostly numbers
  --sheet NAME        the worksheet of an .xlsx file (default: the first)
  --k-max N           the largest number of components tried (required)
  --seed S            seed for the random starts (default 1)
  --model plain|joint plain: y given x per component; joint: each component
                      also models where its x lie (default plain)
  --restarts R        random starts per fit
  --cross-validate    also report the held-out log-likelihood per row
                      (5-fold cross-validation)
  --no-intercept      fit without an intercept
  --json              write one JSON object instead of a table
  --help              show this help

Example: skein scan sales.csv --y revenue --x price,advertising --k-max 5
`;

const SCAN_FLAGS: FlagKinds = {
  y: "value",
  x: "value",
  sheet: "value",
  "k-max": "value",
  seed: "value",
  model: "value",
  restarts: "value",
  "cross-validate": "switch",
  "no-intercept": "switch",
  json: "switch",
  help: "switch",
  h: "switch",
};

/** Largest K the command accepts. */
const MAX_COMPONENTS = 20;

export interface ScanReportRow {
  k: number;
  logLikelihood: number;
  bic: number;
  icl: number;
  /** The two best starts reached the same components. */
  startsAgree: boolean;
  /** The refinement stopped by its tolerance. */
  converged: boolean;
  /** Smallest gap between two components in noise SDs; null for K = 1 (no pair) or unlimited (noise 0). */
  smallestGap: number | null;
  /** The same as smallestGap (its older name). */
  minSeparation: number | null;
  /** Present with --cross-validate. */
  crossValidatedLogLikelihood?: number;
  /** Why this K cannot be suggested (did not converge, starts disagree, ...), or null. */
  flag: string | null;
  /** For every K but the suggested one, why it is not suggested; null for the suggested K. */
  note: string | null;
}

/** The --json output of skein scan. */
export interface ScanReport {
  chosenK: number;
  rule: string;
  n: number;
  /** The outcome column's name. */
  outcome: string;
  /** The same as outcome (its older name). */
  response: string;
  predictors: string[];
  intercept: boolean;
  model: MixtureModel;
  rows: ScanReportRow[];
}

/** `skein scan`: returns the exit status; SkeinErrors propagate to main, which reports them. */
export async function scanCommand(argv: readonly string[], io: CommandIO): Promise<number> {
  const { positionals, values, switches } = parseArgs(argv, SCAN_FLAGS, "scan");
  if (switches.has("help") || switches.has("h")) {
    io.stdout(SCAN_USAGE);
    return 0;
  }
  if (positionals.length !== 1) throw new SkeinError("bad-input", `skein scan takes one data file, as in: skein scan data.csv --y COLUMN --k-max 5`);
  const y = values.get("y");
  if (y === undefined) throw new SkeinError("bad-input", "skein scan needs the outcome column, as in --y COLUMN");
  const kMaxText = values.get("k-max");
  if (kMaxText === undefined) throw new SkeinError("bad-input", "skein scan needs the largest number of components, as in --k-max 5");
  const kMax = parseWholeNumber(kMaxText, "k-max", "scan", 1, MAX_COMPONENTS);
  const seedText = values.get("seed");
  const restartsText = values.get("restarts");
  const xText = values.get("x");
  const model = parseModel(values.get("model"), "scan");
  const intercept = !switches.has("no-intercept");
  const { design, sheetName } = await loadDesign({
    file: positionals[0],
    sheet: values.get("sheet"),
    y,
    x: xText === undefined ? undefined : parseList(xText, "x", "scan"),
    intercept,
  });
  const crossValidate = switches.has("cross-validate");
  const progress = scanProgress(io);
  const scan = scanComponents(design, {
    onProgress: progress.onProgress,
    kMax,
    seed: seedText === undefined ? 1 : parseWholeNumber(seedText, "seed", "scan", 0, 2 ** 32 - 1),
    intercept,
    model,
    restarts: restartsText === undefined ? undefined : parseWholeNumber(restartsText, "restarts", "scan", 0, 1000),
    crossValidate,
  });
  progress.finish();
  const report: ScanReport = {
    chosenK: scan.chosenK,
    rule: scan.rule,
    n: design.n,
    outcome: design.yName,
    response: design.yName,
    predictors: design.predictorNames,
    intercept,
    model,
    rows: scan.rows.map((row) => ({
      k: row.k,
      logLikelihood: row.logLikelihood,
      bic: row.bic,
      icl: row.icl,
      startsAgree: row.startsAgree,
      converged: row.converged,
      smallestGap: Number.isFinite(row.minSeparation) ? row.minSeparation : null,
      minSeparation: Number.isFinite(row.minSeparation) ? row.minSeparation : null,
      ...(crossValidate || !Number.isNaN(row.crossValidatedLogLikelihood) ? { crossValidatedLogLikelihood: row.crossValidatedLogLikelihood } : {}),
      flag: row.flag,
      note: row.note,
    })),
  };
  if (switches.has("json")) {
    io.stdout(JSON.stringify(report) + "\n");
    return 0;
  }
  const file = path.basename(positionals[0]);
  io.stdout(formatScanTable(report, sheetName ? `${file}, sheet ${sheetName}` : file));
  return 0;
}

/** The readable table of skein scan: one row per K, then why each other K is not suggested. */
export function formatScanTable(report: ScanReport, where: string): string {
  const lines: string[] = [];
  lines.push(`${report.outcome} regressed on ${report.predictors.join(", ")} (${report.model} model, ${report.intercept ? "with" : "without"} intercept); ${where}, ${report.n} rows`);
  lines.push("");
  const rows = report.rows;
  const hasCv = rows.some((row) => row.crossValidatedLogLikelihood !== undefined);
  const header = ["K", "BIC", "ICL", "log-likelihood", ...(hasCv ? ["held-out log-likelihood per row"] : []), "smallest gap (noise SDs)", "starts agree", "converged", ""];
  const bic = formatColumn(rows.map((row) => row.bic));
  const icl = formatColumn(rows.map((row) => row.icl));
  const logLikelihood = formatColumn(rows.map((row) => row.logLikelihood));
  const heldOut = formatColumn(rows.map((row) => row.crossValidatedLogLikelihood ?? NaN));
  const gaps = rows.map((row) => (row.k === 1 ? "-" : row.smallestGap === null ? formatGap(Infinity) : formatGap(row.smallestGap)));
  const table: string[][] = [header];
  rows.forEach((row, r) => {
    table.push([
      String(row.k),
      bic[r],
      icl[r],
      logLikelihood[r],
      ...(hasCv ? [row.crossValidatedLogLikelihood === undefined ? "" : heldOut[r]] : []),
      gaps[r],
      row.startsAgree ? "yes" : "no",
      row.converged ? "yes" : "no",
      row.k === report.chosenK ? "<- suggested" : "",
    ]);
  });
  lines.push(...alignColumns(table, "  "));
  lines.push("");
  lines.push(`Suggested: ${report.chosenK} component${report.chosenK === 1 ? "" : "s"}. Rule: ${report.rule}`);
  const noted = rows.filter((row) => row.note !== null);
  if (noted.length > 0) {
    lines.push("");
    for (const row of noted) lines.push(`K = ${row.k}: ${row.note}`);
  }
  return lines.join("\n") + "\n";
}
