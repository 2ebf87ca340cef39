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
 * - Numbers Excel cannot show (NaN, ±Infinity) become "".
 */
import type { Design } from "../engine/design";
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

/**
 * One output row per input data row of `design`: `fillRow(usedRow, out)` writes the values of
 * the usedRow-th used row into `out` (length `width`); skipped rows stay "".
 */
export function perInputRow(
  design: Pick<Design, "inputRows" | "rowIndex" | "n">,
  width: number,
  fillRow: (usedRow: number, out: Cell[]) => void,
): Cell[][] {
  const rows: Cell[][] = new Array(design.inputRows);
  for (let r = 0; r < design.inputRows; r++) rows[r] = new Array<Cell>(width).fill("");
  for (let i = 0; i < design.n; i++) fillRow(i, rows[design.rowIndex[i]]);
  return rows;
}
