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
import { describeStyle, plainNumberValue, readNumberText, type NumberStyle } from "./numberText";

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
  // The body's own rows are the table's while no column changes a cell (a file of plain
  // numbers read as numbers): a million rows are not copied. The first column that changes
  // one copies them; rows shorter than the header are copied from the start.
  let rows: Cell[][] | null = body.every((row) => row.length === width) ? null : body.map(() => new Array<Cell>(width).fill(0));
  const columns: ColumnType[] = [];
  const decimal: "." | "," = options.decimalComma ? "," : ".";
  for (let j = 0; j < width; j++) {
    const decided = decideColumn(names[j], body, j, decimal, options.fromWorkbook ?? false, options.date1904 ? DAYS_1900_TO_1904 : 0);
    const values = decided.values;
    if (rows === null && values.some((value, i) => value !== body[i][j])) rows = body.map((row) => row.slice() as Cell[]);
    if (rows !== null) for (let i = 0; i < values.length; i++) rows[i][j] = values[i];
    columns.push({ name: names[j], position: j, letter: columnLetter(firstColumn + j), ...decided.type });
    if (decided.notice) notices.push(decided.notice);
  }
  return { names, rows: rows ?? (body as Cell[][]), columns, notices };
}

/**
 * The column rule for a header row over columns of numbers, NaN for a blank cell (a file of
 * plain numbers, read column by column): the names, kinds and notices typeColumns gives for the
 * same cells, without a cell or row array.
 */
