import { SkeinError } from "../engine/errors";
import { tableFromGrid, type DataTable, type HeaderChoice } from "./dataTable";
import { plainNumberValue, readNumberText } from "./numberText";

/**
 * Plain decimal numbers: optional sign, digits with an optional point (or a
 * point and digits), optional exponent. Nothing else (no thousands
 * separators, currency signs, percentages or words such as "NaN"), so text
 * that merely contains digits stays text and its row is reported.
 */
const DECIMAL_POINT_NUMBER = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;
/** The same with a decimal comma, the convention of files delimited by semicolons or tabs. */
const DECIMAL_COMMA_NUMBER = /^[+-]?(?:\d+,?\d*|,\d+)(?:[eE][+-]?\d+)?$/;

const QUOTE = 34; // "
const CR = 13;
const LF = 10;

/** CSV text split into fields, before any cell is read as a number. */
export interface CsvFields {
  /** Fields as text; null for an empty (or all-whitespace) field. */
  rows: (string | null)[][];
  /** For each row, the 1-based line of the text it starts on. */
  lines: number[];
  /** The delimiter found on the first line: ",", ";" or "\t". */
  delimiter: string;
}

/**
 * Parses CSV text as RFC 4180 describes it (quoted fields, "" for a quote
 * inside them, CRLF or LF line ends), leniently: a quote inside an unquoted
 * field is kept as a character. A byte-order mark is dropped. The delimiter
 * is the one of comma, semicolon or tab that occurs most often in the first
 * line (comma on a tie); with a semicolon or a tab, numbers may use a decimal
 * comma (see decimalMarkOf).
 *
 * Cells that are plain decimal numbers become numbers; empty cells become
 * null; other text stays text. Empty lines, and rows of empty cells at the
 * end of the file (spreadsheet exports often leave some), are dropped.
 * (The column-type rule in columnTypes.ts reads the other number styles:
 * percentages, thousands separators, currency.)
 */
export function parseCsv(text: string): unknown[][] {
  const fields = splitCsv(text);
  const comma = decimalMarkOf(fields) === ",";
  const numberPattern = comma ? DECIMAL_COMMA_NUMBER : DECIMAL_POINT_NUMBER;
  return fields.rows.map((row) =>
    row.map((raw) => {
      if (raw === null) return null;
      const trimmed = raw.trim();
      if (!numberPattern.test(trimmed)) return raw;
      // "1e400" matches the pattern but overflows: it stays text, reported as such, never Infinity.
      const value = Number(comma ? trimmed.replace(",", ".") : trimmed);
      return Number.isFinite(value) ? value : raw;
    }),
  );
}

/** The fields of CSV text (see parseCsv for the dialect), each row with the line it starts on. */
export function splitCsv(text: string): CsvFields {
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  const delimiter = detectDelimiter(text);
  const delimiterCode = delimiter.charCodeAt(0);

  const rows: (string | null)[][] = [];
  const lines: number[] = [];
  let row: (string | null)[] = [];
  let i = 0;
  const length = text.length;
  let line = 1;
  let rowLine = 1;
  // Next quote and next carriage return at or after i (length when none): a line holding
  // neither is split by the native String.split, the common case of large files.
  let nextQuote = -1;
  let nextReturn = -1;
  while (i < length) {
    // Whether the whole line was split at once and i stands at its end.
    let atLineEnd = false;
    if (row.length === 0) {
      if (nextQuote < i) nextQuote = indexOrLength(text, '"', i);
      if (nextReturn < i) nextReturn = indexOrLength(text, "\r", i);
      const lineEnd = indexOrLength(text, "\n", i);
      if (nextQuote >= lineEnd && nextReturn >= lineEnd - 1) {
        // Only a CRLF's CR may stand in the line, at its end.
        const contentEnd = nextReturn === lineEnd - 1 ? lineEnd - 1 : lineEnd;
        const fields = text.slice(i, contentEnd).split(delimiter);
        for (let f = 0; f < fields.length; f++) row.push(toCell(fields[f]));
        i = contentEnd;
        atLineEnd = true;
      }
    }
    if (!atLineEnd) {
      let raw: string;
      if (text.charCodeAt(i) === QUOTE) {
        // Quoted field: runs to the next quote not followed by another quote.
        const startLine = line;
        let value = "";
        let from = i + 1;
        for (;;) {
          const close = text.indexOf('"', from);
          if (close < 0) {
            throw new SkeinError("bad-input", `A quoted field that starts on line ${startLine} of the CSV text never ends; add the closing quote (") or remove the opening one.`);
          }
          value += text.slice(from, close);
          if (text.charCodeAt(close + 1) === QUOTE) {
            value += '"';
            from = close + 2;
          } else {
            i = close + 1;
            break;
          }
        }
        for (let k = 0; k < value.length; k++) if (value.charCodeAt(k) === LF) line++;
        // Anything between the closing quote and the delimiter is kept as it stands.
        const rest = i;
        while (i < length && !isFieldEnd(text.charCodeAt(i), delimiterCode)) i++;
        raw = value + text.slice(rest, i);
      } else {
        const start = i;
        while (i < length && !isFieldEnd(text.charCodeAt(i), delimiterCode)) i++;
        raw = text.slice(start, i);
      }
      row.push(toCell(raw));
      if (i >= length) break;
      if (text.charCodeAt(i) === delimiterCode) {
        i++;
        // A delimiter at the very end of the text still opens one last, empty field.
        if (i >= length) row.push(null);
        continue;
      }
    }
    if (i >= length) break;
    // Line end: CRLF, LF or a lone CR.
    i += text.charCodeAt(i) === CR && text.charCodeAt(i + 1) === LF ? 2 : 1;
    line++;
    pushRow(rows, lines, row, rowLine);
    row = [];
    // Empty lines hold no fields at all: skip them.
    while (i < length && (text.charCodeAt(i) === LF || text.charCodeAt(i) === CR)) {
      if (text.charCodeAt(i) === LF || text.charCodeAt(i + 1) !== LF) line++;
      i++;
    }
    rowLine = line;
  }
  if (row.length > 0) pushRow(rows, lines, row, rowLine);
  while (rows.length > 0 && rows[rows.length - 1].every((cell) => cell === null)) {
    rows.pop();
    lines.pop();
  }
  return { rows, lines, delimiter };
}

