import * as path from "path";
import { SkeinError } from "../engine/errors";
import type { MixtureModel } from "../engine/mixtureTypes";
import { scanComponents } from "../engine/scanComponents";
import { findStrayRows } from "../engine/strayRows";
import type { OptionName } from "../engine/options";
import { FILE_OPTIONS_HELP, optionFlags, optionHelp, parseArgs, parseHeaderRow, parseList, parseRowList, readBackground, readGivenOption, readOption, type FlagKinds } from "./args";
import { formatNotices } from "./formatNotices";
import { formatNumber } from "./formatTable";
import { loadDesign, type ColumnReport } from "./loadDesign";

/** The options of the table that skein scan takes. */
const SCAN_OPTIONS: readonly OptionName[] = ["kmax", "model", "seed", "restarts", "tolerance", "max_iterations", "background", "intercept"];

export const SCAN_USAGE = `Usage: skein scan FILE --y COLUMN [--x COLUMN,COLUMN,...] --k-max N [options]

Fits 1, 2, ..., N components to a .csv or .xlsx file whose first row names the
columns, and compares them: log-likelihood, BIC, ICL, whether the fit
converged, and how far apart the closest two components are (in noise SDs).
It suggests a number of components and says why others were not suggested.

  --y COLUMN          the response column (required)
  --x COLUMNS         predictor columns, separated by commas; default: every
                      other column of numbers or categories (dates and
                      identifier columns are left out, and the output says so)
${optionHelp(SCAN_OPTIONS, 22, { kmax: "required" })}
  --leave-out ROWS    data rows to leave out, separated by commas (counted from
                      1 below the header), e.g. stray rows
  --cross-validate    also report a 5-fold cross-validated log-likelihood per row
  --json              write one JSON object instead of a table
  --help              show this help
${FILE_OPTIONS_HELP}
Example: skein scan sales.csv --y revenue --x price,advertising --k-max 5
`;

const SCAN_FLAGS: FlagKinds = {
  y: "value",
  x: "value",
  sheet: "value",
  "header-row": "value",
  ...optionFlags(SCAN_OPTIONS),
  "cross-validate": "switch",
  "leave-out": "value",
  json: "switch",
  help: "switch",
  h: "switch",
};

export interface ScanReportRow {
  k: number;
  logLikelihood: number;
  bic: number;
  icl: number;
  converged: boolean;
  /** Smallest gap between two components in noise SDs; null for K = 1 (no pair). */
  minSeparation: number | null;
  /** Present with --cross-validate. */
  crossValidatedLogLikelihood?: number;
  /** Why this K is not suggested, or null. */
  flag: string | null;
}

/** The --json output of skein scan. */
export interface ScanReport {
  chosenK: number;
  rule: string;
  n: number;
  response: string;
  predictors: string[];
  intercept: boolean;
  model: MixtureModel;
  rows: ScanReportRow[];
  /** Every column of the file: its kind and role. */
  columns: ColumnReport[];
  /** How the file was read: encoding, sheet, conversions, renamed headers, columns left out. */
  notices: string[];
  /** Why the scan stopped before --k-max, or null. */
  stoppedEarly: string | null;
  /** Rows no component of the suggested K explains (1-based data rows, as skein fit reports them). */
  strayRows: { row: number; distance: number; nearest: number }[];
  strayRowsRule: string;
}

