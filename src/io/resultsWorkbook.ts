import type { Row, Workbook } from "exceljs";
import type { Design } from "../engine/design";
import { exactComponents, isExactFit } from "../engine/exactFit";
import type { MixtureFit } from "../engine/mixtureTypes";
import { componentPrediction } from "../engine/predictRows";
import { startsAgree } from "../engine/scanComponents";
import type { SeparationReport, StandardErrorReport } from "../engine/trustTypes";
import { WORKBOOK_FILLS } from "../report/componentStyle";
import { ERROR_DIGITS, decimalsFor } from "../report/formatNumber";

/** Header colours from the shared style module: Skein's columns, the input's columns, the text on both. */
const RESULT_FILL = WORKBOOK_FILLS.result;
const DATA_FILL = WORKBOOK_FILLS.data;
const HEADER_TEXT = WORKBOOK_FILLS.headerText;

/** Number formats: shares as percentages, everything else at four significant digits or so. */
const PERCENT_FORMAT = "0.0%";
const NUMBER_FORMAT = "0.0000";
const WHOLE_FORMAT = "0";

/** A fixed-decimals number format ("0", "0.00"). */
function decimalsFormat(decimals: number): string {
  const d = Math.max(0, Math.min(12, decimals));
  return d === 0 ? "0" : `0.${"0".repeat(d)}`;
}

/**
 * The number format of an estimate and of its standard error, in the one number style: the
 * standard error to two significant digits and the estimate to the same decimal place; with no
 * standard error four significant digits; an exactly known value (standard error 0) as General,
 * which drops the rounding noise past its last digit.
 */
function estimateFormat(value: number, standardError: number | null): string {
  if (standardError === 0) return "General";
  if (standardError !== null && Number.isFinite(standardError) && standardError > 0) return decimalsFormat(ERROR_DIGITS - 1 - Math.floor(Math.log10(standardError)));
  return decimalsFormat(decimalsFor(value));
}

export interface ResultsWorkbookInput {
  /** The table as read: header row first, then the data rows in input order. */
  rows: unknown[][];
  design: Design;
  fit: MixtureFit;
  standardErrors?: StandardErrorReport;
  /** The fit's checks; when given, the Checks sheet shows them. */
  separation?: SeparationReport;
  /** Every warning the command line printed for this fit (the fit's own are added when missing). */
  warnings?: string[];
  /** Lines describing where the numbers came from (file, settings, seed, how K was chosen). */
  notes?: string[];
}

function header(row: Row, columns: number, resultFrom: number): void {
  for (let c = 1; c <= columns; c++) {
    const cell = row.getCell(c);
    cell.font = { bold: true, color: { argb: HEADER_TEXT } };
    cell.fill = { type: "pattern", pattern: "solid", fgColor: { argb: c >= resultFrom ? RESULT_FILL : DATA_FILL } };
  }
}

/** A cell value as read back to a plain value a file can hold. */
function plain(value: unknown): string | number | boolean | null {
  if (value === null || value === undefined) return null;
  if (typeof value === "number" || typeof value === "string" || typeof value === "boolean") return value;
  return String(value);
}

/** The per-row results: the input table with each used row's component, fitted value, residual and memberships beside it. */
export interface RowResults {
  /** Input column names, then component, fitted value, residual, membership 1..K (the functions' headers). */
  names: string[];
  /** Input columns of the table. */
  dataColumns: number;
  /** One per input data row; skipped rows carry only their input cells. */
  rows: (string | number | boolean | null)[][];
}

/**
 * Every data row of the table with, for a used row, its component (the most probable), the
 * fitted value and residual under that component, and its membership in every component.
 */
