import * as path from "path";
import { SkeinError } from "../engine/errors";
import type { Design } from "../engine/design";
import type { MixtureModel } from "../engine/mixtureTypes";
import type { ScanResult, ScanRow } from "../engine/trustTypes";
import { convergedWord, scanComponents } from "../engine/scanComponents";
import { findStrayRows } from "../engine/strayRows";
import type { OptionName } from "../engine/options";
import { FILE_OPTIONS_HELP, optionFlags, optionHelp, parseArgs, readFileFlags, parseRowList, readBackground, readGivenOption, readOption, type FlagKinds, type ParsedArgs } from "./args";
import { formatNotices } from "./formatNotices";
import { alignColumns, formatColumn, formatGap } from "../report/formatNumber";
import type { CommandIO } from "./commandIO";
import { scanProgress } from "./progressLines";
import { loadDesign, type ColumnReport, type DesignSource } from "./loadDesign";

/** The options of the table that skein scan takes. */
const SCAN_OPTIONS: readonly OptionName[] = ["kmax", "model", "seed", "restarts", "tolerance", "max_iterations", "background", "intercept"];

export const SCAN_USAGE = `Usage: skein scan FILE --y COLUMN [--x COLUMN,COLUMN,...] --k-max N [options]

Fits 1, 2, ..., N components to a .csv or .xlsx file whose first row names the
columns, and compares them: BIC, ICL, log-likelihood, the smallest gap between
two components (in noise SDs), whether the starts agree and whether the fit
converged. It suggests a number of components and says why each other number
is not suggested. A scan that runs longer than a second or two shows its
progress on stderr (when stderr is a terminal).

  --y COLUMN          the outcome column (required)
  --x COLUMNS         predictor columns, separated by commas; default: every
                      other column of numbers or categories (dates and
                      identifier columns are left out, and the output says so)
${optionHelp(SCAN_OPTIONS, 22, { kmax: "required" })}
  --leave-out ROWS    data rows to leave out, separated by commas (counted from
                      1 below the header), e.g. stray rows
  --cross-validate    also report the held-out log-likelihood per row
                      (5-fold cross-validation)
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
  /** The two best starts reached the same components. */
  startsAgree: boolean;
  /** The refinement stopped by its tolerance. */
  converged: boolean;
  /** Present when the refinement stopped before converging because this K could not change the suggestion: why. */
  stopped?: string;
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
  /** Every column of the file: its kind and role. */
  columns: ColumnReport[];
  /** How the file was read: encoding, sheet, conversions, renamed headers, columns left out. */
  notices: string[];
  /** Why the scan stopped before --k-max, or null. */
  stoppedEarly: string | null;
  /** Rows no component of the suggested K explains (1-based data rows, as skein fit reports them). */
  strayRows: { row: number; distance: number; nearest: number }[];
  strayRowsRule: string;
  /** Milliseconds reading the file, and scanning (every K's fit, cross-validation included). */
  timings: { readMs: number; scanMs: number };
}

/** What skein scan was asked for, up to the file to scan. */
interface ScanRequest {
  file: string;
  kMax: number;
  model: MixtureModel;
  intercept: boolean;
  source: DesignSource;
}

/** `skein scan`: returns the exit status; SkeinErrors propagate to main, which reports them. */
export async function scanCommand(argv: readonly string[], io: CommandIO): Promise<number> {
  const parsed = parseArgs(argv, SCAN_FLAGS, "scan");
  if (parsed.switches.has("help") || parsed.switches.has("h")) {
    io.stdout(SCAN_USAGE);
    return 0;
  }
  const request = readScanRequest(parsed);
  const readStart = performance.now();
  const { design, sheetName, columns, notices } = await loadDesign(request.source);
  const readMs = performance.now() - readStart;
  const crossValidate = parsed.switches.has("cross-validate");
  const scanStart = performance.now();
  const scan = runScan(design, parsed, request, crossValidate, io);
  const scanMs = performance.now() - scanStart;
  const report = scanReport(design, scan, request, crossValidate, { columns, notices, timings: { readMs, scanMs } });
  if (parsed.switches.has("json")) {
    io.stdout(JSON.stringify(report) + "\n");
    return 0;
  }
  const file = path.basename(request.file);
  io.stdout(formatScanTable(report, sheetName ? `${file}, sheet ${sheetName}` : file) + formatNotices(report.notices));
  return 0;
}

/** The file, the columns and the largest K, checked in the order the messages have always come in. */
function readScanRequest(parsed: ParsedArgs): ScanRequest {
  const { positionals, values } = parsed;
  if (positionals.length !== 1) throw new SkeinError("bad-input", `skein scan takes one data file, as in: skein scan data.csv --y COLUMN --k-max 5`);
  const y = values.get("y");
  if (y === undefined) throw new SkeinError("bad-input", "skein scan needs the outcome column, as in --y COLUMN");
  const kMaxText = values.get("k-max");
  if (kMaxText === undefined) throw new SkeinError("bad-input", "skein scan needs the largest number of components, as in --k-max 5");
  const kMax = readOption(parsed, "kmax", "scan") as number;
  const model = readOption(parsed, "model", "scan") as MixtureModel;
  const intercept = readOption(parsed, "intercept", "scan") as boolean;
  const source: DesignSource = {
    file: positionals[0],
    ...readFileFlags(parsed, "scan"),
    y,
    intercept,
    leaveOut: values.has("leave-out") ? parseRowList(values.get("leave-out") as string, "leave-out", "scan") : undefined,
  };
  return { file: positionals[0], kMax, model, intercept, source };
}

/**
 * The scan, with its progress on stderr. The fit's options are read only once the file is
 * loaded, so a problem with the file is reported before a problem with these options.
 */
function runScan(design: Design, parsed: ParsedArgs, request: ScanRequest, crossValidate: boolean, io: CommandIO): ScanResult {
  const progress = scanProgress(io);
  const scan = scanComponents(design, {
    onProgress: progress.onProgress,
    kMax: request.kMax,
    seed: readOption(parsed, "seed", "scan") as number,
    intercept: request.intercept,
    model: request.model,
    restarts: readGivenOption(parsed, "restarts", "scan") as number | undefined,
    tolerance: readGivenOption(parsed, "tolerance", "scan") as number | undefined,
    maxIterations: readGivenOption(parsed, "max_iterations", "scan") as number | undefined,
    crossValidate,
    background: readBackground(parsed, "scan"),
  });
  progress.finish();
  return scan;
}

/** The --json output: every K's row, and the stray rows of the suggested K. */
function scanReport(design: Design, scan: ScanResult, request: ScanRequest, crossValidate: boolean, read: Pick<ScanReport, "columns" | "notices" | "timings">): ScanReport {
  const chosen = scan.rows.find((row) => row.k === scan.chosenK) ?? scan.rows[0];
  const stray = findStrayRows(design, chosen.fit);
  return {
    chosenK: scan.chosenK,
    rule: scan.rule,
    n: design.n,
    outcome: design.yName,
    response: design.yName,
    predictors: design.predictorNames,
    intercept: request.intercept,
    model: request.model,
    rows: scan.rows.map((row) => scanReportRow(row, crossValidate)),
    columns: read.columns,
    notices: read.notices,
    stoppedEarly: scan.stoppedEarly,
    strayRows: stray.rows.map((r) => ({ row: design.rowIndex[r.row] + 1, distance: r.distance, nearest: r.nearest + 1 })),
    strayRowsRule: stray.rule,
    timings: read.timings,
  };
}

/** One K as --json reports it: an unlimited gap as null, the held-out log-likelihood only when there is one. */
function scanReportRow(row: ScanRow, crossValidate: boolean): ScanReportRow {
  return {
    k: row.k,
    logLikelihood: row.logLikelihood,
    bic: row.bic,
    icl: row.icl,
    startsAgree: row.startsAgree,
    converged: row.converged,
    ...(row.stopped !== null ? { stopped: row.stopped } : {}),
    smallestGap: Number.isFinite(row.minSeparation) ? row.minSeparation : null,
    minSeparation: Number.isFinite(row.minSeparation) ? row.minSeparation : null,
    ...(crossValidate || !Number.isNaN(row.crossValidatedLogLikelihood) ? { crossValidatedLogLikelihood: row.crossValidatedLogLikelihood } : {}),
    flag: row.flag,
    note: row.note,
  };
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
      convergedWord({ converged: row.converged, stopped: row.stopped ?? null }),
      row.k === report.chosenK ? "<- suggested" : "",
    ]);
  });
  lines.push(...alignColumns(table, "  "));
  lines.push("");
  if (report.stoppedEarly !== null) lines.push(report.stoppedEarly);
  lines.push(`Suggested: ${report.chosenK} component${report.chosenK === 1 ? "" : "s"}. Rule: ${report.rule}`);
  if (report.strayRows.length > 0) {
    lines.push(`Stray rows at K = ${report.chosenK}: data row${report.strayRows.length === 1 ? "" : "s"} ${report.strayRows.map((r) => r.row).join(", ")} (${report.strayRowsRule}); --leave-out ${report.strayRows.map((r) => r.row).join(",")} sets them aside.`);
  }
  const noted = rows.filter((row) => row.note !== null);
  if (noted.length > 0) {
    lines.push("");
    for (const row of noted) lines.push(`K = ${row.k}: ${row.note}`);
  }
  return lines.join("\n") + "\n";
}
