/**
 * Reads the first sheet of an .xlsx file in the browser, with exceljs's browser
 * build (loaded only when a workbook is opened, so the pane itself stays small).
 * Cells are turned into what a worksheet range would deliver, following the
 * conventions of src/io/readTable.ts: formula results, plain text of rich text,
 * error text, dates as serial numbers, null for empty.
 */
import { SkeinError } from "../src/engine/errors";

/** Days from the 1900 date system's day 0 to 1970-01-01. */
const SERIAL_OF_UNIX_EPOCH = 25569;
const MS_PER_DAY = 86_400_000;

function cellValue(value: unknown): unknown {
  if (value === null || value === undefined) return null;
  if (typeof value === "number" || typeof value === "boolean") return value;
  if (typeof value === "string") return value.trim() === "" ? null : value;
  if (value instanceof Date) return value.getTime() / MS_PER_DAY + SERIAL_OF_UNIX_EPOCH;
  const v = value as Record<string, unknown>;
  if ("error" in v) return v.error;
  if ("richText" in v) return cellValue((v.richText as { text: string }[]).map((part) => part.text).join(""));
  if ("formula" in v || "sharedFormula" in v) return cellValue(v.result ?? null);
  if ("hyperlink" in v) return cellValue(v.text);
  return String(value);
}

export async function readWorkbookFile(name: string, buffer: ArrayBuffer): Promise<unknown[][]> {
  const { default: ExcelJS } = await import(/* webpackChunkName: "exceljs" */ "exceljs");
  const workbook = new ExcelJS.Workbook();
  try {
    await workbook.xlsx.load(buffer);
  } catch {
    throw new SkeinError("bad-input", `${name} could not be read as an Excel workbook; save it again as .xlsx, or export the sheet as .csv.`);
  }
  const sheet = workbook.worksheets[0];
  if (!sheet) throw new SkeinError("bad-input", `${name} has no worksheets.`);
  const rows: unknown[][] = [];
  sheet.eachRow({ includeEmpty: true }, (row, rowNumber) => {
    const cells: unknown[] = [];
    row.eachCell({ includeEmpty: true }, (cell, columnNumber) => {
      cells[columnNumber - 1] = cellValue(cell.value);
    });
    rows[rowNumber - 1] = Array.from(cells, (c) => (c === undefined ? null : c));
  });
  const filled = Array.from(rows, (r) => r ?? []);
  if (filled.length === 0) throw new SkeinError("bad-input", `The first sheet of ${name} is empty.`);
  return filled;
}
