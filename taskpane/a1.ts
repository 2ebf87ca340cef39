/**
 * A1-style addresses ("B2:C40", "'Sales 2024'!B2:C40", "$B$2"), as the user types
 * them and as both hosts report them. Rows and columns here are 0-based.
 */

export interface CellBlock {
  /** Sheet name without quotes, or "" when the address names none. */
  sheet: string;
  top: number;
  left: number;
  /** Inclusive. */
  bottom: number;
  right: number;
}

const CELL = /^\$?([A-Za-z]{1,3})\$?(\d{1,7})$/;

/** "A" -> 0, "Z" -> 25, "AA" -> 26. */
export function columnIndex(letters: string): number {
  let index = 0;
  for (const ch of letters.toUpperCase()) index = index * 26 + (ch.charCodeAt(0) - 64);
  return index - 1;
}

/** 0 -> "A", 26 -> "AA". */
export function columnLetters(index: number): string {
  let letters = "";
  let rest = index + 1;
  while (rest > 0) {
    const digit = (rest - 1) % 26;
    letters = String.fromCharCode(65 + digit) + letters;
    rest = Math.floor((rest - 1) / 26);
  }
  return letters;
}

/** Splits "Sheet!A1:B2" into the sheet name (unquoted) and the cell part. */
function splitSheet(address: string): [string, string] {
  const bang = address.lastIndexOf("!");
  if (bang < 0) return ["", address];
  let sheet = address.slice(0, bang);
  if (sheet.startsWith("'") && sheet.endsWith("'")) sheet = sheet.slice(1, -1).replace(/''/g, "'");
  return [sheet, address.slice(bang + 1)];
}

/** Parses an address; null when it is not one (the caller words the message). */
export function parseAddress(address: string): CellBlock | null {
  const [sheet, cells] = splitSheet(address.trim());
  const parts = cells.split(":");
  if (parts.length > 2) return null;
  const first = CELL.exec(parts[0]);
  const last = CELL.exec(parts[parts.length - 1]);
  if (!first || !last) return null;
  const r1 = Number(first[2]) - 1;
  const r2 = Number(last[2]) - 1;
  const c1 = columnIndex(first[1]);
  const c2 = columnIndex(last[1]);
  if (r1 < 0 || r2 < 0) return null;
  return { sheet, top: Math.min(r1, r2), bottom: Math.max(r1, r2), left: Math.min(c1, c2), right: Math.max(c1, c2) };
}

function quoteSheet(sheet: string): string {
  if (sheet === "") return "";
  return /^[A-Za-z_][A-Za-z0-9_.]*$/.test(sheet) ? `${sheet}!` : `'${sheet.replace(/'/g, "''")}'!`;
}

/** Formats a block as "Sheet!B2:C9" (or "B2" for one cell); no sheet part when sheet is "". */
export function formatAddress(block: CellBlock): string {
  const a = `${columnLetters(block.left)}${block.top + 1}`;
  const b = `${columnLetters(block.right)}${block.bottom + 1}`;
  return quoteSheet(block.sheet) + (a === b ? a : `${a}:${b}`);
}

export function blockRows(block: CellBlock): number {
  return block.bottom - block.top + 1;
}

export function blockColumns(block: CellBlock): number {
  return block.right - block.left + 1;
}

/** Whether two blocks share a cell; a block without a sheet matches any sheet. */
export function blocksOverlap(a: CellBlock, b: CellBlock): boolean {
  if (a.sheet !== "" && b.sheet !== "" && a.sheet.toLowerCase() !== b.sheet.toLowerCase()) return false;
  return a.top <= b.bottom && b.top <= a.bottom && a.left <= b.right && b.left <= a.right;
}
