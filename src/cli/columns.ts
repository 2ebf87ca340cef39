import { SkeinError } from "../engine/errors";

/**
 * Column handling for tables read from files: the header row, picking
 * columns by name, and choosing numeric columns.
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
