/**
 * Shapes results into the 2-D arrays Excel spills.
 *
 * - Per-row results (LABELS, MEMBERSHIP) have one output row per input row, in order, so the
 *   result placed beside the data lines up with it; a skipped input row gets "" in every column
 *   ("" shows as an empty cell; null would show as 0).
 * - Header row: with headers=yes a header row leads the result; with headers=no there is none;
 *   by default there is one exactly when the input ranges start with a header row, so per-row
 *   results still line up row for row. With headers=no beside a header row, the result starts
 *   at the first data row (place the formula one row lower).
 * - Trailing rows with nothing in any input column are left off, so a whole-column reference
 *   (A:A) spills as far as the data goes, not a million rows down.
 * - Numbers Excel cannot show (NaN, ±Infinity) become "".
 */
import type { FunctionSettings } from "./settings";

export type Cell = number | string | boolean;

/** A number Excel can show, or "" for NaN and ±Infinity. */
export function cell(value: number): Cell {
  return Number.isFinite(value) ? value : "";
}

/** Whether the result gets a header row. */
export function showsHeader(settings: Pick<FunctionSettings, "headers">, inputHasHeader: boolean): boolean {
  return settings.headers === "auto" ? inputHasHeader : settings.headers;
}

/** A table: `header` first when asked for, then the rows. */
export function table(header: Cell[], rows: Cell[][], withHeader: boolean): Cell[][] {
  return withHeader ? [header, ...rows] : rows;
}

/** Where the used rows sit among the data rows, and how many data rows the result shows. */
export interface RowLayout {
  /** Data rows shown: through the last row with anything in it. */
  shownRows: number;
  /** For each used row, its 0-based data-row index. */
  rowIndex: Int32Array;
  n: number;
}

/**
 * One output row per shown data row: `fillRow(usedRow, out)` writes the values of the
 * usedRow-th used row into `out` (length `width`); skipped rows stay "".
 */
export function perInputRow(layout: RowLayout, width: number, fillRow: (usedRow: number, out: Cell[]) => void): Cell[][] {
  const rows: Cell[][] = new Array(layout.shownRows);
  for (let r = 0; r < layout.shownRows; r++) rows[r] = new Array<Cell>(width).fill("");
  for (let i = 0; i < layout.n; i++) fillRow(i, rows[layout.rowIndex[i]]);
  return rows;
}

function isBlankCell(value: unknown): boolean {
  return value === null || value === undefined || (typeof value === "string" && value.trim() === "");
}

/**
 * Number of data rows (after `firstDataRow` header rows) up to and including the last one with
 * a non-blank cell in any of `ranges` (arrays of rows of equal height).
 */
export function rowsThroughLastData(ranges: readonly unknown[][][], firstDataRow: number): number {
  const height = ranges[0].length;
  for (let r = height - 1; r >= firstDataRow; r--) {
    for (const range of ranges) {
      const row = range[r];
      for (let j = 0; j < row.length; j++) if (!isBlankCell(row[j])) return r - firstDataRow + 1;
    }
  }
  return 0;
}
