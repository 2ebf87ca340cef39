/**
 * The data lines of a comma-separated file of plain numbers, read straight from the file's
 * bytes into one column of doubles per field: no text per line or per cell, no array per row.
 * The usual large export (a million rows of numbers) is read this way; any other file is left
 * to the field splitter (readCsv.ts), which reads every file. Host-free.
 */

import { EXACT_DIGITS, EXACT_POWER, POWERS_OF_TEN, longDecimalValue, TAIL_DIGITS } from "./longDecimal";

const LF = 10;
const CR = 13;
const COMMA = 44;
const PLUS = 43;
const MINUS = 45;
const POINT = 46;
const ZERO = 48;
const NINE = 57;
const SPACE = 32;
const TAB = 9;
const VERTICAL_TAB = 11;
const FORM_FEED = 12;
const SMALL_E = 101;
const CAPITAL_E = 69;

/** A cell longer than this is not read as a plain number (numberText.ts, plainNumberValue). */
const PLAIN_NUMBER_MAX_LENGTH = 64;

/** The columns of the data lines: NaN for a blank cell; for each row, its 1-based line. */
export interface NumberLines {
  columns: Float64Array[];
  rows: number;
  lineNumbers: number[];
}

/** Lines read so far, for a file read in pieces: the columns (with room for more rows) and the next line's number. */
export interface NumberLinesSoFar extends NumberLines {
  line: number;
}

/** Nothing read yet: `width` columns with room for `rowsGuess` rows, the first data line numbered `firstLine`. */
export function noNumberLines(width: number, rowsGuess: number, firstLine: number): NumberLinesSoFar {
  return { columns: Array.from({ length: width }, () => new Float64Array(Math.max(1, rowsGuess))), rows: 0, lineNumbers: [], line: firstLine };
}

/**
 * Reads the lines in bytes [start, end) into `read` as rows of its width of comma-separated
 * fields, each blank or a plain decimal number (sign, digits, one point, exponent; spaces or tabs
 * around it), with LF or CRLF line ends. `end` is the end of the file or stands just after a
 * line feed (a file read in pieces is cut after its line feeds). Empty lines and lines of
 * nothing but whitespace are no rows, as in the field splitter. False as soon as a line holds
 * anything else: a quote, a lone carriage return, another byte (text, a byte of a non-ASCII
 * character), a number that overflows, or another number of fields than the width.
 */
export function readNumberLines(read: NumberLinesSoFar, bytes: Uint8Array, start: number, end: number): boolean {
  const width = read.columns.length;
  const { lineNumbers } = read;
  let { columns, rows } = read;
  let i = skipEmptyLines(bytes, start, end);
  let line = read.line + linesSkipped(bytes, start, i, end);
  while (i < end) {
    if (rows === columns[0].length) columns = columns.map((column) => grown(column));
    let field = 0;
    let blankLine = true;
    let at = i;
    for (;;) {
      // One field: spaces, a plain number or nothing, spaces, then a comma or the line's end.
      while (at < end && isSpace(bytes[at])) at++;
      let value = NaN;
      if (at < end && bytes[at] !== COMMA && bytes[at] !== LF && bytes[at] !== CR) {
        value = readPlainNumber(bytes, at, end);
        if (!Number.isFinite(value) || numberEnd - at > PLAIN_NUMBER_MAX_LENGTH) return false;
        at = numberEnd;
        while (at < end && isSpace(bytes[at])) at++;
        blankLine = false;
      }
      if (field >= width) return false;
      columns[field][rows] = value;
      field++;
      if (at >= end || bytes[at] === LF) break;
      // A carriage return ends a line only before a line feed or at the end (CRLF); a lone one leaves the road.
      if (bytes[at] === CR) {
        if (at + 1 < end && bytes[at + 1] !== LF) return false;
        at++;
        break;
      }
      if (bytes[at] !== COMMA) return false;
      blankLine = false;
      at++;
    }
    // A line of nothing but whitespace is no row (the splitter's rule); other rows need every field.
    if (!blankLine) {
      if (field !== width) return false;
      lineNumbers.push(line);
      rows++;
    }
    if (at >= end) break;
    // `at` stands on the line feed that ends the line.
    const next = skipEmptyLines(bytes, at + 1, end);
    line += 1 + linesSkipped(bytes, at + 1, next, end);
    i = next;
  }
  Object.assign(read, { columns, rows, line });
  return true;
}

/** The data lines of `bytes` read in one go (readNumberLines), or null when they are no lines of plain numbers. */
export function numberLinesOf(bytes: Uint8Array, width: number, firstLine: number): NumberLines | null {
  let firstEnd = bytes.indexOf(LF);
  if (firstEnd < 0) firstEnd = bytes.length;
  const read = noNumberLines(width, rowsEstimate(bytes.length, firstEnd, width), firstLine);
  return readNumberLines(read, bytes, 0, bytes.length) ? numberLinesRead(read) : null;
}

/** The lines read, rows of blanks at the end of the file (spreadsheet exports leave some) dropped. */
export function numberLinesRead(read: NumberLinesSoFar): NumberLines {
  const { columns, lineNumbers } = read;
  let rows = read.rows;
  while (rows > 0 && columns.every((column) => Number.isNaN(column[rows - 1]))) rows--;
  lineNumbers.length = rows;
  return { columns: columns.map((column) => column.subarray(0, rows)), rows, lineNumbers };
}

/**
 * Room for the rows of `rest` bytes whose first line is `firstLength` bytes long: as many as lines
 * of its length fill them, with a margin (lines of numbers vary little in length); at most one row per
 * `width` bytes, the shortest a row can be (its commas and line end).
 */
