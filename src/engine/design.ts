import { shareableArray } from "./helperThread";
import { SkeinError } from "./errors";
import { categoryNotice, chooseLevels, encodedNames, encodedWidth, isCategoryColumn, levelOf, type PredictorColumn } from "./categoryLevels";
import { readNumberTextCells, type Cell } from "../io/columnTypes";
import { readNumberText } from "../io/numberText";

/** A data row left out of the fit, and why. */
export interface SkippedRow {
  /** 0-based index among the input data rows (after any header row). */
  row: number;
  /** Name of the first column whose cell made the row unusable. */
  column: string;
  /** One of the SKIP_REASONS. */
  reason: string;
}

/** The numbers a fit works on: usable rows only, flat and row-major. */
export interface Design {
  /** Response, length n, used rows only. */
  y: Float64Array;
  /** Predictors, n*p row-major; no intercept column (see designMatrix). A category column contributes one indicator column per non-reference level. */
  x: Float64Array;
  n: number;
  p: number;
  yName: string;
  /** One name per design column: a numeric column's name, or "Region = South" for an indicator. */
  predictorNames: string[];
  /** The input's predictor columns and how each was encoded (what new rows must match). */
  columns: PredictorColumn[];
  /** Plain-language notes on what was done to the input (category columns made into indicators). */
  notices: string[];
  hasHeaderRow: boolean;
  /** Number of data rows in the input, excluding any header row. */
  inputRows: number;
  /** For each used row, its 0-based input data-row index. */
  rowIndex: Int32Array;
  skipped: SkippedRow[];
}

export interface DesignOptions {
  /**
   * true: the first row holds column names; false: it holds data; "auto"
   * (default): it holds names when the y cell and every x cell are text.
   */
  headers?: boolean | "auto";
  /**
   * Fewest usable rows accepted; default the larger of p + 2 (an intercept, p slopes and one
   * degree of freedom for the noise) and components × (coefficients + 1).
   */
  minRows?: number;
  /** The number of components the rows are for (default 1); named in the too-few-rows message. */
  components?: number;
  /**
   * Whether the fit will include an intercept (default true). With one, a
   * predictor that is a shifted multiple of another (x_b = a + c·x_a, such as
   * a year and a row counter) is as indistinguishable as an exact multiple,
   * and is reported the same way.
   */
  intercept?: boolean;
  /**
   * 0-based data rows (below any header row) to leave out of the fit, such as stray rows the
   * user chose to set aside; each is listed among the skipped rows with reason "left out".
   */
  leaveOut?: ReadonlySet<number>;
  /**
   * Per x column, whether it is a category column (true) or a column of numbers whose other
   * cells skip their rows (false), for a caller that has already decided (a file reader);
   * absent: decided here by isCategoryColumn.
   */
  categories?: readonly boolean[];
  /**
   * Whether text cells that read as numbers ("12.3%", "1,234.5", "$3.50", a number stored as
   * text) are read as numbers by the file readers' column rule, with a notice (default true);
   * false for a caller whose reader has already applied that rule.
   */
  numberText?: boolean;
}

/** Why a cell makes its row unusable. */
export const SKIP_REASONS = {
  blank: "blank",
  text: "text",
  logical: "logical value",
  error: "error value",
  date: "date value",
  leftOut: "left out",
} as const;

/**
 * Worksheet error values as they appear when a reader turns them into text
 * (CSV exports, XLSX error cells). They are skipped as errors, not as text,
 * and never taken for column names.
 */
const ERROR_TEXTS = new Set([
  "#NULL!", "#DIV/0!", "#VALUE!", "#REF!", "#NAME?", "#NUM!", "#N/A", "#GETTING_DATA",
  "#SPILL!", "#CALC!", "#FIELD!", "#BLOCKED!", "#CONNECT!", "#BUSY!", "#UNKNOWN!", "#EXTERNAL!",
]);

