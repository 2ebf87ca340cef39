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
  const capacity = countLineFeeds(bytes, start) + 1;
  const columns = Array.from({ length: width }, () => new Float64Array(capacity));
  const lineNumbers: number[] = [];
  let rows = 0;
  let line = firstLine;
  let i = skipEmptyLines(bytes, start);
  line += linesSkipped(bytes, start, i);
  while (i < length) {
    let lineEnd = bytes.indexOf(LF, i);
    if (lineEnd < 0) lineEnd = length;
    // Only a CRLF's CR may end the line's content (or a last line's lone CR).
    const contentEnd = lineEnd > i && bytes[lineEnd - 1] === CR ? lineEnd - 1 : lineEnd;
    let field = 0;
    let blankLine = true;
    let at = i;
    for (;;) {
      // One field: spaces, a plain number or nothing, spaces, then a comma or the content's end.
      while (at < contentEnd && isSpace(bytes[at])) at++;
      let value = NaN;
      if (at < contentEnd && bytes[at] !== COMMA) {
        value = readPlainNumber(bytes, at, contentEnd);
        if (!Number.isFinite(value) || numberEnd - at > PLAIN_NUMBER_MAX_LENGTH) return null;
        at = numberEnd;
        while (at < contentEnd && isSpace(bytes[at])) at++;
        blankLine = false;
      }
      if (field >= width) return null;
      columns[field][rows] = value;
      field++;
      if (at === contentEnd) break;
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
    if (lineEnd >= length) break;
    const next = skipEmptyLines(bytes, lineEnd + 1);
    line += 1 + linesSkipped(bytes, lineEnd + 1, next);
    i = next;
  }
  // Rows of blanks at the end of the file (spreadsheet exports leave some) are dropped.
  while (rows > 0 && columns.every((column) => Number.isNaN(column[rows - 1]))) rows--;
  lineNumbers.length = rows;
  return { columns: columns.map((column) => column.subarray(0, rows)), rows, lineNumbers };
}

function countLineFeeds(bytes: Uint8Array, from: number): number {
  let count = 0;
  for (let at = bytes.indexOf(LF, from); at >= 0; at = bytes.indexOf(LF, at + 1)) count++;
  return count;
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
