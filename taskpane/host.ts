/**
 * "Where the data lives": the pane reads ranges, writes results and hears about
 * edits through this interface only. ExcelHost (excelHost.ts) talks to the
 * workbook through Excel.run; PlainBrowserHost (browserHost.ts) to the built-in
 * grid of plain-browser mode. The sections never know which one they have.
 */
export interface SheetHost {
  readonly kind: "excel" | "browser";
  /** Address of the current selection, e.g. "Sheet1!B2:B101". */
  selectedAddress(): Promise<string>;
  /** Cell values of a range, row by row: numbers, text, booleans, null for empty. */
  readValues(address: string): Promise<unknown[][]>;
  /** Number of cells holding anything (a value or a formula) in the block `rows` x `columns` whose top-left cell is `anchor`. */
  occupiedCells(anchor: string, rows: number, columns: number): Promise<number>;
  /** Writes a block at `anchor`: text starting with "=" is a formula, anything else a value; null clears a cell. */
  write(anchor: string, cells: unknown[][]): Promise<void>;
  /** Calls `onChange` after an edit touches any of the addresses; resolves to a function that stops listening. */
  watch(addresses: string[], onChange: () => void): Promise<() => void>;
  /** Keeps the chosen ranges with the document, so the pane picks them up (and listens again) when it reopens. */
  saveRanges(ranges: { yAddress: string; xAddress: string }): Promise<void>;
  /** The ranges saved with the document, or null. */
  savedRanges(): Promise<{ yAddress: string; xAddress: string } | null>;
}