/**
 * Columns whose values lie within this fraction of the column's largest
 * magnitude of an exact multiple of another column are reported as
 * duplicates: far above rounding noise of doubles (about 1e-16), far below any
 * real measurement difference.
 */
const MULTIPLE_TOLERANCE = 1e-10;

const CELL_OK = 0;
const CELL_NON_FINITE = 1;

/**
 * Classifies one cell: CELL_OK for a finite number, CELL_NON_FINITE for
 * Infinity/NaN, otherwise the skip reason.
 *
 * Numeric-looking text is read before this (readNumberText in buildDesign), by the
 * file readers' column rule and with a notice naming the column, so a workbook's
 * numbers stored as text give the same fit through a worksheet function as through
 * `skein fit`; what is left here as text is text.
 *
 * Older Excel builds pass 0 for a blank cell in a range argument. Such a 0
 * cannot be told apart from a typed 0, so it is used as data; users of those
 * builds should fill blanks with text such as "NA" to have the rows skipped.
 */
function classifyCell(value: unknown): number | string {
  switch (typeof value) {
    case "number":
      return Number.isFinite(value) ? CELL_OK : CELL_NON_FINITE;
    case "string": {
      const trimmed = value.trim();
      if (trimmed === "") return SKIP_REASONS.blank;
      return ERROR_TEXTS.has(trimmed.toUpperCase()) ? SKIP_REASONS.error : SKIP_REASONS.text;
    }
    case "boolean":
      return SKIP_REASONS.logical;
    case "undefined":
      return SKIP_REASONS.blank;
    case "object":
      if (value === null) return SKIP_REASONS.blank;
      if (value instanceof Date) return SKIP_REASONS.date;
      // Hosts deliver worksheet errors as objects (for example a custom
      // function's error value); any other object is no number either.
      return SKIP_REASONS.error;
    default:
      return SKIP_REASONS.text;
  }
}

/** A cell that can serve as a column name: non-blank text that is not an error value or a number written as text. */
function isNameText(value: unknown): value is string {
  return typeof value === "string" && classifyCell(value) === SKIP_REASONS.text && readNumberText(value, ".") === undefined;
}

function checkRange(range: unknown, label: string): unknown[][] {
  if (!Array.isArray(range) || range.length === 0) {
    throw new SkeinError("bad-input", `The ${label} range is empty; select at least one cell of data.`);
  }
  for (let i = 0; i < range.length; i++) {
    if (!Array.isArray(range[i])) {
      throw new SkeinError("bad-input", `The ${label} range must be a table of rows (row ${i + 1} is not a row); pass a worksheet range.`);
    }
  }
  return range as unknown[][];
}

/**
 * Turns the y and x ranges (as a worksheet range argument or a file reader
 * delivers them) into a Design of usable rows. Rows with a blank, text,
 * logical or error cell in any used column are skipped and listed; the
 * remaining numbers are checked for problems no fit can overcome (constant or
 * duplicated predictors, too few rows), each reported as a SkeinError
 * "bad-input" whose message says how to fix it.
 */
export function buildDesign(y: unknown[][], x: unknown[][], options: DesignOptions = {}): Design {
  let yRows = checkRange(y, "y");
  let xRows = checkRange(x, "x");
  const p = checkShapes(yRows, xRows);
  const header = headerOf(yRows, xRows, options.headers ?? "auto");
  const firstDataRow = header.hasHeaderRow ? 1 : 0;
  const inputRows = yRows.length - firstDataRow;
  if (inputRows === 0) {
    throw new SkeinError("bad-input", "The ranges hold only a header row; include the data rows below it.");
  }
  const notices: string[] = [];
  if (options.numberText !== false) {
    yRows = readNumberTextColumns(yRows, firstDataRow, [header.yName], notices);
    xRows = readNumberTextColumns(xRows, firstDataRow, header.columnNames, notices);
  }
  // Category columns: mostly text or logical values (categoryLevels.ts).
  const isCategory: boolean[] = [];
  for (let j = 0; j < p; j++) isCategory.push(options.categories?.[j] ?? isCategoryColumn(xRows, firstDataRow, j, (text) => ERROR_TEXTS.has(text.toUpperCase())));

  const read = readRows(yRows, xRows, header, isCategory, options.leaveOut);
  const columns = encodeColumns(header.columnNames, isCategory, read, options.intercept === false, notices);
  const xValues = packPredictors(read, columns, isCategory.includes(true));
  const { n, rowIndex, skipped } = read;
  return finishDesign({ y: read.y, x: xValues, n, yName: header.yName, columns, notices, hasHeaderRow: header.hasHeaderRow, inputRows, rowIndex, skipped }, options);
}