/** `skein scan`: returns the exit status; SkeinErrors propagate to main, which reports them. */
export async function scanCommand(argv: readonly string[], io: { stdout: (s: string) => void }): Promise<number> {
  const parsed = parseArgs(argv, SCAN_FLAGS, "scan");
  const { positionals, values, switches } = parsed;
  if (switches.has("help") || switches.has("h")) {
    io.stdout(SCAN_USAGE);
    return 0;
  }
  if (positionals.length !== 1) throw new SkeinError("bad-input", `skein scan takes one data file, as in: skein scan data.csv --y COLUMN --k-max 5`);
  const y = values.get("y");
  if (y === undefined) throw new SkeinError("bad-input", "skein scan needs the response column, as in --y COLUMN");
  const kMaxText = values.get("k-max");
  if (kMaxText === undefined) throw new SkeinError("bad-input", "skein scan needs the largest number of components, as in --k-max 5");
  const kMax = readOption(parsed, "kmax", "scan") as number;
  const xText = values.get("x");
  const model = readOption(parsed, "model", "scan") as MixtureModel;
  const intercept = readOption(parsed, "intercept", "scan") as boolean;
  const { design, sheetName, columns, notices } = await loadDesign({
    file: positionals[0],
    sheet: values.get("sheet"),
    headerRow: parseHeaderRow(values.get("header-row"), "scan"),
    y,
    x: xText === undefined ? undefined : parseList(xText, "x", "scan"),
    intercept,
    leaveOut: values.has("leave-out") ? parseRowList(values.get("leave-out") as string, "leave-out", "scan") : undefined,
  });
  const crossValidate = switches.has("cross-validate");
  const scan = scanComponents(design, {
    kMax,
    seed: readOption(parsed, "seed", "scan") as number,
    intercept,
    model,
    restarts: readGivenOption(parsed, "restarts", "scan") as number | undefined,
    tolerance: readGivenOption(parsed, "tolerance", "scan") as number | undefined,
    maxIterations: readGivenOption(parsed, "max_iterations", "scan") as number | undefined,
    crossValidate,
    background: readBackground(parsed, "scan"),
  });
  const chosen = scan.rows.find((row) => row.k === scan.chosenK) ?? scan.rows[0];
  const stray = findStrayRows(design, chosen.fit);
  const report: ScanReport = {
    chosenK: scan.chosenK,
    rule: scan.rule,
    n: design.n,
    response: design.yName,
    predictors: design.predictorNames,
    intercept,
    model,
    rows: scan.rows.map((row) => ({
      k: row.k,
      logLikelihood: row.logLikelihood,
      bic: row.bic,
      icl: row.icl,
      converged: row.converged,
      minSeparation: Number.isFinite(row.minSeparation) ? row.minSeparation : null,
      ...(crossValidate || !Number.isNaN(row.crossValidatedLogLikelihood) ? { crossValidatedLogLikelihood: row.crossValidatedLogLikelihood } : {}),
      flag: row.flag,
    })),
    columns,
    notices,
    stoppedEarly: scan.stoppedEarly,
    strayRows: stray.rows.map((r) => ({ row: design.rowIndex[r.row] + 1, distance: r.distance, nearest: r.nearest + 1 })),
    strayRowsRule: stray.rule,
  };
  if (switches.has("json")) {
    io.stdout(JSON.stringify(report) + "\n");
    return 0;
  }
  const file = path.basename(positionals[0]);
  io.stdout(formatScanTable(report, sheetName ? `${file}, sheet ${sheetName}` : file) + formatNotices(report.notices));
  return 0;
}

/** The readable table of skein scan. */
export function formatScanTable(report: ScanReport, where: string): string {
  const lines: string[] = [];
  lines.push(`${report.response} regressed on ${report.predictors.join(", ")} (${report.model} model, ${report.intercept ? "with" : "without"} intercept); ${where}, ${report.n} rows`);
  lines.push("");
  const hasCv = report.rows.some((row) => row.crossValidatedLogLikelihood !== undefined);
  const header = ["K", "log-likelihood", "BIC", "ICL", ...(hasCv ? ["held-out LL/row"] : []), "converged", "closest pair (noise SDs)", ""];
  const table: string[][] = [header];
  for (const row of report.rows) {
    table.push([
      String(row.k),
      formatNumber(row.logLikelihood),
      formatNumber(row.bic),
      formatNumber(row.icl),
      ...(hasCv ? [row.crossValidatedLogLikelihood === undefined ? "" : formatNumber(row.crossValidatedLogLikelihood)] : []),
      row.converged ? "yes" : "no",
      row.minSeparation === null ? "-" : formatNumber(row.minSeparation),
      row.k === report.chosenK ? "<- suggested" : row.flag !== null ? "flagged" : "",
    ]);
  }
  const widths = header.map((_, j) => Math.max(...table.map((r) => r[j].length)));
  for (const r of table) lines.push("  " + r.map((cell, j) => (j === r.length - 1 ? cell : cell.padStart(widths[j]))).join("   ").trimEnd());
  lines.push("");
  if (report.stoppedEarly !== null) lines.push(report.stoppedEarly);
  lines.push(`Suggested: ${report.chosenK} component${report.chosenK === 1 ? "" : "s"}. Rule: ${report.rule}`);
  if (report.strayRows.length > 0) {
    lines.push(`Stray rows at K = ${report.chosenK}: data row${report.strayRows.length === 1 ? "" : "s"} ${report.strayRows.map((r) => r.row).join(", ")} (${report.strayRowsRule}); --leave-out ${report.strayRows.map((r) => r.row).join(",")} sets them aside.`);
  }
  const flagged = report.rows.filter((row) => row.flag !== null);
  if (flagged.length > 0) {
    lines.push("");
    for (const row of flagged) lines.push(`K = ${row.k}: ${row.flag}`);
  }
  return lines.join("\n") + "\n";
}
