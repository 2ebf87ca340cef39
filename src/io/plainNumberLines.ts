/**
 * The data lines of a comma-separated file of plain numbers, read straight from the file's
 * bytes into one column of doubles per field: no text per line or per cell, no array per row.
 * The usual large export (a million rows of numbers) is read this way; any other file is left
 * to the field splitter (readCsv.ts), which reads every file. Host-free.
 */

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
/**
 * A whole number of at most this many digits is below 2^53, so a double holds it exactly; with
 * an exact power of ten (10^0 to 10^22), one multiplication or division then rounds the true
 * value once, to the double that Number() reads from the text (Clinger 1990).
 */
const EXACT_DIGITS = 15;
const POWERS_OF_TEN = Array.from({ length: 23 }, (_, e) => Number(`1e${e}`));

/** The columns of the data lines: NaN for a blank cell; for each row, its 1-based line. */
export interface NumberLines {
  columns: Float64Array[];
  rows: number;
  lineNumbers: number[];
}

/**
 * Reads the lines of `bytes` from `start` (the line after the header, line `firstLine`) as rows
 * of `width` comma-separated fields, each blank or a plain decimal number (sign, digits, one
 * point, exponent; spaces or tabs around it), with LF or CRLF line ends. Empty lines and lines of
 * nothing but whitespace are no rows, and rows of blanks at the end are dropped, as the field
 * splitter does. Null as soon as a line holds anything else: a quote, a lone carriage return,
 * another byte (text, a byte of a non-ASCII character), a number that overflows, or another
 * number of fields than `width`.
 */
export function readNumberLines(bytes: Uint8Array, start: number, firstLine: number, width: number): NumberLines | null {
  const length = bytes.length;
  let i = skipEmptyLines(bytes, start);
  let line = firstLine + linesSkipped(bytes, start, i);
  let columns: Float64Array[] = Array.from({ length: width }, () => new Float64Array(rowsEstimate(bytes, i, width)));
  const lineNumbers: number[] = [];
  let rows = 0;
  while (i < length) {
    if (rows === columns[0].length) columns = columns.map((column) => grown(column));
    let field = 0;
    let blankLine = true;
    let at = i;
    for (;;) {
      // One field: spaces, a plain number or nothing, spaces, then a comma or the line's end.
      while (at < length && isSpace(bytes[at])) at++;
      let value = NaN;
      if (at < length && bytes[at] !== COMMA && bytes[at] !== LF && bytes[at] !== CR) {
        value = readPlainNumber(bytes, at, length);
        if (!Number.isFinite(value) || numberEnd - at > PLAIN_NUMBER_MAX_LENGTH) return null;
        at = numberEnd;
        while (at < length && isSpace(bytes[at])) at++;
        blankLine = false;
      }
      if (field >= width) return null;
      columns[field][rows] = value;
      field++;
      if (at >= length || bytes[at] === LF) break;
      // A carriage return ends a line only before a line feed or at the end (CRLF); a lone one leaves the road.
      if (bytes[at] === CR) {
        if (at + 1 < length && bytes[at + 1] !== LF) return null;
        at++;
        break;
      }
      if (bytes[at] !== COMMA) return null;
      blankLine = false;
      at++;
    }
    // A line of nothing but whitespace is no row (the splitter's rule); other rows need every field.
    if (!blankLine) {
      if (field !== width) return null;
      lineNumbers.push(line);
      rows++;
    }
    if (at >= length) break;
    // `at` stands on the line feed that ends the line.
    const next = skipEmptyLines(bytes, at + 1);
    line += 1 + linesSkipped(bytes, at + 1, next);
    i = next;
  }
  // Rows of blanks at the end of the file (spreadsheet exports leave some) are dropped.
  while (rows > 0 && columns.every((column) => Number.isNaN(column[rows - 1]))) rows--;
  lineNumbers.length = rows;
  return { columns: columns.map((column) => column.subarray(0, rows)), rows, lineNumbers };
}

/**
 * Room for the rows from `from` on: as many as lines of the first one's length fill the bytes,
 * with a margin (lines of numbers vary little in length); at most one row per `width` bytes,
 * the shortest a row can be (its commas and line end).
 */
function rowsEstimate(bytes: Uint8Array, from: number, width: number): number {
  const rest = bytes.length - from;
  let firstEnd = bytes.indexOf(LF, from);
  if (firstEnd < 0) firstEnd = bytes.length;
  const estimate = Math.ceil((ROWS_MARGIN * rest) / (firstEnd - from + 1)) + 16;
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
function skipEmptyLines(bytes: Uint8Array, from: number): number {
  let i = from;
  while (i < bytes.length && (bytes[i] === LF || bytes[i] === CR)) i++;
  return i;
}

/** The line ends in [from, to): an LF, a CRLF or a lone CR each end one line. */
function linesSkipped(bytes: Uint8Array, from: number, to: number): number {
  let lines = 0;
  for (let i = from; i < to; i++) if (bytes[i] === LF || bytes[i + 1] !== LF) lines++;
  return lines;
}

/** Spaces and tabs: the ASCII characters String.prototype.trim removes inside a line. */
function isSpace(code: number): boolean {
  return code === SPACE || code === TAB || code === VERTICAL_TAB || code === FORM_FEED;
}

function isDigit(code: number): boolean {
  return code >= ZERO && code <= NINE;
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
  // The digits as one whole number (leading zeros left out) and the place of the point.
  let whole = 0;
  let significant = 0;
  let digits = 0;
  let pointShift = 0;
  let pointSeen = false;
  for (; i < last; i++) {
    const code = bytes[i];
    if (isDigit(code)) {
      if (whole !== 0 || code !== ZERO) {
        whole = whole * 10 + (code - ZERO);
        significant++;
      }
      digits++;
      if (pointSeen) pointShift++;
    } else if (code === POINT && !pointSeen) {
      pointSeen = true;
    } else {
      break;
    }
  }
  if (digits === 0) return NaN;
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
  if (significant <= EXACT_DIGITS && (whole === 0 || (power >= -22 && power <= 22))) {
    const size = whole === 0 ? 0 : power >= 0 ? whole * POWERS_OF_TEN[power] : whole / POWERS_OF_TEN[-power];
    return negative ? -size : size;
  }
  return Number(String.fromCharCode.apply(null, bytes.subarray(first, i) as unknown as number[]));
}