/** Checks that y is one column and x a table of the same rows, all of one width; returns that width. */
function checkShapes(yRows: unknown[][], xRows: unknown[][]): number {
  for (let i = 0; i < yRows.length; i++) {
    if (yRows[i].length !== 1) {
      if (yRows[i].length === 0) throw new SkeinError("bad-input", `Row ${i + 1} of the y range is empty; y must be a single column of numbers.`);
      throw new SkeinError("bad-input", `The y range has ${yRows[i].length} columns; y must be a single column. Put the predictors in the x range.`);
    }
  }
  if (yRows.length !== xRows.length) {
    throw new SkeinError("bad-input", `The y range has ${yRows.length} rows but the x range has ${xRows.length}; select y and x over the same rows.`);
  }
  const p = xRows[0].length;
  if (p === 0) throw new SkeinError("bad-input", "The x range has no columns; select at least one predictor column.");
  for (let i = 1; i < xRows.length; i++) {
    if (xRows[i].length !== p) {
      throw new SkeinError("bad-input", `Row ${i + 1} of the x range has ${xRows[i].length} cells but row 1 has ${p}; every row of x must have the same number of columns.`);
    }
  }
  return p;
}

/** Whether the first row holds names, and the names of y and the x columns. */
interface Header {
  hasHeaderRow: boolean;
  yName: string;
  columnNames: string[];
}

/**
 * The header of the ranges: with "auto", the first row is taken for names only when every
 * cell of it could be a name, so a first row holding a number stays data.
 */
function headerOf(yRows: unknown[][], xRows: unknown[][], setting: boolean | "auto"): Header {
  const hasHeaderRow = setting === "auto"
    ? isNameText(yRows[0][0]) && xRows[0].every(isNameText)
    : setting;
  const { yName, columnNames } = columnNamesOf(hasHeaderRow ? yRows[0][0] : undefined, xRows[0].map((cell) => (hasHeaderRow ? cell : undefined)));
  return { hasHeaderRow, yName, columnNames };
}

/**
 * The data rows as read, the n usable ones packed at the front of arrays sized for every input
 * row (one pass, no copy). A category cell is held as its level key, with its label as first
 * seen, until the levels of the used rows are known.
 */
interface RowsRead {
  n: number;
  y: Float64Array;
  /** inputRows × p, row-major; the number columns only (category cells are in levelKeys). */
  rawX: Float64Array;
  levelKeys: string[][];
  levelLabels: Map<string, string>[];
  rowIndex: Int32Array;
  skipped: SkippedRow[];
}

/**
 * Reads every data row, listing a skipped row under its first unusable cell (y before x); a row
 * the caller leaves out is listed as left out only when its cells were usable. A non-finite
 * number stops the whole design: it is a fault in the sheet to fix, not a cell to skip.
 */
