import { SkeinError } from "../engine/errors";
import { columnIndexOfLetters, columnLetter, type ColumnType } from "../io/columnTypes";
import type { DataTable } from "../io/dataTable";

/**
 * Column handling for tables read from files: the header row, picking
 * columns by name, letter or number, and choosing numeric columns.
 */

/** The header row's names; a bad-input SkeinError when the first row is not a row of names. */
export function headerNames(rows: unknown[][], fileName: string): string[] {
  const header = rows[0];
  if (!header.some((cell) => typeof cell === "string")) {
    throw new SkeinError("bad-input", `The first row of ${fileName} holds no column names; add a header row naming each column.`);
  }
  return header.map((cell, j) => (cell === null || cell === undefined || String(cell).trim() === "" ? `column ${j + 1}` : String(cell).trim()));
}

/** Every row must have one cell per header name; a bad-input SkeinError names the first row that does not. */
export function checkRectangular(rows: unknown[][], fileName: string): void {
  const width = rows[0].length;
  for (let i = 1; i < rows.length; i++) {
    if (rows[i].length !== width) {
      throw new SkeinError(
        "bad-input",
        `Row ${i + 1} of ${fileName} (counting the header row) has ${rows[i].length} field${rows[i].length === 1 ? "" : "s"} but the header row has ${width}; every row needs one field per column (quote values that contain the delimiter).`,
      );
    }
  }
}

/** The index of a column by name: exact match first, then ignoring case. */
export function findColumn(names: readonly string[], wanted: string, fileName: string): number {
  const exact = names.indexOf(wanted);
  if (exact >= 0) return exact;
  const lower = wanted.toLowerCase();
  const matches: number[] = [];
  names.forEach((name, j) => {
    if (name.toLowerCase() === lower) matches.push(j);
  });
  if (matches.length === 1) return matches[0];
  if (matches.length > 1) {
    throw new SkeinError("bad-input", `Column name "${wanted}" matches ${matches.map((j) => `"${names[j]}"`).join(" and ")} in ${fileName} when case is ignored; write it exactly as in the header.`);
  }
  throw new SkeinError("bad-input", `${fileName} has no column "${wanted}"; its columns are ${names.map((name) => `"${name}"`).join(", ")}.`);
}

/** Whether more than half of a column's non-empty data cells (below the header) are numbers. */
export function isMostlyNumeric(rows: unknown[][], column: number): boolean {
  let numbers = 0;
  let filled = 0;
  for (let i = 1; i < rows.length; i++) {
    const cell = rows[i][column];
    if (cell === null || cell === undefined || (typeof cell === "string" && cell.trim() === "")) continue;
    filled++;
    if (typeof cell === "number") numbers++;
  }
  return numbers > 0 && 2 * numbers > filled;
}

/** One column as a single-column range (header included). */
export function columnRange(rows: unknown[][], column: number): unknown[][] {
  return rows.map((row) => [row[column]]);
}

/** Several columns as a range, in the given order (header included). */
export function columnsRange(rows: unknown[][], columns: readonly number[]): unknown[][] {
  return rows.map((row) => columns.map((j) => row[j]));
}

/**
 * How a column is chosen on the command line, in this order: its header name
 * exactly, its header name ignoring case, then its position: a column letter
 * (A, B, ..., AA) or # and its 1-based number (#3 is column C). Letters and
 * numbers count from the sheet's column A (a CSV file's first field is A).
 */
export const COLUMN_CHOICE_RULE =
  "A column is named by its header, or by its letter (A, B, ..., AA) or #number (#3 = column C) when no header has that name.";

/** The column a --y or --x item names in a table read by readDataTable; a bad-input SkeinError naming the columns otherwise. */
export function chooseColumn(table: Pick<DataTable, "columns" | "where">, wanted: string): ColumnType {
  const { columns, where } = table;
  const exact = columns.find((c) => c.name === wanted);
  if (exact) return exact;
  const lower = wanted.toLowerCase();
  const matches = columns.filter((c) => c.name.toLowerCase() === lower);
  if (matches.length === 1) return matches[0];
  if (matches.length > 1) {
    throw new SkeinError("bad-input", `Column name "${wanted}" matches ${matches.map((c) => `"${c.name}" (${c.letter})`).join(" and ")} in ${where} when case is ignored; write it exactly as in the header, or give the column letter.`);
  }
  // A header used twice was renamed "Name (B)", "Name (E)": the plain name is ambiguous.
  const renamed = columns.filter((c) => c.name.toLowerCase() === `${lower} (${c.letter.toLowerCase()})`);
  if (renamed.length > 1) {
    throw new SkeinError("bad-input", `The header "${wanted}" names ${renamed.length} columns of ${where} (${renamed.map((c) => c.letter).join(", ")}); choose one as ${renamed.map((c) => `"${c.name}"`).join(" or ")}, or by its letter.`);
  }
  const numbered = /^#\s*(\d+)$/.exec(wanted.trim());
  const index = numbered ? Number(numbered[1]) - 1 : columnIndexOfLetters(wanted.trim());
  if (index !== undefined) {
    const found = columns.find((c) => columnIndexOfLetters(c.letter) === index);
    if (found) return found;
    const span = `${columns[0].letter} to ${columns[columns.length - 1].letter}`;
    throw new SkeinError("bad-input", `${where} has no column named "${wanted}", and column ${columnLetter(index)} lies outside its data (columns ${span}); name a column by its header, its letter or #number.`);
  }
  throw new SkeinError("bad-input", `${where} has no column "${wanted}"; its columns are ${columns.map((c) => `${c.letter} "${c.name}"`).join(", ")}. Name a column by its header, its letter (A, B, ...) or #number (#1 is A).`);
}