export function typeNumberColumns(header: readonly RawCell[], body: readonly Float64Array[]): Omit<TypedColumns, "rows"> {
  const { names, notices } = headerNamesOf(header, header.length, 0);
  const columns = names.map((name, j): ColumnType => {
    const values = body[j];
    let filled = 0;
    let allWhole = true;
    for (let i = 0; i < values.length; i++) {
      const value = values[i];
      if (Number.isNaN(value)) continue;
      filled++;
      if (!Number.isInteger(value)) allWhole = false;
    }
    let numbers = values;
    if (filled < values.length) {
      numbers = new Float64Array(filled);
      for (let i = 0, k = 0; i < values.length; i++) if (!Number.isNaN(values[i])) numbers[k++] = values[i];
    }
    const type: Decision["type"] =
      filled === 0 ? { kind: "empty", defaultPredictor: false, reason: "empty" }
      : looksLikeIdentifierName(name) ? IDENTIFIER_BY_NAME
      : numberKind(numbers, allWhole);
    return { name, position: j, letter: columnLetter(j), ...type };
  });
  return { names, columns, notices };
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
function decideColumn(name: string, body: readonly (readonly RawCell[])[], column: number, decimal: "." | ",", fromWorkbook: boolean, dateShift: number): Decision {
  // One pass over the column (read in place: no copy of a million cells): blanks to null, text
  // trimmed, workbook dates to serial numbers.
  const values: Cell[] = new Array<Cell>(body.length);
  let filled = 0;
  let workbookDates = 0;
  const texts: number[] = [];
  for (let i = 0; i < body.length; i++) {
    const cell = body[i][column];
    if (typeof cell === "string") {
      const trimmed = cell.trim();
      values[i] = trimmed === "" ? null : trimmed;
      if (trimmed === "") continue;
      filled++;
      if (!isErrorText(cell)) texts.push(i);
    } else if (cell instanceof Date) {
      values[i] = serialOfDate(cell) - dateShift;
      filled++;
      workbookDates++;
    } else {
      values[i] = cell ?? null;
      if (cell !== null && cell !== undefined) filled++;
    }
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
  // Plain numbers ("12.5", most cells of large files) are read without an object per cell;
  // other text through readNumberText. NaN marks text that is no number.
  const read = new Float64Array(texts.length);
  let first: NumberStyle | undefined;
  let oneStyle = true;
  let group = "";
  let manyGroups = false;
  for (let k = 0; k < texts.length; k++) {
    const text = values[texts[k]] as string;
    const plain = plainNumberValue(text, decimal);
    let style: NumberStyle;
    if (!Number.isNaN(plain)) {
      read[k] = Number.isFinite(plain) ? plain : NaN;
      if (!Number.isFinite(plain)) continue;
      style = PLAIN_STYLE;
    } else {
      const reading = readNumberText(text, decimal);
      read[k] = reading === undefined ? NaN : reading.value;
      if (reading === undefined) continue;
      style = reading;
    }
    if (first === undefined) first = style;
    else if (style.percent !== first.percent || style.currency !== first.currency) oneStyle = false;
    if (style.group !== "") {
      if (group === "") group = style.group;
      else if (style.group !== group) manyGroups = true;
    }
  }
  if (first === undefined) return {};
  if (!oneStyle || manyGroups) {
    const examples = distinctExamples(texts.filter((_, k) => !Number.isNaN(read[k])).map((i) => values[i] as string), 3);
    return { notice: `${name} writes numbers in more than one way (${examples.join(", ")}); its cells are kept as text. Write the column one way (for example all with or all without %, one currency, one thousands separator).` };
  }
  for (let k = 0; k < texts.length; k++) if (!Number.isNaN(read[k])) values[texts[k]] = read[k];
  const description = describeStyle({ percent: first.percent, currency: first.currency, group });
  if (description !== "") return { converted: description };
  return fromWorkbook ? { converted: "numbers stored as text" } : {};
}

const PLAIN_STYLE: NumberStyle = { percent: false, currency: "", group: "" };

/**
 * Phase 2: a column whose filled cells are mostly dates (workbook date cells
 * or date text) is a date column; its date text becomes serial day numbers
 * when the day/month order is settled by some value over 12.
 */
function readDateColumn(values: Cell[], texts: readonly number[], workbookDates: number, filled: number): { isDate: boolean; note: string } {
  // Text read as numbers is no date: a column of numbers is settled without a look at each cell.
  if (2 * workbookDates <= filled && !texts.some((i) => typeof values[i] === "string")) return { isDate: false, note: "" };
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

const IDENTIFIER_BY_NAME: Decision["type"] = { kind: "identifier", defaultPredictor: false, reason: "identifier, by its name" };

/** Phase 3: the kind of a column of converted cells, and whether it joins the default predictors. */
function kindOf(name: string, values: readonly Cell[], filled: number, mixedStyles: boolean): Decision["type"] {
  let numbers = 0;
  let textOrLogical = 0;
  // Numbers are gathered in a typed array and counted by sorting (a Set of a million numbers
  // is slow); text and booleans in a Set.
  const numberValues = new Float64Array(filled);
  let allWhole = true;
  const otherValues = new Set<Cell>();
  for (const value of values) {
    if (value === null) continue;
    if (typeof value === "number") {
      numberValues[numbers++] = value;
      if (!Number.isInteger(value)) allWhole = false;
    } else if (typeof value === "boolean" || !isErrorText(value)) {
      textOrLogical++;
      otherValues.add(value);
    }
    // error values are no level
  }
  const distinctNumbers = (): number => countDistinct(numberValues.subarray(0, numbers));
  if (looksLikeIdentifierName(name)) return IDENTIFIER_BY_NAME;
  if (2 * numbers > filled) return numberKind(numberValues.subarray(0, numbers), numbers === filled && allWhole);
  if (textOrLogical === 0) return { kind: "text", defaultPredictor: false, reason: "error values only" };
  if (mixedStyles) return { kind: "text", defaultPredictor: false, reason: "numbers written in more than one way" };
  const levels = otherValues.size + distinctNumbers();
  if (levels === 1) return { kind: "text", defaultPredictor: false, reason: "the same text in every row", levels };
  // Every value different: each "level" would hold one row, so the column names rows rather than groups.
  if (levels === filled && filled >= IDENTIFIER_MIN_TEXT_ROWS) return { kind: "identifier", defaultPredictor: false, reason: "identifier: every value different" };
  if (levels > CATEGORY_MAX_LEVELS) return { kind: "text", defaultPredictor: false, reason: `text with ${levels} different values`, levels };
  return { kind: "category", defaultPredictor: true, reason: `categories (${levels} value${levels === 1 ? "" : "s"})`, levels };
}

/**
 * The kind of a column of mostly numbers, from its numbers in row order; `wholeOnly`: the
 * column holds nothing but whole numbers.
 */
function numberKind(numbers: Float64Array, wholeOnly: boolean): Decision["type"] {
  // A counter rises down the rows, so its values all differ.
  if (wholeOnly && numbers.length >= IDENTIFIER_MIN_ROWS && isCounter(numbers)) {
    return { kind: "identifier", defaultPredictor: false, reason: "identifier: every value a different whole number, as a counter" };
  }
  if (allEqual(numbers)) return { kind: "number", defaultPredictor: false, reason: "the same number in every row" };
  return { kind: "number", defaultPredictor: true, reason: "numbers" };
}

/** Different values among numbers, equal as a Set counts them (0 and −0 alike, NaN once). */
function countDistinct(numbers: Float64Array): number {
  const sorted = numbers.slice().sort();
  let count = 0;
  for (let i = 0; i < sorted.length; i++) {
    const value = sorted[i];
    if (i === 0 || !(value === sorted[i - 1] || (Number.isNaN(value) && Number.isNaN(sorted[i - 1])))) count++;
  }
  return count;
}

/** Whether the numbers (at least one) are all the same value, as a Set counts them. */
function allEqual(numbers: Float64Array): boolean {
  if (numbers.length === 0) return false;
  const first = numbers[0];
  for (let i = 1; i < numbers.length; i++) if (!(numbers[i] === first || (Number.isNaN(first) && Number.isNaN(numbers[i])))) return false;
  return true;
}

/**
 * Whether different whole numbers run as a counter or a run of codes does:
 * rising from each row to the next, and close together (max - min + 1 at
 * most IDENTIFIER_SPREAD times their count). Measured whole numbers spread
 * far wider (populations, amounts in cents) or come in no order (distances,
 * doses): those are predictors.
 */
function isCounter(numbers: Float64Array): boolean {
  for (let i = 1; i < numbers.length; i++) if (!(numbers[i] > numbers[i - 1])) return false;
  // Rising, so the first is the smallest and the last the largest.
  return numbers[numbers.length - 1] - numbers[0] + 1 <= IDENTIFIER_SPREAD * numbers.length;
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

/**
 * The number-text phase of the rule for one column of a worksheet range, as Excel hands it
 * to a function or the pane reads it: text cells that read as numbers in one style become
 * numbers in `values` (in place), read with a decimal point as in comma-separated files and
 * described as a workbook's are ("numbers stored as text" when plain).
 */
export function readNumberTextCells(name: string, values: Cell[]): { converted?: string; notice?: string } {
  const texts: number[] = [];
  for (let i = 0; i < values.length; i++) {
    const value = values[i];
    if (typeof value === "string" && value.trim() !== "" && !isErrorText(value)) texts.push(i);
  }
  if (texts.length === 0) return {};
  return readNumberColumn(name, values, texts, ".", true);
}
