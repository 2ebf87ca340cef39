/**
 * From a grid of cells (a CSV file's fields, a worksheet's used block) to a
 * table of named, typed columns: the header row chosen, shapes checked, the
 * column rule applied. Host-free: the command line and the task pane share it.
 */
import { SkeinError } from "../engine/errors";
import { readNumberText } from "./numberText";
import { typeColumns, typeNumberColumns, type Cell, type ColumnRuleOptions, type ColumnType, type RawCell } from "./columnTypes";

/** Cells as a reader found them, with where each row stands in the file. */
export interface SourceGrid {
  rows: RawCell[][];
  /** For each row, its 1-based row in the sheet (or line in a text file). */
  rowNumbers: number[];
  /** How the file names its rows in messages: "row" (sheets) or "line" (text files). */
  rowWord: "row" | "line";
  /** Whether the rows must all be as long as the header (text files); sheets are padded. */
  strictWidth: boolean;
  rule: ColumnRuleOptions;
  /** The file, and sheet, for messages: "sales.xlsx, sheet Data". */
  where: string;
}

/** A table read from a file: named columns of converted cells, with what was decided about each. */
export interface DataTable {
  names: string[];
  /** Data rows below the header, one cell per column. */
  rows: Cell[][];
  columns: ColumnType[];
  /** Sentences for the user about how the file was read (encoding, sheet, conversions, renamed headers). */
  notices: string[];
  /** 1-based row (or line) of the header. */
  headerRow: number;
  /** For each data row, its 1-based row (or line) in the file. */
  dataRowNumbers: number[];
  /** The worksheet read, for workbooks. */
  sheetName?: string;
  where: string;
  /**
   * Set for a file of plain numbers read column by column (tableFromNumberColumns): each
   * column's numbers, NaN for a blank cell. `rows` is then built from them when first read.
   */
  numberColumns?: Float64Array[];
}

/** The 1-based header row asked for, or undefined for the first non-empty row. */
export interface HeaderChoice {
  headerRow?: number;
}

function isNameCell(cell: RawCell | undefined): boolean {
  return typeof cell === "string" && cell.trim() !== "";
}

/** A header cell that names a column: text that is not a number written as text (a CSV's "12"). */
function isHeaderName(cell: RawCell | undefined): boolean {
  return isNameCell(cell) && readNumberText(cell as string, ".") === undefined && readNumberText(cell as string, ",") === undefined;
}

/** Turns a grid into a DataTable; a SkeinError "bad-input" when there is no header or no way to read it. */
export function tableFromGrid(grid: SourceGrid, choice: HeaderChoice = {}): DataTable {
  const { rows, rowNumbers, rowWord, where } = grid;
  if (rows.length === 0) throw new SkeinError("bad-input", `${where} holds no data; it needs a header row and rows of data.`);
  let headerIndex = 0;
  if (choice.headerRow !== undefined) {
    headerIndex = rowNumbers.indexOf(choice.headerRow);
    if (headerIndex < 0) {
      const last = rowNumbers[rowNumbers.length - 1];
      const why = choice.headerRow > last ? `the data end at ${rowWord} ${last}` : `${rowWord} ${choice.headerRow} is empty`;
      throw new SkeinError("bad-input", `The header ${rowWord} ${choice.headerRow} of ${where} holds nothing (${why}); give the ${rowWord} that names the columns with --header-row.`);
    }
  }
  const header = rows[headerIndex];
  if (!header.some(isHeaderName)) {
    const which = choice.headerRow === undefined ? `The first row of ${where}` : `${capitalise(rowWord)} ${rowNumbers[headerIndex]} of ${where}`;
    throw new SkeinError("bad-input", `${which} holds no column names (only numbers); add a header row naming each column, or give the ${rowWord} that holds the names with --header-row.`);
  }
  const body = rows.slice(headerIndex + 1);
  const dataRowNumbers = rowNumbers.slice(headerIndex + 1);
  let width = header.length;
  if (grid.strictWidth) {
    body.forEach((row, i) => {
      if (row.length !== width) {
        throw new SkeinError(
          "bad-input",
          `${capitalise(rowWord)} ${dataRowNumbers[i]} of ${where} has ${row.length} field${row.length === 1 ? "" : "s"} but the header (${rowWord} ${rowNumbers[headerIndex]}) has ${width}; every row needs one field per column (quote values that contain the delimiter).`,
        );
      }
    });
  } else {
    // A sheet's header may stop before the data's last column: name those columns too.
    for (const row of body) width = Math.max(width, row.length);
  }
  const paddedHeader = Array.from({ length: width }, (_, j) => header[j] ?? null);
  const typed = typeColumns(paddedHeader, body, grid.rule);
  const notices = [...typed.notices];
  const hint = groupingHeaderHint(rows, rowNumbers, headerIndex, rowWord);
  if (hint) notices.push(hint);
  return { ...typed, notices, headerRow: rowNumbers[headerIndex], dataRowNumbers, where };
}

