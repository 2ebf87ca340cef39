/**
 * The one rule that decides what each column of a table read from a file
 * holds, used by every reader (CSV and xlsx, command line and task pane).
 * Host-free.
 *
 * - Numbers written as text are read when the whole column writes them one
 *   way: plain, percentages (12.3% becomes 0.123), thousands separators
 *   ("1,234.5"), a currency symbol ("$3.50"); a decimal comma only in files
 *   separated by semicolons or tabs. A column mixing styles stays text, and
 *   a notice says so.
 * - Dates (workbook date cells, or date text) become serial day numbers, as
 *   Excel hands them to a function, and the column is kind "date".
 * - A column named like an identifier (ID, "Trip ID", customer_id, "Order
 *   no."), or whose values are different whole numbers rising down the rows
 *   and lying close together as a counter's do (over at least
 *   IDENTIFIER_MIN_ROWS rows), or all different text, is kind "identifier".
 *   Different whole numbers in any other order (Distance, Dose) are
 *   measurements and stay predictors.
 * - A column holding one value only is no default predictor (it carries no
 *   information beside the intercept).
 * - A column of mostly text or booleans, with at most CATEGORY_MAX_LEVELS
 *   different values, is kind "category": its cells stay text (or booleans)
 *   for the design to turn into indicator columns.
 * - "number" and "category" columns join the default predictors; "date",
 *   "identifier", "text" and "empty" columns do not, and the caller names them.
 * - A header name used twice is renamed with its column letter ("Price (B)",
 *   "Price (E)"), never silently resolved to the first.
 */
import { readDateText, serialOfDate, serialOfParts, type DateParts } from "./dateText";
import { describeStyle, readNumberText, type NumberReading } from "./numberText";

/** A cell of a table handed to the engine: a number, text, a boolean or null for blank. */
export type Cell = number | string | boolean | null;
/** A cell as a reader delivers it, before the column rule: workbooks may also give dates. */
export type RawCell = Cell | Date;

export type ColumnKind = "number" | "category" | "date" | "identifier" | "text" | "empty";

export interface ColumnType {
  /** The name used to choose the column (unique in the table). */
  name: string;
  /** 0-based position in the table's rows. */
  position: number;
  /** The column's letter in the sheet (A, B, ..., AA). */
  letter: string;
  kind: ColumnKind;
  /** Whether the column joins the default predictors ("number" and "category" columns). */
  defaultPredictor: boolean;
  /** Why the column has its kind, in a few words ("dates", "identifier: every value a different whole number"). */
  reason: string;
  /** How text cells were read as numbers, when they were ("percent, 12.3% read as 0.123", "currency $"). */
  converted?: string;
  /** Different values of a category column. */
  levels?: number;
}

export interface TypedColumns {
  names: string[];
  /** The data rows with converted cells, one cell per column. */
  rows: Cell[][];
  columns: ColumnType[];
  /** Sentences for the user: conversions, renamed headers, columns whose text could not be read. */
  notices: string[];
}

export interface ColumnRuleOptions {
  /** Whether numbers may use a decimal comma (files separated by semicolons or tabs). */
  decimalComma?: boolean;
  /** Whether the cells come from a workbook, where a number stored as text is worth a notice. */
  fromWorkbook?: boolean;
  /** 0-based sheet column of the table's first column, for the letters (default 0). */
  firstColumn?: number;
  /** Whether workbook dates count days in the 1904 date system (older Mac workbooks). */
  date1904?: boolean;
}

/** The 1904 date system's serial numbers are this many days smaller than the 1900 system's. */
const DAYS_1900_TO_1904 = 1462;

/** Identifier-like values are recognised only over this many rows: a few distinct whole numbers prove nothing. */
export const IDENTIFIER_MIN_ROWS = 10;
/** Different whole numbers spanning at most this many times their count look like a counter or codes. */
export const IDENTIFIER_SPREAD = 2;
/** A text column whose values all differ is an identifier from this many rows (two values may be a yes/no pair). */
export const IDENTIFIER_MIN_TEXT_ROWS = 3;
/** A text column with more different values than this is no category (too many indicator columns). */
export const CATEGORY_MAX_LEVELS = 20;

