import { promises as fs } from "fs";
import * as path from "path";
import { resultsWorkbook, rowResults, type ResultsWorkbookInput } from "../io/resultsWorkbook";

/** Significant digits of computed numbers in a results CSV: past the fit's precision, short of float noise. */
const CSV_DIGITS = 10;

function csvField(value: string | number | boolean | null): string {
  if (value === null) return "";
  if (typeof value === "number") return Number.isFinite(value) ? String(Number(value.toPrecision(CSV_DIGITS))) : "";
  const text = String(value);
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

/**
 * `--out FILE`: every data row with its component, fitted value, residual and memberships.
 * A .xlsx file is the results workbook (rows, components, checks with every warning); a .csv
 * file holds the rows only.
 */
export async function writeRowResults(file: string, input: ResultsWorkbookInput): Promise<void> {
  await fs.mkdir(path.dirname(path.resolve(file)), { recursive: true });
  if (/\.xlsx$/i.test(file)) {
    await (await resultsWorkbook(input)).xlsx.writeFile(file);
    return;
  }
  const { names, dataColumns, rows } = rowResults(input);
  const lines = [names.map(csvField).join(",")];
  for (const row of rows) {
    // Input cells as read; computed cells rounded to CSV_DIGITS; a skipped row's results empty.
    while (row.length < names.length) row.push(null);
    lines.push(row.map((value, j) => (j < dataColumns && typeof value === "number" ? String(value) : csvField(value))).join(","));
  }
  await fs.writeFile(file, lines.join("\n") + "\n");
}