/** A field as a cell: null when empty or all whitespace. */
function toCell(raw: string): string | null {
  return raw.length === 0 || raw.trim() === "" ? null : raw;
}

function indexOrLength(text: string, search: string, from: number): number {
  const at = text.indexOf(search, from);
  return at < 0 ? text.length : at;
}

function isFieldEnd(code: number, delimiterCode: number): boolean {
  return code === delimiterCode || code === LF || code === CR;
}

/** Adds a row unless it is a line of nothing but whitespace. */
function pushRow(rows: (string | null)[][], lines: number[], row: (string | null)[], line: number): void {
  if (row.length === 1 && row[0] === null) return;
  rows.push(row);
  lines.push(line);
}

/** The commonest of comma, semicolon and tab outside quotes on the first line; comma on a tie. */
function detectDelimiter(text: string): string {
  let commas = 0;
  let semicolons = 0;
  let tabs = 0;
  let quoted = false;
  for (let i = 0; i < text.length; i++) {
    const c = text[i];
    if (c === '"') quoted = !quoted;
    else if (quoted) continue;
    else if (c === "\n" || c === "\r") break;
    else if (c === ",") commas++;
    else if (c === ";") semicolons++;
    else if (c === "\t") tabs++;
  }
  if (semicolons > commas && semicolons >= tabs) return ";";
  if (tabs > commas && tabs > semicolons) return "\t";
  return ",";
}

/**
 * The decimal mark of a file separated by semicolons or tabs: a comma unless
 * more cells read only with a decimal point ("1.5") than only with a decimal
 * comma ("1,5"). Cells that read either way ("1.234") are no evidence.
 * Comma-separated files always use a decimal point.
 */
export function decimalMarkOf(fields: CsvFields): "." | "," {
  if (fields.delimiter === ",") return ".";
  let onlyPoint = 0;
  let onlyComma = 0;
  for (const row of fields.rows) {
    for (const cell of row) {
      if (cell === null) continue;
      const point = readNumberText(cell, ".") !== undefined;
      // "0.512" or "13.25" reads with a decimal comma only by taking its point for a
      // thousands separator, which it cannot be: such a cell shows a decimal point.
      const comma = readNumberText(cell, ",") !== undefined && !pointCannotGroup(cell);
      if (point && !comma) onlyPoint++;
      else if (comma && !point) onlyComma++;
    }
  }
  return onlyPoint > onlyComma ? "." : ",";
}

/** A number with one point and no comma, where the point cannot separate thousands ("0.512", "13.25", "1234.5"). */
function pointCannotGroup(cell: string): boolean {
  const body = cell.replace(/[\s%+\-\u2212$€£¥₹₩₽₺₪₫₴₦฿]/g, "");
  return /^\d*\.\d+$/.test(body) && !/^[1-9]\d{0,2}\.\d{3}$/.test(body);
}

const DELIMITER_NAMES: Record<string, string> = { ",": "commas", ";": "semicolons", "\t": "tabs" };