/** Worksheet error values as readers deliver them (text): they are neither numbers nor categories. */
const ERROR_TEXTS = new Set([
  "#NULL!", "#DIV/0!", "#VALUE!", "#REF!", "#NAME?", "#NUM!", "#N/A", "#GETTING_DATA",
  "#SPILL!", "#CALC!", "#FIELD!", "#BLOCKED!", "#CONNECT!", "#BUSY!", "#UNKNOWN!", "#EXTERNAL!",
]);

export function isErrorText(value: unknown): boolean {
  // Every error value starts with "#": most cells are ruled out without trimming.
  return typeof value === "string" && value.includes("#") && ERROR_TEXTS.has(value.trim().toUpperCase());
}

/** Header names that say a column identifies rows: ID, "Trip ID", customer_id, TripId, Identifier, "Order no.", "Invoice number", "Key". */
const IDENTIFIER_WORD = /(^|[^a-z])(id|identifier|key)($|[^a-z])/i;
const IDENTIFIER_SUFFIX = /[a-z](ID|Id)$/;
const IDENTIFIER_LAST_WORD = /(^|[\s_])(no\.?|nr\.?|number|#)$/i;

export function looksLikeIdentifierName(name: string): boolean {
  return IDENTIFIER_WORD.test(name) || IDENTIFIER_SUFFIX.test(name) || IDENTIFIER_LAST_WORD.test(name.trim());
}

/** The letters of a 0-based column index: 0 -> A, 25 -> Z, 26 -> AA. */
export function columnLetter(index: number): string {
  let letters = "";
  for (let n = index + 1; n > 0; n = Math.floor((n - 1) / 26)) letters = String.fromCharCode(65 + ((n - 1) % 26)) + letters;
  return letters;
}

/** The 0-based column index of letters such as "AA", or undefined when the text is not 1-3 letters. */
export function columnIndexOfLetters(text: string): number | undefined {
  if (!/^[A-Za-z]{1,3}$/.test(text)) return undefined;
  let index = 0;
  for (const c of text.toUpperCase()) index = index * 26 + (c.charCodeAt(0) - 64);
  return index - 1;
}

function isBlank(cell: RawCell | undefined): boolean {
  return cell === null || cell === undefined || (typeof cell === "string" && cell.trim() === "");
}

/** The header row's cells as names: trimmed text, numbers as written, "column C" for a blank. */
export function headerNamesOf(header: readonly RawCell[], width: number, firstColumn: number): { names: string[]; notices: string[] } {
  const names: string[] = [];
  for (let j = 0; j < width; j++) {
    const cell = header[j];
    if (isBlank(cell)) names.push(`column ${columnLetter(firstColumn + j)}`);
    else if (cell instanceof Date) names.push(cell.toISOString().slice(0, 10));
    else names.push(String(cell).trim());
  }
  const notices: string[] = [];
  const seen = new Map<string, number[]>();
  names.forEach((name, j) => seen.set(name, [...(seen.get(name) ?? []), j]));
  for (const [name, positions] of seen) {
    if (positions.length < 2) continue;
    const renamed = positions.map((j) => `${name} (${columnLetter(firstColumn + j)})`);
    positions.forEach((j, i) => (names[j] = renamed[i]));
    notices.push(`The header "${name}" names ${positions.length} columns (${positions.map((j) => columnLetter(firstColumn + j)).join(", ")}); they are called ${renamed.map((r) => `"${r}"`).join(", ")} here. Rename them in the file to choose names.`);
  }
  return { names, notices };
}

/**
 * Applies the column rule to a header row and the data rows below it. Rows
 * shorter than the header are padded with blanks (the caller checks shapes
 * first when a ragged file is an error).
 */
export function typeColumns(header: readonly RawCell[], body: readonly (readonly RawCell[])[], options: ColumnRuleOptions = {}): TypedColumns {
  const firstColumn = options.firstColumn ?? 0;
  const width = header.length;
  const { names, notices } = headerNamesOf(header, width, firstColumn);
  const rows: Cell[][] = body.map(() => new Array<Cell>(width).fill(null));
  const columns: ColumnType[] = [];
  const decimal: "." | "," = options.decimalComma ? "," : ".";
  for (let j = 0; j < width; j++) {
    const cells = body.map((row) => row[j] ?? null);
    const decided = decideColumn(names[j], cells, decimal, options.fromWorkbook ?? false, options.date1904 ? DAYS_1900_TO_1904 : 0);
    decided.values.forEach((value, i) => (rows[i][j] = value));
    columns.push({ name: names[j], position: j, letter: columnLetter(firstColumn + j), ...decided.type });
    if (decided.notice) notices.push(decided.notice);
  }
  return { names, rows, columns, notices };
}

interface Decision {
  values: Cell[];
  type: Omit<ColumnType, "name" | "position" | "letter">;
  notice?: string;
}

/**
 * The column rule for one column, in three phases: number text read in one
 * style, date text read in one day/month order, then the column's kind.
 */
function decideColumn(name: string, cells: RawCell[], decimal: "." | ",", fromWorkbook: boolean, dateShift: number): Decision {
  const values: Cell[] = cells.map((cell) =>
    cell instanceof Date ? serialOfDate(cell) - dateShift : isBlank(cell) ? null : typeof cell === "string" ? cell.trim() : (cell as Cell),
  );
  let filled = 0;
  let workbookDates = 0;
  const texts: number[] = [];
  for (let i = 0; i < cells.length; i++) {
    const cell = cells[i];
    if (isBlank(cell)) continue;
    filled++;
    if (cell instanceof Date) workbookDates++;
    else if (typeof cell === "string" && !isErrorText(cell)) texts.push(i);
  }
  if (filled === 0) return { values, type: { kind: "empty", defaultPredictor: false, reason: "empty" } };
  const numbers = readNumberColumn(name, values, texts, decimal, fromWorkbook);
  const dates = readDateColumn(values, texts, workbookDates, filled);
  if (dates.isDate) return { values, type: { kind: "date", defaultPredictor: false, reason: `dates${dates.note}` }, notice: numbers.notice };
  const type = kindOf(name, values, filled, numbers.notice !== undefined);
  return { values, type: numbers.converted && type.kind !== "text" ? { ...type, converted: numbers.converted } : type, notice: numbers.notice };
}

/**
 * Phase 1: text cells that read as numbers in one style (all percent or none,
 * one currency, one thousands separator) become numbers. A column mixing
 * styles is left alone, with a notice showing the styles.
 */
function readNumberColumn(name: string, values: Cell[], texts: readonly number[], decimal: "." | ",", fromWorkbook: boolean): { converted?: string; notice?: string } {
  const readings: (NumberReading | undefined)[] = texts.map((i) => readNumberText(values[i] as string, decimal));
  const numeric = readings.filter((r): r is NumberReading => r !== undefined);
  if (numeric.length === 0) return {};
  const first = numeric[0];
  const oneStyle = numeric.every((r) => r.percent === first.percent && r.currency === first.currency);
  const groups = new Set(numeric.map((r) => r.group).filter((g) => g !== ""));
  if (!oneStyle || groups.size > 1) {
    const examples = distinctExamples(texts.filter((_, k) => readings[k] !== undefined).map((i) => values[i] as string), 3);
    return { notice: `${name} writes numbers in more than one way (${examples.join(", ")}); its cells are kept as text. Write the column one way (for example all with or all without %, one currency, one thousands separator).` };
  }
  readings.forEach((reading, k) => {
    if (reading !== undefined) values[texts[k]] = reading.value;
  });
  const description = describeStyle({ percent: first.percent, currency: first.currency, group: [...groups][0] ?? "" });
  if (description !== "") return { converted: description };
  return fromWorkbook ? { converted: "numbers stored as text" } : {};
}

/**
 * Phase 2: a column whose filled cells are mostly dates (workbook date cells
 * or date text) is a date column; its date text becomes serial day numbers
 * when the day/month order is settled by some value over 12.
 */
function readDateColumn(values: Cell[], texts: readonly number[], workbookDates: number, filled: number): { isDate: boolean; note: string } {
  const dateParts = texts.map((i) => (typeof values[i] === "string" ? readDateText(values[i] as string) : undefined));
  const textDates = dateParts.filter((p) => p !== undefined).length;
  if (2 * (workbookDates + textDates) <= filled) return { isDate: false, note: "" };
  const order = dayMonthOrder(dateParts);
  if (order === "unclear") return { isDate: true, note: "; day and month order unclear, kept as text" };
  dateParts.forEach((parts, k) => {
    if (parts === undefined) return;
    const serial =
      parts.order === "known" ? serialOfParts(parts.year, parts.month, parts.day, parts.dayFraction)
      : order === "day first" ? serialOfParts(parts.year, parts.b, parts.a, parts.dayFraction)
      : serialOfParts(parts.year, parts.a, parts.b, parts.dayFraction);
    if (serial !== undefined) values[texts[k]] = serial;
  });
  return { isDate: true, note: "" };
}

/** Phase 3: the kind of a column of converted cells, and whether it joins the default predictors. */
function kindOf(name: string, values: readonly Cell[], filled: number, mixedStyles: boolean): Decision["type"] {
  let numbers = 0;
  let textOrLogical = 0;
  const distinct = new Set<Cell>();
  let wholeAndDistinct = true;
  for (const value of values) {
    if (value === null) continue;
    if (typeof value === "number") {
      numbers++;
      if (!Number.isInteger(value) || distinct.has(value)) wholeAndDistinct = false;
    } else if (typeof value === "boolean" || !isErrorText(value)) {
      textOrLogical++;
    } else {
      continue; // error values are no level
    }
    distinct.add(value);
  }
  if (looksLikeIdentifierName(name)) return { kind: "identifier", defaultPredictor: false, reason: "identifier, by its name" };
  if (2 * numbers > filled) {
    if (numbers === filled && wholeAndDistinct && numbers >= IDENTIFIER_MIN_ROWS && isCounter(values)) {
      return { kind: "identifier", defaultPredictor: false, reason: "identifier: every value a different whole number, as a counter" };
    }
    if (new Set(values.filter((v) => typeof v === "number")).size === 1) return { kind: "number", defaultPredictor: false, reason: "the same number in every row" };
    return { kind: "number", defaultPredictor: true, reason: "numbers" };
  }
  if (textOrLogical === 0) return { kind: "text", defaultPredictor: false, reason: "error values only" };
  if (mixedStyles) return { kind: "text", defaultPredictor: false, reason: "numbers written in more than one way" };
  const levels = distinct.size;
  if (levels === 1) return { kind: "text", defaultPredictor: false, reason: "the same text in every row", levels };
  // Every value different: each "level" would hold one row, so the column names rows rather than groups.
  if (levels === filled && filled >= IDENTIFIER_MIN_TEXT_ROWS) return { kind: "identifier", defaultPredictor: false, reason: "identifier: every value different" };
  if (levels > CATEGORY_MAX_LEVELS) return { kind: "text", defaultPredictor: false, reason: `text with ${levels} different values`, levels };
  return { kind: "category", defaultPredictor: true, reason: `categories (${levels} value${levels === 1 ? "" : "s"})`, levels };
}

/**
 * Whether different whole numbers run as a counter or a run of codes does:
 * rising from each row to the next, and close together (max - min + 1 at
 * most IDENTIFIER_SPREAD times their count). Measured whole numbers spread
 * far wider (populations, amounts in cents) or come in no order (distances,
 * doses): those are predictors.
 */
function isCounter(values: readonly Cell[]): boolean {
  let first = NaN;
  let previous = -Infinity;
  let count = 0;
  for (const v of values) {
    if (typeof v !== "number") continue;
    if (!(v > previous)) return false;
    if (count === 0) first = v;
    previous = v;
    count++;
  }
  // Rising, so the first is the smallest and the last the largest.
  return previous - first + 1 <= IDENTIFIER_SPREAD * count;
}

/** "day first", "month first" or "unclear" for a column of a/b/year dates; "known" dates vote for neither. */
function dayMonthOrder(parts: (DateParts | undefined)[]): "day first" | "month first" | "unclear" {
  let dayFirst = false;
  let monthFirst = false;
  let open = false;
  for (const p of parts) {
    if (p === undefined || p.order === "known") continue;
    open = true;
    if (p.a > 12) dayFirst = true;
    if (p.b > 12) monthFirst = true;
  }
  if (!open) return "day first"; // no open dates: the order is never used
  if (dayFirst === monthFirst) return "unclear";
  return dayFirst ? "day first" : "month first";
}

function distinctExamples(texts: string[], count: number): string[] {
  const shown: string[] = [];
  const styles = new Set<string>();
  for (const text of texts) {
    const key = text.replace(/\d+/g, "0");
    if (styles.has(key)) continue;
    styles.add(key);
    shown.push(`"${text.trim()}"`);
    if (shown.length === count) break;
  }
  return shown;
}