export function rowResults(input: Pick<ResultsWorkbookInput, "rows" | "design" | "fit">): RowResults {
  const { rows, design, fit } = input;
  const k = fit.k;
  const p = design.p;
  const dataColumns = rows[0].length;
  const names = [
    ...rows[0].map((cell, j) => (cell === null || cell === undefined ? `Column ${j + 1}` : String(cell))),
    "component",
    "fitted value",
    "residual",
    ...Array.from({ length: k }, (_, c) => `membership ${c + 1}`),
  ];
  // Used row of each input data row, or −1 when it was skipped.
  const usedRow = new Int32Array(rows.length - 1).fill(-1);
  for (let i = 0; i < design.n; i++) usedRow[design.rowIndex[i]] = i;
  const out: RowResults["rows"] = [];
  for (let r = 1; r < rows.length; r++) {
    const values = rows[r].map(plain);
    while (values.length < dataColumns) values.push(null);
    const i = usedRow[r - 1];
    if (i >= 0) {
      const c = fit.labels[i];
      const fitted = componentPrediction(fit.components[c].coefficients, design.x, i * p, p);
      values.push(c + 1, fitted, design.y[i] - fitted);
      for (let c2 = 0; c2 < k; c2++) values.push(fit.memberships[i * k + c2]);
    }
    out.push(values);
  }
  return { names, dataColumns, rows: out };
}

/**
 * A workbook of the fit's results: sheet "Rows" holds the input table with the row results
 * beside it (rowResults; skipped rows left blank); sheet "Components" the parameters with
 * their standard errors when given; sheet "Checks" the checks, every warning and the notes.
 * Numbers are stored as numbers with number formats (weights as percentages), not as text.
 */
export async function resultsWorkbook(input: ResultsWorkbookInput): Promise<Workbook> {
  // Loaded only when a workbook is written: the package takes long to load.
  const { default: ExcelJS } = await import("exceljs");
  const workbook = new ExcelJS.Workbook();
  workbook.creator = "Skein";
  addRowsSheet(workbook, input);
  addComponentsSheet(workbook, input);
  addChecksSheet(workbook, input);
  return workbook;
}

/** Sheet "Rows": the input table with the row results beside it. */
function addRowsSheet(workbook: Workbook, input: ResultsWorkbookInput): void {
  const sheet = workbook.addWorksheet("Rows", { views: [{ state: "frozen", ySplit: 1 }] });
  const results = rowResults(input);
  const { names, dataColumns } = results;
  sheet.addRow(names);
  header(sheet.getRow(1), names.length, dataColumns + 1);
  for (const values of results.rows) sheet.addRow(values);
  for (let c = 1; c <= names.length; c++) sheet.getColumn(c).width = Math.max(10, Math.min(24, names[c - 1].length + 2));
  for (let c = dataColumns + 2; c <= names.length; c++) sheet.getColumn(c).numFmt = NUMBER_FORMAT;
  sheet.getColumn(dataColumns + 1).numFmt = WHOLE_FORMAT;
}

/** Sheet "Components": one row per component, its weight, noise SD and coefficients, then their standard errors when given. */
function addComponentsSheet(workbook: Workbook, input: ResultsWorkbookInput): void {
  const { design, fit } = input;
  const exact = exactComponents(fit, design.y);
  const summary = workbook.addWorksheet("Components");
  const se = input.standardErrors;
  const coefficientNames = [fit.intercept ? "intercept" : null, ...design.predictorNames].filter((name): name is string => name !== null);
  const offset = fit.intercept ? 0 : 1;
  const summaryNames = ["component", "weight", "noise SD", ...coefficientNames];
  if (se) summaryNames.push("standard error: weight", "standard error: noise SD", ...coefficientNames.map((name) => `standard error: ${name}`));
  summary.addRow(summaryNames);
  header(summary.getRow(1), summaryNames.length, 1);
  fit.components.forEach((component, c) => {
    // An exact component's noise SD is about 0; its rounding-level value would read as a measurement.
    const values: (number | null)[] = [c + 1, component.weight, exact[c] ? 0 : component.sigma];
    for (let j = offset; j < component.coefficients.length; j++) values.push(component.coefficients[j]);
    if (se) {
      values.push(finite(se.weights[c]), finite(se.sigmas[c]));
      for (let j = offset; j < se.coefficients[c].length; j++) values.push(finite(se.coefficients[c][j]));
    }
    const row = summary.addRow(values);
    roundEstimates(row, values, coefficientNames.length, se !== undefined, exact[c]);
  });
  summary.getColumn(1).numFmt = WHOLE_FORMAT;
  summary.getColumn(2).numFmt = PERCENT_FORMAT;
  if (se) summary.getColumn(4 + coefficientNames.length).numFmt = PERCENT_FORMAT;
  for (let c = 1; c <= summaryNames.length; c++) summary.getColumn(c).width = Math.max(11, Math.min(28, summaryNames[c - 1].length + 2));
}

