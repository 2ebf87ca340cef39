import { promises as fs } from "fs";
import * as path from "path";
import type { Workbook } from "exceljs";
import { SkeinError } from "../engine/errors";
import { serialOfDate } from "./dateText";
import type { DataTable, HeaderChoice } from "./dataTable";
import { decodeText } from "./decodeText";
import { csvFileTable, parseCsv } from "./readCsv";
import { sheetGrid, workbookTable, type WorkbookChoice } from "./workbookCells";

/** A sheet of cells as a worksheet range would hold them: numbers, text, booleans, null for empty. */
export interface Table {
  rows: unknown[][];
  /** The worksheet read, for workbooks. */
  sheetName?: string;
}

const TEXT_EXTENSIONS = new Set([".csv", ".tsv", ".txt"]);
const WORKBOOK_EXTENSIONS = new Set([".xlsx", ".xlsm"]);
/** The 1904 date system's serial numbers are this many days smaller than the 1900 system's. */
const DAYS_1900_TO_1904 = 1462;

/** Checks the path and extension; the bytes of the file. */
async function readBytes(filePath: string): Promise<{ bytes: Uint8Array; name: string; isText: boolean }> {
  const extension = path.extname(filePath).toLowerCase();
  const name = path.basename(filePath);
  if (!TEXT_EXTENSIONS.has(extension) && !WORKBOOK_EXTENSIONS.has(extension)) {
    const hint = extension === ".xls" || extension === ".ods" ? ` Save it as .xlsx or .csv first.` : "";
    throw new SkeinError("bad-input", `Cannot read ${name}: Skein reads .csv, .tsv and .xlsx files.${hint}`);
  }
  try {
    const stat = await fs.stat(filePath);
    if (stat.isDirectory()) throw new SkeinError("bad-input", `${filePath} is a folder; give the path of a .csv or .xlsx file.`);
  } catch (error) {
    if (error instanceof SkeinError) throw error;
    throw new SkeinError("bad-input", `No file at ${filePath}; check the path (it is read relative to ${process.cwd()}).`);
  }
  // A view of the file's buffer, not a copy: large files are read once into memory.
  const buffer = await fs.readFile(filePath);
  const bytes = new Uint8Array(buffer.buffer, buffer.byteOffset, buffer.byteLength);
  if (bytes.length === 0) throw new SkeinError("bad-input", `${name} is empty; it needs a header row and rows of data.`);
  return { bytes, name, isText: TEXT_EXTENSIONS.has(extension) };
}

async function loadWorkbook(bytes: Uint8Array, name: string): Promise<Workbook> {
  // Loaded only for a workbook: the package takes longer to load than a CSV file to read.
  const { default: ExcelJS } = await import("exceljs");
  const workbook = new ExcelJS.Workbook();
  try {
    await workbook.xlsx.load(bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer);
  } catch {
    throw new SkeinError("bad-input", `${name} could not be read as an Excel workbook; open it in Excel and save it again as .xlsx, or export the sheet as .csv.`);
  }
  return workbook;
}

/**
 * Reads a .csv/.tsv file or a sheet of an .xlsx workbook into a DataTable:
 * named columns with the column rule applied (columnTypes.ts), and notices
 * saying how the file was read (encoding, sheet, conversions). Without a
 * sheet name a workbook's first sheet holding a table of numbers is read.
 * Every problem a user can fix is a SkeinError "bad-input" saying what to do.
 */
export async function readDataTable(filePath: string, choice: WorkbookChoice = {}): Promise<DataTable> {
  const file = await readBytes(filePath);
  const { name, isText } = file;
  if (isText) {
    if (choice.sheet !== undefined) throw new SkeinError("bad-input", `${name} is a text file with no sheets; leave out the sheet name.`);
    // The bytes (and the text, when made) are let go once read: a large file is not held three times.
    const { table, encoding } = csvFileTable(file, name, choice as HeaderChoice);
    if (encoding.noteworthy) table.notices.unshift(`Read ${name} as ${encoding.encoding} text${encoding.encoding === "Windows-1252" ? " (its bytes are not valid UTF-8)" : ""}.`);
    return table;
  }
  return workbookTable(await loadWorkbook(file.bytes, name), name, choice);
}

/**
 * Reads a CSV file (numbers converted by parseCsv) or one sheet of an XLSX
 * workbook (the first when `sheet` is not given) into rows of cells as a
 * worksheet range holds them (dates as serial numbers), without the column
 * rule. Every problem a user can fix is a SkeinError "bad-input".
 */
export async function readTable(filePath: string, sheet?: string): Promise<Table> {
  const { bytes, name, isText } = await readBytes(filePath);
  if (isText) {
    if (sheet !== undefined) throw new SkeinError("bad-input", `${name} is a text file with no sheets; leave out the sheet name.`);
    const rows = parseCsv(decodeText(bytes).text);
    if (rows.length === 0) throw new SkeinError("bad-input", `${name} holds no data; it needs a header row and rows of data.`);
    return { rows };
  }
  const workbook = await loadWorkbook(bytes, name);
  const sheets = workbook.worksheets;
  if (sheets.length === 0) throw new SkeinError("bad-input", `${name} has no worksheets.`);
  let worksheet = sheets[0];
  if (sheet !== undefined) {
    const found = sheets.find((s) => s.name === sheet) ?? sheets.find((s) => s.name.toLowerCase() === sheet.toLowerCase());
    if (!found) throw new SkeinError("bad-input", `${name} has no sheet named "${sheet}"; its sheets are ${sheets.map((s) => `"${s.name}"`).join(", ")}.`);
    worksheet = found;
  }
  const date1904 = Boolean(workbook.properties?.date1904);
  const grid = sheetGrid(worksheet, name, date1904);
  if (!grid) throw new SkeinError("bad-input", `Sheet "${worksheet.name}" of ${name} is empty; it needs a header row and rows of data.`);
  const shift = date1904 ? DAYS_1900_TO_1904 : 0;
  const rows = grid.rows.map((row) => row.map((cell) => (cell instanceof Date ? serialOfDate(cell) - shift : cell)));
  return { rows, sheetName: worksheet.name };
}