function readRows(yRows: unknown[][], xRows: unknown[][], header: Header, isCategory: readonly boolean[], leaveOut: ReadonlySet<number> | undefined): RowsRead {
  const { hasHeaderRow, yName, columnNames } = header;
  const firstDataRow = hasHeaderRow ? 1 : 0;
  const inputRows = yRows.length - firstDataRow;
  const p = isCategory.length;
  // Written in place for every input row; a skipped row is overwritten by the next one.
  // In shared memory when a helper thread is installed (helperThread.ts): the fit reads them in place.
  const yValues = shareableArray(inputRows);
  const rawX = shareableArray(inputRows * p);
  const levelKeys: string[][] = isCategory.map(() => []);
  const levelLabels: Map<string, string>[] = isCategory.map(() => new Map());
  const rowIndex = new Int32Array(inputRows);
  const skipped: SkippedRow[] = [];
  let n = 0;
  for (let r = 0; r < inputRows; r++) {
    const yRow = yRows[r + firstDataRow];
    const xRow = xRows[r + firstDataRow];
    let reason: string | undefined;
    let column = "";
    const yCell = yRow[0];
    const yClass = classifyCell(yCell);
    if (yClass === CELL_OK) {
      yValues[n] = yCell as number;
    } else {
      if (yClass === CELL_NON_FINITE) throw nonFinite(yName, yCell as number, r, hasHeaderRow);
      reason = yClass as string;
      column = yName;
    }
    const offset = n * p;
    for (let j = 0; j < p; j++) {
      const cell = xRow[j];
      const cellClass = classifyCell(cell);
      if (cellClass === CELL_OK && !isCategory[j]) {
        rawX[offset + j] = cell as number;
      } else if (cellClass === CELL_NON_FINITE) {
        throw nonFinite(columnNames[j], cell as number, r, hasHeaderRow);
      } else if (isCategory[j] && (cellClass === CELL_OK || cellClass === SKIP_REASONS.text || cellClass === SKIP_REASONS.logical)) {
        const [key, label] = levelOf(cell) as [string, string];
        levelKeys[j][n] = key;
        if (!levelLabels[j].has(key)) levelLabels[j].set(key, label);
      } else if (reason === undefined) {
        reason = cellClass as string;
        column = columnNames[j];
      }
    }
    if (reason === undefined && leaveOut?.has(r)) {
      reason = SKIP_REASONS.leftOut;
      column = yName;
    }
    if (reason === undefined) {
      rowIndex[n] = r;
      n++;
    } else {
      skipped.push({ row: r, column, reason });
    }
  }
  return { n, y: yValues, rawX, levelKeys, levelLabels, rowIndex, skipped };
}

/**
 * How each x column enters the design, with a notice (added to `notices`) per category column
 * made into indicators. The levels come from the used rows only, so a level seen only in
 * skipped rows gets no all-zero indicator. Without an intercept the first category column
 * keeps an indicator for every level: together they stand in for the intercept.
 */
function encodeColumns(columnNames: readonly string[], isCategory: readonly boolean[], read: RowsRead, withoutIntercept: boolean, notices: string[]): PredictorColumn[] {
  const { n, levelKeys, levelLabels } = read;
  const columns: PredictorColumn[] = [];
  let everyLevelUsed = withoutIntercept;
  for (let j = 0; j < isCategory.length; j++) {
    if (!isCategory[j]) {
      columns.push({ kind: "number", name: columnNames[j] });
      continue;
    }
    const keys = levelKeys[j].slice(0, n);
    // Labels as first seen among the used rows.
    const labels = new Map<string, string>();
    for (const key of keys) if (!labels.has(key)) labels.set(key, levelLabels[j].get(key) as string);
    // No used rows: chooseLevels would call the column constant; the row count is the fault (finishDesign).
    const encoded = n === 0 ? null : chooseLevels(columnNames[j], keys, labels, everyLevelUsed);
    if (encoded === null) {
      columns.push({ kind: "number", name: columnNames[j] });
      continue;
    }
    everyLevelUsed = false;
    columns.push(encoded);
    notices.push(categoryNotice(encoded));
  }
  return columns;
}

/**
 * The design's predictor block, n rows of the encoded width: a category column's key becomes
 * its 0/1 indicators. Without category columns the values read are already the design (the
 * common case: no copy).
 */