export function rowsEstimate(rest: number, firstLength: number, width: number): number {
  const estimate = Math.ceil((ROWS_MARGIN * rest) / (firstLength + 1)) + 16;
  return Math.max(1, Math.min(estimate, Math.ceil(rest / width) + 1));
}

/** Room for this many times the first line's count of rows, before a column is grown. */
const ROWS_MARGIN = 1.05;

/** A column with half as much room again, its rows kept. */
function grown(column: Float64Array): Float64Array {
  const larger = new Float64Array(Math.ceil(column.length * 1.5) + 16);
  larger.set(column);
  return larger;
}

/** The first position at or after `from` that is no line end: empty lines hold no fields. */
function skipEmptyLines(bytes: Uint8Array, from: number, end: number): number {
  let i = from;
  while (i < end && (bytes[i] === LF || bytes[i] === CR)) i++;
  return i;
}

/** The line ends in [from, to): an LF, a CRLF or a lone CR each end one line. */
function linesSkipped(bytes: Uint8Array, from: number, to: number, end: number): number {
  let lines = 0;
  for (let i = from; i < to; i++) if (bytes[i] === LF || i + 1 >= end || bytes[i + 1] !== LF) lines++;
  return lines;
}

/** Spaces and tabs: the ASCII characters String.prototype.trim removes inside a line. */
function isSpace(code: number): boolean {
  return code === SPACE || code === TAB || code === VERTICAL_TAB || code === FORM_FEED;
}

function isDigit(code: number): boolean {
  return code >= ZERO && code <= NINE;
}

/** The digits readDigits has taken so far: the whole number of the first EXACT_DIGITS significant ones, the tail of the next TAIL_DIGITS, and how many significant digits in all. */
const digitsRead = { whole: 0, tail: 0, significant: 0 };

/** Takes the digits from `from` on into digitsRead (leading zeros of the number left out); returns the first position that holds no digit. */
function readDigits(bytes: Uint8Array, from: number, last: number): number {
  let { whole, tail, significant } = digitsRead;
  let i = from;
  for (; i < last; i++) {
    const digit = bytes[i] - ZERO;
    if (digit < 0 || digit > 9) break;
    if (significant === 0) {
      if (digit === 0) continue;
      whole = digit;
    } else if (significant < EXACT_DIGITS) {
      whole = whole * 10 + digit;
    } else if (significant < EXACT_DIGITS + TAIL_DIGITS) {
      tail = tail * 10 + digit;
    }
    significant++;
  }
  digitsRead.whole = whole;
  digitsRead.tail = tail;
  digitsRead.significant = significant;
  return i;
}

/** Where the last readPlainNumber stopped: the byte after its number. */
let numberEnd = 0;

/**
 * The plain decimal number (sign, digits with one optional point, optional exponent) that
 * starts at `first` and runs at most to `last`, exactly the double Number() reads from its text
 * (±Infinity when it overflows), with `numberEnd` set to the byte after it; NaN when no number
 * starts there.
 */
function readPlainNumber(bytes: Uint8Array, first: number, last: number): number {
  let i = first;
  let negative = false;
  if (bytes[i] === PLUS || bytes[i] === MINUS) {
    negative = bytes[i] === MINUS;
    i++;
  }
  // The digits as one whole number (leading zeros left out), then those after the point; past
  // EXACT_DIGITS significant digits, the next ones as a whole number of their own (the tail).
  digitsRead.whole = 0;
  digitsRead.tail = 0;
  digitsRead.significant = 0;
  const wholeStart = i;
  i = readDigits(bytes, i, last);
  const wholeDigits = i - wholeStart;
  let pointShift = 0;
  if (i < last && bytes[i] === POINT) {
    const fractionStart = i + 1;
    i = readDigits(bytes, fractionStart, last);
    pointShift = i - fractionStart;
  }
  const { whole, tail, significant } = digitsRead;
  if (wholeDigits + pointShift === 0) return NaN;
  let exponent = 0;
  if (i < last && (bytes[i] === SMALL_E || bytes[i] === CAPITAL_E)) {
    let j = i + 1;
    let exponentNegative = false;
    if (j < last && (bytes[j] === PLUS || bytes[j] === MINUS)) {
      exponentNegative = bytes[j] === MINUS;
      j++;
    }
    const exponentStart = j;
    for (; j < last && isDigit(bytes[j]); j++) {
      // Capped: far beyond any double's range, the text's own reading decides.
      if (exponent < 1e6) exponent = exponent * 10 + (bytes[j] - ZERO);
    }
    // An "e" without digits ends no number: the caller finds the "e" where a comma should be.
    if (j === exponentStart) return NaN;
    i = j;
    if (exponentNegative) exponent = -exponent;
  }
  numberEnd = i;
  const power = exponent - pointShift;
  // At most EXACT_DIGITS digits with an exact power of ten: one multiplication or division
  // rounds the true value once, to the double that Number() reads from the text (Clinger 1990).
  if (significant <= EXACT_DIGITS && (whole === 0 || (power >= -EXACT_POWER && power <= EXACT_POWER))) {
    const size = whole === 0 ? 0 : power >= 0 ? whole * POWERS_OF_TEN[power] : whole / POWERS_OF_TEN[-power];
    return negative ? -size : size;
  }
  if (significant > EXACT_DIGITS && significant <= EXACT_DIGITS + TAIL_DIGITS) {
    const tailDigits = significant - EXACT_DIGITS;
    const size = longDecimalValue(whole, tail, tailDigits, power);
    if (!Number.isNaN(size)) return negative ? -size : size;
  }
  return Number(String.fromCharCode.apply(null, bytes.subarray(first, i) as unknown as number[]));
}
