import { SkeinError } from "../engine/errors";
import { tableFromGrid, tableFromNumberColumns, type DataTable, type HeaderChoice } from "./dataTable";
import { decodeText, type DecodedText } from "./decodeText";
import { noNumberLines, numberLinesOf, numberLinesRead, readNumberLines, rowsEstimate } from "./plainNumberLines";
import { readNumberText } from "./numberText";

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
  const ahead: LookAhead = { quote: -1, carriageReturn: -1 };
  while (i < length) {
    // Whether the whole line was split at once and i stands at its end.
    let atLineEnd = false;
    if (row.length === 0) {
      const contentEnd = plainLineEnd(text, i, ahead);
      if (contentEnd >= 0) {
        const fields = text.slice(i, contentEnd).split(delimiter);
        for (let f = 0; f < fields.length; f++) row.push(toCell(fields[f]));
        i = contentEnd;
        atLineEnd = true;
      }
    }
    if (!atLineEnd) {
      let raw: string;
      if (text.charCodeAt(i) === QUOTE) {
        const quoted = quotedField(text, i, line);
        line += lineFeedsIn(quoted.value);
        // Anything between the closing quote and the delimiter is kept as it stands.
        i = fieldEnd(text, quoted.end, delimiterCode);
        raw = quoted.value + text.slice(quoted.end, i);
      } else {
        const start = i;
        i = fieldEnd(text, i, delimiterCode);
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
  dropTrailingEmptyRows(rows, lines);
  return { rows, lines, delimiter };
}

/** The next quote and the next carriage return at or after where splitCsv stands (the text's length when none). */
interface LookAhead {
  quote: number;
  carriageReturn: number;
}

/**
 * Where the content of the line starting at i ends (before its line feed, or its CRLF's CR)
 * when the line holds no quote and no other carriage return, so that the native String.split
 * can split it whole, the common case of large files; −1 otherwise. `ahead` keeps the next
 * quote and carriage return found, so that each is searched for once, not once a line.
 */
function plainLineEnd(text: string, i: number, ahead: LookAhead): number {
  if (ahead.quote < i) ahead.quote = indexOrLength(text, '"', i);
  if (ahead.carriageReturn < i) ahead.carriageReturn = indexOrLength(text, "\r", i);
  const lineEnd = indexOrLength(text, "\n", i);
  if (ahead.quote < lineEnd || ahead.carriageReturn < lineEnd - 1) return -1;
  // Only a CRLF's CR may stand in the line, at its end.
  return ahead.carriageReturn === lineEnd - 1 ? lineEnd - 1 : lineEnd;
}

/**
 * The quoted field whose opening quote is at `open`: its text ("" read as one quote) and the
 * index just past its closing quote, the next quote not followed by another quote.
 */
function quotedField(text: string, open: number, startLine: number): { value: string; end: number } {
  let value = "";
  let from = open + 1;
  for (;;) {
    const close = text.indexOf('"', from);
    if (close < 0) {
      throw new SkeinError("bad-input", `A quoted field that starts on line ${startLine} of the CSV text never ends; add the closing quote (") or remove the opening one.`);
    }
    value += text.slice(from, close);
    if (text.charCodeAt(close + 1) !== QUOTE) return { value, end: close + 1 };
    value += '"';
    from = close + 2;
  }
}

function lineFeedsIn(value: string): number {
  let count = 0;
  for (let k = 0; k < value.length; k++) if (value.charCodeAt(k) === LF) count++;
  return count;
}

/** The end of the field running from i: the next delimiter or line end, or the end of the text. */
function fieldEnd(text: string, i: number, delimiterCode: number): number {
  const length = text.length;
  while (i < length && !isFieldEnd(text.charCodeAt(i), delimiterCode)) i++;
  return i;
}

/** Drops the rows of empty cells at the end, which spreadsheet exports often leave. */
function dropTrailingEmptyRows(rows: (string | null)[][], lines: number[]): void {
  while (rows.length > 0 && rows[rows.length - 1].every((cell) => cell === null)) {
    rows.pop();
    lines.pop();
  }
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
 * The header of a comma-separated file whose data lines readNumberLines may read: its first
 * line (`headerText`, without the line end) split by splitCsv into names, none blank. Null for
 * any other first line (another delimiter, a quote left open, a lone carriage return, a blank
 * name), which the field splitter reads.
 */
function plainNumberHeader(headerText: string): string[] | null {
  if (detectDelimiter(headerText) !== "," || headerText.length === 0 || headerText.includes("\r")) return null;
  try {
    const split = splitCsv(headerText);
    if (split.rows.length !== 1 || split.lines[0] !== 1 || split.rows[0].some((name) => name === null)) return null;
    return split.rows[0] as string[];
  } catch {
    return null;
  }
}

/** Reads the next bytes of a file into buffer[offset, offset + length); resolves to how many it read, 0 at the end. */
export type ReadMore = (buffer: Uint8Array, offset: number, length: number) => Promise<number>;

/** Bytes plainNumberCsv reads at a time: a piece of the file, never the whole. */
const PIECE_BYTES = 1 << 20;

const UTF16_MARKS = [[0xff, 0xfe], [0xfe, 0xff]];

/**
 * A comma-separated file of plain numbers (the usual large export) as a DataTable, read piece by
 * piece through `readMore` (the file's `size` bytes from its start) straight into columns of
 * doubles (readNumberLines): neither the file's bytes nor its text is ever held whole. Only the
 * header line is decoded, in the encoding the whole file would be read in (its data lines are
 * ASCII, the same in every encoding decodeText knows). The same table as the field splitter
 * gives (tableFromNumberColumns), or null for any other file, found at its header or at the
 * first line that is no line of plain numbers: the caller then reads it whole.
 */
export async function plainNumberCsv(
  readMore: ReadMore, size: number, where: string, pieceBytes = PIECE_BYTES,
): Promise<{ table: DataTable; encoding: Omit<DecodedText, "text"> } | null> {
  let buffer = new Uint8Array(pieceBytes);
  let filled = 0;
  let ended = false;
  const fill = async (): Promise<void> => {
    while (filled < buffer.length && !ended) {
      const got = await readMore(buffer, filled, buffer.length - filled);
      if (got === 0) ended = true;
      filled += got;
    }
  };
  // A line longer than the buffer (a header, a wide row) makes the buffer larger.
  const grow = (): void => {
    const larger = new Uint8Array(2 * buffer.length);
    larger.set(buffer.subarray(0, filled));
    buffer = larger;
  };
  await fill();
  let headerEnd = buffer.subarray(0, filled).indexOf(LF);
  while (headerEnd < 0 && !ended) {
    grow();
    await fill();
    headerEnd = buffer.subarray(0, filled).indexOf(LF);
  }
  if (headerEnd < 0) headerEnd = filled;
  const head = plainNumberHead(buffer.subarray(0, headerEnd));
  if (head === null) return null;
  let start = headerEnd + 1;
  let firstEnd = buffer.subarray(0, filled).indexOf(LF, start);
  if (firstEnd < 0) firstEnd = filled;
  const read = noNumberLines(head.names.length, rowsEstimate(size - start, firstEnd - start, head.names.length), 2);
  for (;;) {
    // The lines complete in the buffer: up to its last line feed, or all at the end of the file.
    const cut = ended ? filled : buffer.subarray(0, filled).lastIndexOf(LF) + 1;
    if (cut > start) {
      if (!readNumberLines(read, buffer, start, cut)) return null;
      start = cut;
    }
    if (ended) break;
    // The unfinished line moves to the front, the next piece is read behind it.
    buffer.copyWithin(0, start, filled);
    filled -= start;
    start = 0;
    if (filled === buffer.length) grow();
    await fill();
  }
  const lines = numberLinesRead(read);
  const table = tableFromNumberColumns(head.names, lines.columns, lines.lineNumbers, where);
  return table && { table, encoding: head.encoding };
}

/**
 * The names of a header line of bytes (line end excluded) over lines of plain numbers, decoded,
 * with the encoding; null when the file is UTF-16 or holds a zero byte in its header (it may be
 * unmarked UTF-16: decoded as a whole) or when plainNumberHeader refuses the line.
 */
function plainNumberHead(line: Uint8Array): { names: string[]; encoding: Omit<DecodedText, "text"> } | null {
  if (UTF16_MARKS.some(([a, b]) => line[0] === a && line[1] === b)) return null;
  const content = line.length > 0 && line[line.length - 1] === CR ? line.subarray(0, line.length - 1) : line;
  if (content.includes(0)) return null;
  const decoded = decodeText(content);
  const names = plainNumberHeader(decoded.text.charCodeAt(0) === 0xfeff ? decoded.text.slice(1) : decoded.text);
  return names && { names, encoding: { encoding: decoded.encoding, noteworthy: decoded.noteworthy } };
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
  if (choice.headerRow === undefined) {
    const text = source.text.charCodeAt(0) === 0xfeff ? source.text.slice(1) : source.text;
    const headerEnd = indexOrLength(text, "\n", 0);
    const headerText = text.slice(0, headerEnd > 0 && text.charCodeAt(headerEnd - 1) === CR ? headerEnd - 1 : headerEnd);
    const names = plainNumberHeader(headerText);
    // Text beyond ASCII in a data line is no plain number: encoded as UTF-8, its bytes stop the road.
    const lines = names && numberLinesOf(new TextEncoder().encode(text.slice(headerEnd + 1)), names.length, 2);
    const plain = names && lines && tableFromNumberColumns(names, lines.columns, lines.lineNumbers, where);
    if (plain) {
      source.text = "";
      return plain;
    }
  }
  return csvTableOfFields(source, where, choice);
}

/** csvTableOf by the field splitter alone, whatever the file holds (the one-pass road's reference). */
export function csvTableOfFields(source: { text: string }, where: string, choice: HeaderChoice = {}): DataTable {
  const fields = splitCsv(source.text);
  source.text = "";
  if (fields.rows.length === 0) throw new SkeinError("bad-input", `${where} holds no data; it needs a header row and rows of data.`);
  const decimal = decimalMarkOf(fields);
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
