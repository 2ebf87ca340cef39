/**
 * The one reader of xlsx cells, shared by the command line (readTable.ts,
 * exceljs for Node) and the task pane (readWorkbookFile.ts, exceljs's browser
 * build): both hand it a loaded exceljs Workbook. Host-free.
 *
 * - A cell gives what a worksheet range gives a function: formulas their
 *   cached result, rich text and hyperlinks their plain text, error cells
 *   their error text ("#N/A"), numbers as numbers, booleans as booleans, and
 *   empty text nothing. Date cells stay dates here; the column rule turns them
 *   into serial day numbers and marks the column.
 * - Merged cells: the value stands in the merge's top-left cell only; the
 *   cells it covers are blank, as in the range Excel hands to a function.
 *   A merge inside the data is named in a notice.
 * - Numbers stored as text are text here and read by the column rule exactly
 *   as a CSV file's numbers are.
 * - Without a sheet name, the first sheet holding a table of numbers is read
 *   and a notice names it; when no sheet holds one the error lists the sheets.
 */
import type { CellValue, Workbook, Worksheet } from "exceljs";
import { SkeinError } from "../engine/errors";
import type { RawCell } from "./columnTypes";
import { holdsNumericTable, tableFromGrid, type DataTable, type HeaderChoice, type SourceGrid } from "./dataTable";

/** exceljs's ValueType.Merge: a cell covered by a merge (it repeats the merge's value). */
const MERGED_CELL_TYPE = 1;

/** What a worksheet range would deliver for one cell's value (dates kept as dates). */
export function workbookCellValue(value: CellValue | undefined): RawCell {
  if (value === null || value === undefined) return null;
  if (typeof value === "number" || typeof value === "boolean") return value;
  if (typeof value === "string") return value.trim() === "" ? null : value;
  if (value instanceof Date) return Number.isFinite(value.getTime()) ? value : null;
  if (typeof value !== "object") return String(value);
  if ("error" in value) return value.error;
  if ("richText" in value) return workbookCellValue(value.richText.map((part) => part.text).join(""));
  if ("formula" in value || "sharedFormula" in value) return workbookCellValue((value as { result?: CellValue }).result ?? null);
  if ("hyperlink" in value) return workbookCellValue((value as { text?: CellValue }).text ?? null);
  return String(value);
}

/**
 * The smallest block holding every non-empty cell of a sheet, so data that
 * start below or right of A1 read the same; empty rows inside the block stay
 * as blank rows so row numbers match the sheet. undefined for an empty sheet.
 */
export function sheetGrid(worksheet: Worksheet, fileName: string, date1904: boolean): SourceGrid | undefined {
  const cells: { row: number; column: number; value: RawCell }[] = [];
  let top = Infinity;
  let bottom = -Infinity;
  let left = Infinity;
  let right = -Infinity;
  worksheet.eachRow({ includeEmpty: false }, (row, rowNumber) => {
    row.eachCell({ includeEmpty: false }, (cell, columnNumber) => {
      if (cell.type === MERGED_CELL_TYPE) return;
      const value = workbookCellValue(cell.value);
      if (value === null) return;
      cells.push({ row: rowNumber, column: columnNumber, value });
      if (rowNumber < top) top = rowNumber;
      if (rowNumber > bottom) bottom = rowNumber;
      if (columnNumber < left) left = columnNumber;
      if (columnNumber > right) right = columnNumber;
    });
  });
  if (cells.length === 0) return undefined;
  const width = right - left + 1;
  const rows: RawCell[][] = [];
  const rowNumbers: number[] = [];
  for (let r = top; r <= bottom; r++) {
    rows.push(new Array<RawCell>(width).fill(null));
    rowNumbers.push(r);
  }
  for (const cell of cells) rows[cell.row - top][cell.column - left] = cell.value;
  return {
    rows,
    rowNumbers,
    rowWord: "row",
    strictWidth: false,
    rule: { fromWorkbook: true, firstColumn: left - 1, date1904 },
    where: `${fileName}, sheet "${worksheet.name}"`,
  };
}

