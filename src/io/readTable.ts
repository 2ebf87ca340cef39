import { promises as fs } from "fs";
import * as path from "path";
import type { Workbook } from "exceljs";
import { SkeinError } from "../engine/errors";
import { serialOfDate } from "./dateText";
import type { DataTable, HeaderChoice } from "./dataTable";
import { decodeText } from "./decodeText";
import { csvTableOfFields, parseCsv, plainNumberCsv } from "./readCsv";
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
  const { name, isText } = await checkFile(filePath);
  return { bytes: await fileBytes(filePath), name, isText };
}

/** The bytes of a file already checked (checkFile): a view of the file's buffer, not a copy, so a large file is read once into memory. */
async function fileBytes(filePath: string): Promise<Uint8Array> {
  const buffer = await fs.readFile(filePath);
  return new Uint8Array(buffer.buffer, buffer.byteOffset, buffer.byteLength);
}

/** Checks the path, extension and size: the file's name, its kind and its size in bytes. */
async function checkFile(filePath: string): Promise<{ name: string; isText: boolean; size: number }> {
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
  return { name, isText: TEXT_EXTENSIONS.has(extension), size };
}

/** A file of plain numbers read in pieces (plainNumberCsv), or null for any other file. */
async function readPlainNumberFile(filePath: string, name: string, size: number): Promise<Awaited<ReturnType<typeof plainNumberCsv>>> {
  const file = await fs.open(filePath, "r");
  try {
    return await plainNumberCsv(async (buffer, offset, length) => (await file.read(buffer, offset, length, null)).bytesRead, size, name);
  } finally {
    await file.close();
  }
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
  const { name, isText, size } = await checkFile(filePath);
  if (!isText) return workbookTable(await loadWorkbook(await fileBytes(filePath), name), name, choice);
  if (choice.sheet !== undefined) throw new SkeinError("bad-input", `${name} is a text file with no sheets; leave out the sheet name.`);
  // A file of plain numbers is read in pieces, never whole; any other file is read whole and
  // decoded, the bytes let go once decoded and the text once split: a large file is not held three times.
  let read = choice.headerRow === undefined ? await readPlainNumberFile(filePath, name, size) : null;
  if (read === null) {
    const decoded = decodeText(await fileBytes(filePath));
    read = { encoding: { encoding: decoded.encoding, noteworthy: decoded.noteworthy }, table: csvTableOfFields(decoded, name, choice as HeaderChoice) };
  }
  const { table, encoding } = read;
  if (encoding.noteworthy) table.notices.unshift(`Read ${name} as ${encoding.encoding} text${encoding.encoding === "Windows-1252" ? " (its bytes are not valid UTF-8)" : ""}.`);
  return table;
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