function packPredictors(read: RowsRead, columns: readonly PredictorColumn[], anyCategory: boolean): Float64Array {
  const { n, rawX, levelKeys } = read;
  const p = columns.length;
  const width = encodedWidth(columns);
  const xValues = anyCategory ? shareableArray(n * width) : rawX.subarray(0, n * p);
  for (let i = 0; anyCategory && i < n; i++) {
    let at = i * width;
    for (let j = 0; j < p; j++) {
      const encoding = columns[j];
      if (encoding.kind === "number") {
        xValues[at++] = rawX[i * p + j];
      } else {
        const key = levelKeys[j][i];
        for (const level of encoding.levels) xValues[at++] = level.toLowerCase() === key ? 1 : 0;
      }
    }
  }
  return xValues;
}

/**
 * The Design of a header row of names over columns of numbers, NaN for a blank cell (a file of
 * plain numbers read column by column): the Design buildDesign gives for the same cells as
 * ranges with that header row (no category columns, no number text), with no array per row.
 * Rows with a blank are skipped and listed as there.
 */
export function buildNumberDesign(
  y: { name: unknown; values: Float64Array },
  x: readonly { name: unknown; values: Float64Array }[],
  options: Omit<DesignOptions, "headers" | "categories" | "numberText"> = {},
): Design {
  const p = x.length;
  if (p === 0) throw new SkeinError("bad-input", "The x range has no columns; select at least one predictor column.");
  const inputRows = y.values.length;
  if (inputRows === 0) throw new SkeinError("bad-input", "The ranges hold only a header row; include the data rows below it.");
  const { yName, columnNames } = columnNamesOf(y.name, x.map((column) => column.name));
  const xColumns = x.map((column) => column.values);
  // Written in place for every input row; a skipped row is overwritten by the next one.
  const yValues = shareableArray(inputRows);
  const xValues = shareableArray(inputRows * p);
  const rowIndex = new Int32Array(inputRows);
  const skipped: SkippedRow[] = [];
  let n = 0;
  for (let r = 0; r < inputRows; r++) {
    const yValue = y.values[r];
    let column = Number.isNaN(yValue) ? yName : undefined;
    yValues[n] = yValue;
    for (let j = 0, at = n * p; j < p; j++, at++) {
      const value = xColumns[j][r];
      if (Number.isNaN(value)) column ??= columnNames[j];
      xValues[at] = value;
    }
    if (column !== undefined) skipped.push({ row: r, column, reason: SKIP_REASONS.blank });
    else if (options.leaveOut?.has(r)) skipped.push({ row: r, column: yName, reason: SKIP_REASONS.leftOut });
    else rowIndex[n++] = r;
  }
  const columns: PredictorColumn[] = columnNames.map((name) => ({ kind: "number", name }));
  return finishDesign({ y: yValues, x: xValues.subarray(0, n * p), n, yName, columns, notices: [], hasHeaderRow: true, inputRows, rowIndex, skipped }, options);
}

/** The y name and x column names of header cells: name text trimmed, else "y" and "x1", "x2", ... (undefined: no header row). */
function columnNamesOf(yCell: unknown, xCells: readonly unknown[]): { yName: string; columnNames: string[] } {
  return {
    yName: isNameText(yCell) ? yCell.trim() : "y",
    columnNames: xCells.map((cell, j) => (isNameText(cell) ? cell.trim() : `x${j + 1}`)),
  };
}

/**
 * A Design from the usable rows packed at the front of `y`, `x` (n rows of the encoded width)
 * and `rowIndex`: checked for enough rows and for predictors no fit can tell apart, each array
 * cut to its n rows.
 */
