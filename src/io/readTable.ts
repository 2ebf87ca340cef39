import { promises as fs } from "fs";
import * as path from "path";
import ExcelJS from "exceljs";
import { SkeinError } from "../engine/errors";
import { parseCsv } from "./readCsv";

/** A sheet of cells as a worksheet range would hold them: numbers, text, booleans, null for empty. */
export interface Table {
  rows: unknown[][];
  /** The worksheet read, for workbooks. */
  sheetName?: string;
}

const TEXT_EXTENSIONS = new Set([".csv", ".tsv", ".txt"]);
const WORKBOOK_EXTENSIONS = new Set([".xlsx", ".xlsm"]);

/** Days from the 1900 date system's day 0 to 1970-01-01 (Excel serial of the Unix epoch). */
const SERIAL_OF_UNIX_EPOCH_1900 = 25569;
/** The same in the 1904 date system (older Mac workbooks): 1462 days fewer. */
const SERIAL_OF_UNIX_EPOCH_1904 = SERIAL_OF_UNIX_EPOCH_1900 - 1462;
const MS_PER_DAY = 86_400_000;

/**
 * Reads a CSV file (numbers converted by parseCsv) or one sheet of an XLSX
 * workbook (the first when `sheet` is not given) into rows of cells. Every
 * problem a user can fix (missing, empty or unreadable file, unknown sheet,
 * unsupported format) is a SkeinError "bad-input" saying what to do.
 */
export async function readTable(filePath: string, sheet?: string): Promise<Table> {
  const extension = path.extname(filePath).toLowerCase();
  const name = path.basename(filePath);
  if (!TEXT_EXTENSIONS.has(extension) && !WORKBOOK_EXTENSIONS.has(extension)) {
    const hint = extension === ".xls" || extension === ".ods" ? ` Save it as .xlsx or .csv first.` : "";
    throw new SkeinError("bad-input", `Cannot read ${name}: Skein reads .csv, .tsv and .xlsx files.${hint}`);
  }
  let size: number;
  try {
    const stat = await fs.stat(filePath);
    if (stat.isDirectory()) throw new SkeinError("bad-input", `${filePath} is a folder; give the path of a .csv or .xlsx file.`);
    size = stat.size;
  } catch (error) {
    if (error instanceof SkeinError) throw error;
    throw new SkeinError("bad-input", `No file at ${filePath}; check the path (it is read relative to ${process.cwd()}).`);
  }
  if (size === 0) throw new SkeinError("bad-input", `${name} is empty; it needs a header row and rows of data.`);

  if (TEXT_EXTENSIONS.has(extension)) {
    if (sheet !== undefined) throw new SkeinError("bad-input", `${name} is a text file with no sheets; leave out the sheet name.`);
    const rows = parseCsv(await fs.readFile(filePath, "utf8"));
    if (rows.length === 0) throw new SkeinError("bad-input", `${name} holds no data; it needs a header row and rows of data.`);
    return { rows };
  }
  return readWorkbook(filePath, name, sheet);
}

async function readWorkbook(filePath: string, name: string, sheet: string | undefined): Promise<Table> {
  const workbook = new ExcelJS.Workbook();
  try {
    await workbook.xlsx.readFile(filePath);
  } catch {
    throw new SkeinError("bad-input", `${name} could not be read as an Excel workbook; open it in Excel and save it again as .xlsx, or export the sheet as .csv.`);
  }
  const sheets = workbook.worksheets;
  if (sheets.length === 0) throw new SkeinError("bad-input", `${name} has no worksheets.`);
  let worksheet = sheets[0];
  if (sheet !== undefined) {
    const found = sheets.find((s) => s.name === sheet) ?? sheets.find((s) => s.name.toLowerCase() === sheet.toLowerCase());
    if (!found) {
      throw new SkeinError("bad-input", `${name} has no sheet named "${sheet}"; its sheets are ${sheets.map((s) => `"${s.name}"`).join(", ")}.`);
    }
    worksheet = found;
  }
  const epochSerial = workbook.properties?.date1904 ? SERIAL_OF_UNIX_EPOCH_1904 : SERIAL_OF_UNIX_EPOCH_1900;

  // Collect the non-empty cells, then cut the smallest rectangle holding them
  // all: data that starts below or right of A1 is read the same way, and
  // empty rows inside the block stay (as blank rows) so row numbers match.
  const cells: { row: number; column: number; value: unknown }[] = [];
  let top = Infinity;
  let bottom = -Infinity;
  let left = Infinity;
  let right = -Infinity;
  worksheet.eachRow({ includeEmpty: false }, (row, rowNumber) => {
    row.eachCell({ includeEmpty: false }, (cell, columnNumber) => {
      // Cells covered by a merge repeat the merge's value; count it once.
      if (cell.type === ExcelJS.ValueType.Merge) return;
      const value = cellValue(cell.value, epochSerial);
      if (value === null) return;
      cells.push({ row: rowNumber, column: columnNumber, value });
      if (rowNumber < top) top = rowNumber;
      if (rowNumber > bottom) bottom = rowNumber;
      if (columnNumber < left) left = columnNumber;
      if (columnNumber > right) right = columnNumber;
    });
  });
  if (cells.length === 0) throw new SkeinError("bad-input", `Sheet "${worksheet.name}" of ${name} is empty; it needs a header row and rows of data.`);
  const width = right - left + 1;
  const rows: unknown[][] = [];
  for (let r = top; r <= bottom; r++) rows.push(new Array<unknown>(width).fill(null));
  for (const cell of cells) rows[cell.row - top][cell.column - left] = cell.value;
  return { rows, sheetName: worksheet.name };
}

/**
 * What a worksheet range would deliver for a cell: formulas give their
 * cached result, rich text and hyperlinks their plain text, error cells their
 * error text ("#N/A"), dates their serial number (as Excel passes them to a
 * function), and empty text null.
 */
function cellValue(value: ExcelJS.CellValue, epochSerial: number): unknown {
  if (value === null || value === undefined) return null;
  if (typeof value === "number" || typeof value === "boolean") return value;
  if (typeof value === "string") return value.trim() === "" ? null : value;
  if (value instanceof Date) return value.getTime() / MS_PER_DAY + epochSerial;
  if ("error" in value) return value.error;
  if ("richText" in value) return cellValue(value.richText.map((part) => part.text).join(""), epochSerial);
  if ("formula" in value || "sharedFormula" in value) return cellValue(value.result ?? null, epochSerial);
  if ("hyperlink" in value) return cellValue(value.text as ExcelJS.CellValue, epochSerial);
  return String(value);
}