/** The merged ranges of a sheet ("B2:B6"), as exceljs keeps them. */
function mergedRanges(worksheet: Worksheet): string[] {
  const merges = (worksheet as unknown as { model?: { merges?: unknown } }).model?.merges;
  return Array.isArray(merges) ? merges.filter((m): m is string => typeof m === "string") : [];
}

/** The first row of a merged range "B2:D3". */
function firstRowOf(range: string): number {
  const match = /^[A-Z]+(\d+)/i.exec(range);
  return match ? Number(match[1]) : 0;
}

/** Options for reading a workbook: a sheet by name (any case), the header row. */
export interface WorkbookChoice extends HeaderChoice {
  sheet?: string;
  /** How the caller's user names a sheet, for messages (default: "name the sheet with --sheet"). */
  sheetAdvice?: string;
}

/**
 * Reads the chosen (or first numeric) sheet of a loaded workbook into a
 * DataTable. Every problem a user can fix is a SkeinError "bad-input" naming
 * the sheets.
 */
export function workbookTable(workbook: Workbook, fileName: string, choice: WorkbookChoice = {}): DataTable {
  const sheets = workbook.worksheets;
  if (sheets.length === 0) throw new SkeinError("bad-input", `${fileName} has no worksheets; add a sheet with a header row and rows of numbers.`);
  const date1904 = Boolean((workbook.properties as { date1904?: boolean } | undefined)?.date1904);
  const read = (worksheet: Worksheet): DataTable => {
    const grid = sheetGrid(worksheet, fileName, date1904);
    if (!grid) throw new SkeinError("bad-input", `Sheet "${worksheet.name}" of ${fileName} is empty; it needs a header row and rows of data.`);
    const table = tableFromGrid(grid, choice);
    const dataMerges = mergedRanges(worksheet).filter((range) => firstRowOf(range) > table.headerRow);
    if (dataMerges.length > 0) {
      const shown = dataMerges.slice(0, 5).join(", ") + (dataMerges.length > 5 ? ` and ${dataMerges.length - 5} more` : "");
      table.notices.push(`Sheet "${worksheet.name}" has merged cells in the data (${shown}); only the first cell of each holds the value, the others are read as blank. Unmerge them and fill the cells to use those rows.`);
    }
    return { ...table, sheetName: worksheet.name };
  };

  if (choice.sheet !== undefined) {
    const wanted = choice.sheet;
    const found = sheets.find((s) => s.name === wanted) ?? sheets.find((s) => s.name.toLowerCase() === wanted.toLowerCase());
    if (!found) {
      throw new SkeinError("bad-input", `${fileName} has no sheet named "${wanted}"; its sheets are ${sheets.map((s) => `"${s.name}"`).join(", ")}.`);
    }
    return read(found);
  }

  const passed: string[] = [];
  for (const worksheet of sheets) {
    let table: DataTable | undefined;
    let why: string;
    try {
      table = read(worksheet);
      why = table.rows.length < 2 ? `${table.rows.length} data row${table.rows.length === 1 ? "" : "s"}` : "no columns of numbers";
    } catch (error) {
      if (!(error instanceof SkeinError)) throw error;
      why = /is empty/.test(error.message) ? "empty" : "no header row of names";
    }
    if (table && holdsNumericTable(table)) {
      if (sheets.length > 1) {
        const skippedText = passed.length > 0 ? ` (before it: ${passed.join(", ")})` : "";
        table.notices.unshift(`Read sheet "${worksheet.name}", the first sheet holding a table of numbers${skippedText}.`);
      }
      return table;
    }
    passed.push(`"${worksheet.name}" (${why})`);
  }
  throw new SkeinError(
    "bad-input",
    `No sheet of ${fileName} holds a table of numbers (a header row of names, then rows with at least one column of numbers): ${passed.join(", ")}. Put the data on a sheet with its column names in one row${choice.sheetAdvice === "" ? "" : `, or ${choice.sheetAdvice ?? "name the sheet with --sheet"}`}.`,
  );
}