function finishDesign(
  parts: Omit<Design, "p" | "predictorNames"> & { x: Float64Array },
  options: Pick<DesignOptions, "minRows" | "components" | "intercept">,
): Design {
  const { n, columns, skipped } = parts;
  const width = encodedWidth(columns);
  const components = options.components ?? 1;
  const coefficients = width + (options.intercept === false ? 0 : 1);
  const minRows = options.minRows ?? Math.max(width + 2, components * (coefficients + 1));
  if (n < minRows) throw tooFewRows(n, minRows, width, skipped, components, coefficients);
  const design: Design = {
    y: cut(parts.y, n),
    x: cut(parts.x, n * width),
    n,
    p: width,
    yName: parts.yName,
    predictorNames: encodedNames(columns),
    columns,
    notices: parts.notices,
    hasHeaderRow: parts.hasHeaderRow,
    inputRows: parts.inputRows,
    rowIndex: cut(parts.rowIndex, n),
    skipped,
  };
  checkPredictors(design, options.intercept ?? true);
  return design;
}

/** The first `length` values: the array itself when it holds just those, else a copy of them (its larger buffer let go). */
function cut<T extends Float64Array | Int32Array>(values: T, length: number): T {
  return values.length === length && values.byteOffset === 0 && values.buffer.byteLength === values.byteLength ? values : (values.slice(0, length) as T);
}

/**
 * The rows with each column's number text read as numbers (readNumberTextCells, the file
 * readers' rule), copied only when a column changed; the notices say what was read, in the
 * command line's words ("Read as numbers: Share (percent, 12.3% read as 0.123).").
 */
function readNumberTextColumns(rows: unknown[][], firstDataRow: number, names: readonly string[], notices: string[]): unknown[][] {
  const converted: string[] = [];
  let result = rows;
  for (let j = 0; j < names.length; j++) {
    let anyText = false;
    for (let r = firstDataRow; r < rows.length && !anyText; r++) anyText = typeof rows[r][j] === "string";
    if (!anyText) continue;
    const values = rows.slice(firstDataRow).map((row) => row[j] as Cell);
    const read = readNumberTextCells(names[j], values);
    if (read.notice) notices.push(read.notice);
    if (read.converted === undefined) continue;
    converted.push(`${names[j]} (${read.converted})`);
    if (result === rows) result = rows.map((row) => row.slice());
    values.forEach((value, i) => (result[firstDataRow + i][j] = value));
  }
  if (converted.length > 0) notices.push(`Read as numbers: ${converted.join(", ")}.`);
  return result;
}

function nonFinite(column: string, value: number, row: number, hasHeaderRow: boolean): SkeinError {
  const where = hasHeaderRow ? `data row ${row + 1} (below the header)` : `row ${row + 1}`;
  return new SkeinError("bad-input", `Column ${column} holds ${value} in ${where}; only finite numbers can be fitted. Replace it with a number or leave the cell blank to skip the row.`);
}

function tooFewRows(usable: number, needed: number, p: number, skipped: SkippedRow[], components: number, coefficients: number): SkeinError {
  let message = `Only ${usable} usable row${usable === 1 ? "" : "s"}, but at least ${needed} are needed for ${p} predictor${p === 1 ? "" : "s"}`;
  if (components > 1) message += ` and K = ${components} components (each needs one more row than its ${coefficients} coefficient${coefficients === 1 ? "" : "s"})`;
  if (skipped.length > 0) {
    // The most common (reason, column) pair points at the cause to fix.
    const counts = new Map<string, number>();
    let commonest = "";
    let commonestCount = 0;
    for (const s of skipped) {
      const key = `${s.reason} in column ${s.column}`;
      const count = (counts.get(key) ?? 0) + 1;
      counts.set(key, count);
      if (count > commonestCount) {
        commonest = key;
        commonestCount = count;
      }
    }
    message += `; ${skipped.length} row${skipped.length === 1 ? " was" : "s were"} skipped, most often for ${commonest} (${commonestCount} row${commonestCount === 1 ? "" : "s"}). Fill or fix those cells so they hold numbers, or use fewer ${components > 1 ? "components or " : ""}predictors.`;
  } else {
    message += components > 1 ? `. Add rows, or use fewer components or predictors.` : ". Add rows or use fewer predictors.";
  }
  return new SkeinError("bad-input", message);
}

