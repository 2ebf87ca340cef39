/**
 * Reads a data file the user opens in the pane's plain-browser mode, through
 * the same readers as the command line: the one xlsx cell reader
 * (src/io/workbookCells.ts, with exceljs's browser build loaded only when a
 * workbook is opened, so the pane itself stays small), the CSV reader with
 * encoding detection, and the one column rule (percentages, thousands
 * separators, currency, dates, identifiers, duplicated headers).
 */
import { SkeinError } from "../src/engine/errors";
import type { Cell, ColumnType } from "../src/io/columnTypes";
import { describeColumns, type DataTable } from "../src/io/dataTable";
import { decodeText } from "../src/io/decodeText";
import { csvTable, parseCsv } from "../src/io/readCsv";
import { workbookTable } from "../src/io/workbookCells";

/** A file's cells for the built-in sheet (header row first), with what the readers decided. */
export interface DataFile {
  rows: Cell[][];
  /** Each column's kind, or undefined when the file has no header row of names. */
  columns?: ColumnType[];
  /** Sentences on how the file was read (encoding, sheet, conversions, renamed headers). */
  notices: string[];
  sheetName?: string;
}

function fromTable(table: DataTable, extra: string[] = []): DataFile {
  const { converted, notPredictors } = describeColumns(table.columns);
  const notices = [...extra, ...table.notices];
  if (converted.length > 0) notices.push(`Read as numbers: ${converted.join(", ")}.`);
  if (notPredictors.length > 0) notices.push(`Not guessed as columns to fit: ${notPredictors.join(", ")}.`);
  return { rows: [table.names, ...table.rows], columns: table.columns, notices, sheetName: table.sheetName };
}

/** The chosen sheet of an .xlsx file: the first holding a table of numbers, named in a notice. */
export async function readWorkbookFile(name: string, buffer: ArrayBuffer): Promise<DataFile> {
  const { default: ExcelJS } = await import(/* webpackChunkName: "exceljs" */ "exceljs");
  const workbook = new ExcelJS.Workbook();
  try {
    await workbook.xlsx.load(buffer);
  } catch {
    throw new SkeinError("bad-input", `${name} could not be read as an Excel workbook; save it again as .xlsx, or export the sheet as .csv.`);
  }
  return fromTable(workbookTable(workbook, name, { sheetAdvice: "" }));
}

/** A .csv/.tsv/.txt file in any encoding the readers know; a file without a header row loads as plain cells. */
export function readTextFile(name: string, buffer: ArrayBuffer): DataFile {
  const decoded = decodeText(new Uint8Array(buffer));
  const encoding = decoded.noteworthy ? [`Read ${name} as ${decoded.encoding} text.`] : [];
  try {
    return fromTable(csvTable(decoded.text, name), encoding);
  } catch (error) {
    // Without a header row of names the cells still go into the sheet, where ranges are picked by hand.
    if (!(error instanceof SkeinError) || !/holds no column names/.test(error.message)) throw error;
    return { rows: parseCsv(decoded.text) as Cell[][], notices: encoding };
  }
}

/** Either kind of file, by its name's extension. */
export async function readDataFile(name: string, buffer: ArrayBuffer): Promise<DataFile> {
  const lower = name.toLowerCase();
  return lower.endsWith(".xlsx") || lower.endsWith(".xlsm") ? readWorkbookFile(name, buffer) : readTextFile(name, buffer);
}