/**
 * The grid of a comma-separated file whose data fields are all plain decimal numbers or blank
 * (the usual large export), read in one pass with each number parsed where it stands: no text
 * kept per cell, rows of numbers (unboxed doubles) instead of rows of text. Null for any other
 * file, which splitCsv reads: a header line with a quote over several lines, a blank name or a
 * lone carriage return; a data line with a quote, a lone carriage return, other text or another
 * number of fields than the header. The column rule reads a plain number cell as it reads the
 * same number written as plain text (one style, no notice), and the header line is split by
 * splitCsv itself, so the table is the one splitCsv's fields give.
 */
export function plainNumberGrid(text: string): { rows: (string | number | null)[][]; lines: number[]; delimiter: string } | null {
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  const length = text.length;
  const firstEnd = indexOrLength(text, "\n", 0);
  const headerText = text.slice(0, firstEnd > 0 && text.charCodeAt(firstEnd - 1) === CR ? firstEnd - 1 : firstEnd);
  if (detectDelimiter(text) !== "," || headerText.length === 0 || headerText.includes("\r")) return null;
  let header: (string | null)[];
  try {
    const split = splitCsv(headerText);
    if (split.rows.length !== 1 || split.lines[0] !== 1) return null;
    header = split.rows[0];
  } catch {
    return null;
  }
  if (header.some((name) => name === null)) return null;
  const width = header.length;
  const rows: (string | number | null)[][] = [header];
  const lines: number[] = [1];
  const nextQuote = indexOrLength(text, '"', firstEnd);
  let nextReturn = -1;
  let line = 2;
  let i = firstEnd + 1;
  // Empty lines hold no fields at all: skip them (as splitCsv does).
  const skipEmptyLines = (): void => {
    while (i < length && (text.charCodeAt(i) === LF || text.charCodeAt(i) === CR)) {
      if (text.charCodeAt(i) === LF || text.charCodeAt(i + 1) !== LF) line++;
      i++;
    }
  };
  skipEmptyLines();
  while (i < length) {
    const lineEnd = indexOrLength(text, "\n", i);
    if (nextQuote < lineEnd) return null;
    if (nextReturn < i) nextReturn = indexOrLength(text, "\r", i);
    if (nextReturn < lineEnd - 1) return null;
    const contentEnd = nextReturn === lineEnd - 1 ? lineEnd - 1 : lineEnd;
    // Allocated at its width: an array grown by push reserves about three times the room.
    const row = new Array<number | null>(width);
    let fields = 0;
    let start = i;
    for (;;) {
      const comma = text.indexOf(",", start);
      const end = comma < 0 || comma > contentEnd ? contentEnd : comma;
      const trimmed = text.slice(start, end).trim();
      let cell: number | null = null;
      if (trimmed !== "") {
        cell = plainNumberValue(trimmed, ".");
        if (!Number.isFinite(cell)) return null;
      }
      if (fields < width) row[fields] = cell;
      fields++;
      if (end === contentEnd) break;
      start = end + 1;
    }
    // A line of nothing but whitespace is no row (splitCsv's rule); other rows need every field.
    if (!(fields === 1 && row[0] === null)) {
      if (fields !== width) return null;
      rows.push(row);
      lines.push(line);
    }
    if (lineEnd >= length) break;
    i = lineEnd + 1;
    line++;
    skipEmptyLines();
  }
  while (rows.length > 1 && rows[rows.length - 1].every((cell) => cell === null)) {
    rows.pop();
    lines.pop();
  }
  return { rows, lines, delimiter: "," };
}

/** CSV text as a DataTable: fields split, the decimal mark chosen, the column rule applied. */
export function csvTable(text: string, where: string, choice: HeaderChoice = {}): DataTable {
  return csvTableOf({ text }, where, choice);
}

/**
 * csvTable for a caller that lets go of the text: `source.text` is emptied once the fields are
 * split, so that a large file's text (as large as the file) can be freed before the column
 * rule runs.
 */
export function csvTableOf(source: { text: string }, where: string, choice: HeaderChoice = {}): DataTable {
  // Large numeric files take the one-pass road when the header is the first line (the default).
  const plain = choice.headerRow === undefined ? plainNumberGrid(source.text) : null;
  const fields = plain ?? splitCsv(source.text);
  source.text = "";
  if (fields.rows.length === 0) throw new SkeinError("bad-input", `${where} holds no data; it needs a header row and rows of data.`);
  const decimal = plain ? "." : decimalMarkOf(fields as CsvFields);
  const table = tableFromGrid(
    { rows: fields.rows, rowNumbers: fields.lines, rowWord: "line", strictWidth: true, rule: { decimalComma: decimal === "," }, where },
    choice,
  );
  if (fields.delimiter !== ",") {
    const mark = decimal === "," ? "a comma in a number is its decimal mark (1,5 is 1.5)" : "numbers use a decimal point";
    table.notices.unshift(`Fields are separated by ${DELIMITER_NAMES[fields.delimiter]}; ${mark}.`);
  }
  return table;
}