/**
 * Number formats of one component's row: its noise SD and coefficients (and their standard
 * errors, `withErrors`) rounded where their standard errors say; an exact component's as General.
 */
function roundEstimates(row: Row, values: (number | null)[], coefficients: number, withErrors: boolean, exact: boolean): void {
  for (let col = 3; col <= 3 + coefficients; col++) {
    const value = values[col - 1];
    if (typeof value !== "number") continue;
    const errorCol = withErrors ? col + 2 + coefficients : -1;
    const error = withErrors ? values[errorCol - 1] : null;
    const format = exact ? "General" : estimateFormat(value, typeof error === "number" ? error : null);
    row.getCell(col).numFmt = format;
    if (withErrors && typeof error === "number") row.getCell(errorCol).numFmt = format;
  }
}

/** Sheet "Checks": whether the fit can be trusted, its numbers and settings, every warning and the notes. */
function addChecksSheet(workbook: Workbook, input: ResultsWorkbookInput): void {
  const { design, fit } = input;
  const k = fit.k;
  const checks = workbook.addWorksheet("Checks");
  checks.addRow(["check", "value"]);
  header(checks.getRow(1), 2, 1);
  const add = (name: string, value: string | number | boolean, format?: string) => {
    const row = checks.addRow([name, value]);
    if (format) row.getCell(2).numFmt = format;
  };
  add("components (K)", k, WHOLE_FORMAT);
  add("starts agree", startsAgree(fit.warmStart) ? "yes" : "no");
  add("converged", fit.refinement.converged ? "yes" : "no");
  add("iterations", fit.refinement.iterations, WHOLE_FORMAT);
  if (isExactFit(fit, design.y)) add("note", "exact fit (noise about 0)");
  const separation = input.separation;
  if (separation) {
    if (k > 1) {
      if (isExactFit(fit, design.y)) add("smallest gap (noise SDs)", "no overlap (noise about 0)");
      else add("smallest gap (noise SDs)", separation.minGap, "0.00");
    }
    add("misassigned rows", separation.misclassification, PERCENT_FORMAT);
    add("membership clarity", separation.normalisedEntropy, "0.000");
    add("smallest weight", separation.smallestWeight, PERCENT_FORMAT);
  }
  add("log-likelihood", fit.logLikelihood, "0.00");
  add("BIC", fit.bic, "0.00");
  add("ICL", fit.icl, "0.00");
  add("seed", fit.seed, WHOLE_FORMAT);
  add("model", fit.model);
  add("rows used", design.n, WHOLE_FORMAT);
  add("rows skipped", design.skipped.length, WHOLE_FORMAT);
  const warnings = [...new Set([...(input.warnings ?? []), ...fit.warnings, ...(separation?.warnings ?? [])])];
  if (warnings.length === 0) add("warning", "none");
  for (const warning of warnings) add("warning", warning);
  for (const line of input.notes ?? []) add("note", line);
  checks.getColumn(1).width = 26;
  checks.getColumn(2).width = 60;
}

/** A standard error as a cell: NaN (not available) becomes an empty cell. */
function finite(value: number): number | null {
  return Number.isFinite(value) ? value : null;
}