/**
 * The table of a header row of names (line 1) over columns of numbers, NaN for a blank cell, as
 * a file of plain numbers is read: the table tableFromGrid gives for the same cells (strict
 * width, the default header row), with the rows built only when read. Null when the header names
 * no column, for tableFromGrid to say so.
 */
export function tableFromNumberColumns(header: readonly string[], body: Float64Array[], dataRowNumbers: number[], where: string): DataTable | null {
  if (!header.some(isHeaderName)) return null;
  const { names, columns, notices } = typeNumberColumns(header, body);
  let rows: Cell[][] | undefined;
  const table = { names, columns, notices, headerRow: 1, dataRowNumbers, where, numberColumns: body } as Omit<DataTable, "rows">;
  return Object.defineProperty(table, "rows", {
    enumerable: true,
    get: (): Cell[][] => (rows ??= dataRowNumbers.map((_, i) => body.map((column) => (Number.isNaN(column[i]) ? null : column[i])))),
  }) as DataTable;
}

/**
 * A header row with blanks above a row of nothing but text is probably a
 * grouping header over the real names: say which row to use.
 */
function groupingHeaderHint(rows: RawCell[][], rowNumbers: number[], headerIndex: number, rowWord: string): string | undefined {
  const header = rows[headerIndex];
  const next = rows[headerIndex + 1];
  if (!next || rows.length < headerIndex + 3) return undefined;
  const width = Math.max(header.length, next.length);
  const headerBlanks = Array.from({ length: width }, (_, j) => header[j]).filter((c) => !isNameCell(c)).length;
  const nextAllNames = next.length > 0 && Array.from({ length: width }, (_, j) => next[j]).every(isNameCell);
  if (headerBlanks === 0 || !nextAllNames) return undefined;
  return `${capitalise(rowWord)} ${rowNumbers[headerIndex]} has blank names and ${rowWord} ${rowNumbers[headerIndex + 1]} holds only text: if ${rowWord} ${rowNumbers[headerIndex + 1]} holds the column names, read it as the header (--header-row ${rowNumbers[headerIndex + 1]}).`;
}

/** A one-line summary of the columns: what was converted and which columns are no predictors, and why. */
export function describeColumns(columns: readonly ColumnType[]): { converted: string[]; notPredictors: string[] } {
  return {
    converted: columns.filter((c) => c.converted).map((c) => `${c.name} (${c.converted})`),
    notPredictors: columns.filter((c) => !c.defaultPredictor).map((c) => `${c.name} (${c.reason})`),
  };
}

/** Whether a table can be fitted at all: a number column and at least one more usable column, over two or more rows. */
export function holdsNumericTable(table: DataTable): boolean {
  // A column of distinct whole numbers is left out of the default predictors as an identifier,
  // but it still holds numbers that --x can name: it counts here.
  const numericIdentifier = (c: DataTable["columns"][number]): boolean =>
    c.kind === "identifier" && table.rows.every((row) => row[c.position] === null || typeof row[c.position] === "number");
  const usable = table.columns.filter((c) => c.kind === "number" || c.kind === "category" || numericIdentifier(c)).length;
  return table.rows.length >= 2 && table.columns.some((c) => c.kind === "number") && usable >= 2;
}

function capitalise(word: string): string {
  return word.charAt(0).toUpperCase() + word.slice(1);
}
