import { SkeinError } from "../engine/errors";

/**
 * Plain decimal numbers: optional sign, digits with an optional point (or a
 * point and digits), optional exponent. Nothing else (no thousands
 * separators, currency signs, percentages or words such as "NaN"), so text
 * that merely contains digits stays text and its row is reported.
 */
const DECIMAL_POINT_NUMBER = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;
/** The same with a decimal comma, the convention of files delimited by semicolons. */
const DECIMAL_COMMA_NUMBER = /^[+-]?(?:\d+,?\d*|,\d+)(?:[eE][+-]?\d+)?$/;

const QUOTE = 34; // "
const CR = 13;
const LF = 10;

/**
 * Parses CSV text as RFC 4180 describes it (quoted fields, "" for a quote
 * inside them, CRLF or LF line ends), leniently: a quote inside an unquoted
 * field is kept as a character. A byte-order mark is dropped. The delimiter
 * is the one of comma, semicolon or tab that occurs most often in the first
 * line (comma on a tie); with a semicolon, numbers may use a decimal comma.
 *
 * Cells that are plain decimal numbers become numbers; empty cells become
 * null; other text stays text. Empty lines, and rows of empty cells at the
 * end of the file (spreadsheet exports often leave some), are dropped.
 */
export function parseCsv(text: string): unknown[][] {
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  const delimiter = detectDelimiter(text);
  const delimiterCode = delimiter.charCodeAt(0);
  const numberPattern = delimiter === ";" ? DECIMAL_COMMA_NUMBER : DECIMAL_POINT_NUMBER;
  const toCell = (raw: string): unknown => {
    const trimmed = raw.trim();
    if (trimmed === "") return null;
    if (numberPattern.test(trimmed)) return Number(delimiter === ";" ? trimmed.replace(",", ".") : trimmed);
    return raw;
  };

  const rows: unknown[][] = [];
  let row: unknown[] = [];
  let i = 0;
  const length = text.length;
  let line = 1;
  while (i < length) {
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
    const code = text.charCodeAt(i);
    if (code === delimiterCode) {
      i++;
      // A delimiter at the very end of the text still opens one last, empty field.
      if (i >= length) row.push(null);
      continue;
    }
    // Line end: CRLF, LF or a lone CR.
    i += code === CR && text.charCodeAt(i + 1) === LF ? 2 : 1;
    line++;
    pushRow(rows, row);
    row = [];
    // Empty lines hold no fields at all: skip them.
    while (i < length && (text.charCodeAt(i) === LF || text.charCodeAt(i) === CR)) {
      if (text.charCodeAt(i) === LF) line++;
      i++;
    }
  }
  if (row.length > 0) pushRow(rows, row);
  while (rows.length > 0 && rows[rows.length - 1].every((cell) => cell === null)) rows.pop();
  return rows;
}

function isFieldEnd(code: number, delimiterCode: number): boolean {
  return code === delimiterCode || code === LF || code === CR;
}

/** Adds a row unless it is a line of nothing but whitespace. */
function pushRow(rows: unknown[][], row: unknown[]): void {
  if (row.length === 1 && row[0] === null) return;
  rows.push(row);
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