/**
 * Rejects a constant response and predictors that carry no information of
 * their own: a constant (the intercept already plays that part) or an exact
 * multiple of another predictor, shifted or not when there is an intercept
 * (their coefficients cannot be told apart).
 */
function checkPredictors(design: Design, intercept: boolean): void {
  const { x, y, n, p, predictorNames } = design;
  let yConstant = true;
  for (let i = 1; i < n && yConstant; i++) yConstant = y[i] === y[0];
  if (yConstant) {
    throw new SkeinError("bad-input", `The outcome ${design.yName} has the same value (${y[0]}) in every used row; there is nothing to fit. Check that the right column was chosen as y.`);
  }
  const largest = new Float64Array(p);
  const rowOfMin = new Int32Array(p);
  const rowOfMax = new Int32Array(p);
  for (let j = 0; j < p; j++) {
    let big = 0;
    let min = x[j];
    let max = x[j];
    // Stride p walks down column j of the row-major block.
    for (let i = 0, k = j; i < n; i++, k += p) {
      const v = x[k];
      if (v < min) {
        min = v;
        rowOfMin[j] = i;
      } else if (v > max) {
        max = v;
        rowOfMax[j] = i;
      }
      const magnitude = Math.abs(v);
      if (magnitude > big) big = magnitude;
    }
    if (min === max) {
      throw new SkeinError("bad-input", `Predictor ${predictorNames[j]} has the same value (${min}) in every used row; remove it (the intercept already covers a constant).`);
    }
    largest[j] = big;
  }
  for (let a = 0; a < p; a++) {
    for (let b = a + 1; b < p; b++) {
      const relation = linearRelation(x, n, p, a, b, rowOfMin[a], rowOfMax[a], largest[b], intercept);
      if (relation === undefined) continue;
      const [shift, factor] = relation;
      const shown = (v: number) => Number(v.toPrecision(6));
      let text: string;
      if (shift !== 0) text = `equals ${shown(shift)} + ${shown(factor)} × ${predictorNames[a]} in every used row; with an intercept`;
      else if (Math.abs(factor - 1) <= MULTIPLE_TOLERANCE) text = `is a duplicate of ${predictorNames[a]};`;
      else text = `is an exact multiple (${shown(factor)} times) of ${predictorNames[a]};`;
      throw new SkeinError("bad-input", `Predictor ${predictorNames[b]} ${text} their effects cannot be told apart. Remove one of them.`);
    }
  }
}

/**
 * [shift, factor] with column b = shift + factor · column a over all rows
 * (shift 0 unless `withShift`), or undefined when there is none. The line is
 * taken through the rows where column a is smallest and largest, the pair
 * least sensitive to rounding.
 */
function linearRelation(
  x: Float64Array, n: number, p: number, a: number, b: number,
  rowOfMin: number, rowOfMax: number, largestB: number, withShift: boolean,
): [number, number] | undefined {
  const aLow = x[rowOfMin * p + a];
  const aHigh = x[rowOfMax * p + a];
  const bLow = x[rowOfMin * p + b];
  const bHigh = x[rowOfMax * p + b];
  let factor: number;
  let shift = 0;
  if (withShift) {
    factor = (bHigh - bLow) / (aHigh - aLow);
    shift = bLow - factor * aLow;
  } else {
    // Through the origin: use the endpoint of column a farthest from 0 (never 0, as a is not constant).
    factor = Math.abs(aHigh) >= Math.abs(aLow) ? bHigh / aHigh : bLow / aLow;
  }
  const tolerance = MULTIPLE_TOLERANCE * largestB;
  if (Math.abs(shift) <= tolerance) shift = 0;
  for (let i = 0, k = 0; i < n; i++, k += p) {
    if (Math.abs(x[k + b] - shift - factor * x[k + a]) > tolerance) return undefined;
  }
  return [shift, factor];
}
