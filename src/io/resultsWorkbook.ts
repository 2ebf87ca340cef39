import ExcelJS from "exceljs";
import type { Design } from "../engine/design";
import type { MixtureFit } from "../engine/mixtureTypes";
import type { StandardErrorReport } from "../engine/trustTypes";
import { WORKBOOK_FILLS } from "../report/componentStyle";

/** Header colours from the shared style module: Skein's columns, the input's columns, the text on both. */
const RESULT_FILL = WORKBOOK_FILLS.result;
const DATA_FILL = WORKBOOK_FILLS.data;
const HEADER_TEXT = WORKBOOK_FILLS.headerText;

export interface ResultsWorkbookInput {
  /** The table as read: header row first, then the data rows in input order. */
  rows: unknown[][];
  design: Design;
  fit: MixtureFit;
  standardErrors?: StandardErrorReport;
  /** Lines describing where the numbers came from (file, settings, seed). */
  notes?: string[];
}

function header(row: ExcelJS.Row, columns: number, resultFrom: number): void {
  for (let c = 1; c <= columns; c++) {
    const cell = row.getCell(c);
    cell.font = { bold: true, color: { argb: HEADER_TEXT } };
    cell.fill = { type: "pattern", pattern: "solid", fgColor: { argb: c >= resultFrom ? RESULT_FILL : DATA_FILL } };
  }
}

/** A cell value as read back to a plain value exceljs can write. */
function plain(value: unknown): ExcelJS.CellValue {
  if (value === null || value === undefined) return null;
  if (typeof value === "number" || typeof value === "string" || typeof value === "boolean") return value;
  return String(value);
}

/**
 * A workbook of the fit's results: sheet "Rows" holds the input table with,
 * next to each used row, its most probable component, the fitted value and
 * residual under that component, and its membership in every component
 * (skipped rows left blank); sheet "Components" holds the parameters with
 * their standard errors when given.
 */
export function resultsWorkbook(input: ResultsWorkbookInput): ExcelJS.Workbook {
  const { rows, design, fit } = input;
  const k = fit.k;
  const p = design.p;
  const workbook = new ExcelJS.Workbook();
  workbook.creator = "Skein";

  const sheet = workbook.addWorksheet("Rows", { views: [{ state: "frozen", ySplit: 1 }] });
  const dataColumns = rows[0].length;
  const names = [
    ...rows[0].map((cell, j) => (cell === null || cell === undefined ? `Column ${j + 1}` : String(cell))),
    "Component",
    "Fitted value",
    "Residual",
    ...Array.from({ length: k }, (_, c) => `Membership ${c + 1}`),
  ];
  sheet.addRow(names);
  header(sheet.getRow(1), names.length, dataColumns + 1);

  // Used row of each input data row, or −1 when it was skipped.
  const usedRow = new Int32Array(rows.length - 1).fill(-1);
  for (let i = 0; i < design.n; i++) usedRow[design.rowIndex[i]] = i;

  for (let r = 1; r < rows.length; r++) {
    const values: ExcelJS.CellValue[] = rows[r].map(plain);
    while (values.length < dataColumns) values.push(null);
    const i = usedRow[r - 1];
    if (i >= 0) {
      const c = fit.labels[i];
      const beta = fit.components[c].coefficients;
      let fitted = beta[0];
      for (let j = 0; j < p; j++) fitted += beta[j + 1] * design.x[i * p + j];
      values.push(c + 1, fitted, design.y[i] - fitted);
      for (let c2 = 0; c2 < k; c2++) values.push(fit.memberships[i * k + c2]);
    }
    sheet.addRow(values);
  }
  for (let c = 1; c <= names.length; c++) sheet.getColumn(c).width = Math.max(10, Math.min(24, names[c - 1].length + 2));
  for (let c = dataColumns + 2; c <= names.length; c++) sheet.getColumn(c).numFmt = "0.0000";
  sheet.getColumn(dataColumns + 1).numFmt = "0";

  const summary = workbook.addWorksheet("Components");
  const se = input.standardErrors;
  const coefficientNames = [fit.intercept ? "Intercept" : null, ...design.predictorNames].filter((name): name is string => name !== null);
  const offset = fit.intercept ? 0 : 1;
  const summaryNames = ["Component", "Weight", "Noise SD", ...coefficientNames];
  if (se) summaryNames.push("SE weight", "SE noise SD", ...coefficientNames.map((name) => `SE ${name}`));
  summary.addRow(summaryNames);
  header(summary.getRow(1), summaryNames.length, 1);
  fit.components.forEach((component, c) => {
    const values: number[] = [c + 1, component.weight, component.sigma];
    for (let j = offset; j < component.coefficients.length; j++) values.push(component.coefficients[j]);
    if (se) {
      values.push(se.weights[c], se.sigmas[c]);
      for (let j = offset; j < se.coefficients[c].length; j++) values.push(se.coefficients[c][j]);
    }
    summary.addRow(values);
  });
  summary.addRow([]);
  summary.addRow([`Log-likelihood ${fit.logLikelihood}; BIC ${fit.bic}; ICL ${fit.icl}; seed ${fit.seed}; model ${fit.model}.`]);
  for (const line of input.notes ?? []) summary.addRow([line]);
  for (const warning of fit.warnings) summary.addRow([`Warning: ${warning}`]);
  for (let c = 1; c <= summaryNames.length; c++) summary.getColumn(c).width = Math.max(11, Math.min(24, summaryNames[c - 1].length + 2));
  return workbook;
}
