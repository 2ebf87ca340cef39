import * as path from "path";
import { buildDesign, type Design } from "../engine/design";
import { SkeinError } from "../engine/errors";
import type { Cell, ColumnKind } from "../io/columnTypes";
import { describeColumns, type DataTable } from "../io/dataTable";
import { readDataTable } from "../io/readTable";
import { chooseColumn } from "./columns";

/** Which file and columns a fit, scan or predict command fits on. */
export interface DesignSource {
  file: string;
  sheet?: string;
  /** 1-based row (line) of the header; undefined: the first non-empty one. */
  headerRow?: number;
  y: string;
  /** Predictor names, letters or #numbers; undefined: every other number or category column. */
  x?: string[];
  intercept: boolean;
}

/** One column of the file as the output reports it (the --json `columns` field). */
export interface ColumnReport {
  name: string;
  letter: string;
  kind: ColumnKind;
  /** "outcome", "predictor", or "not used". */
  role: "outcome" | "predictor" | "not used";
  /** Why the column has its kind ("numbers", "dates", "identifier, by its name", "categories (3 values)"). */
  reason: string;
  /** How its text was read as numbers, when it was ("percent, 12.3% read as 0.123"). */
  converted?: string;
}

export interface LoadedDesign {
  design: Design;
  sheetName?: string;
  /** Every column of the file, its kind and its part in the fit. */
  columns: ColumnReport[];
  /** Sentences saying how the file was read and what was converted, renamed or left out. */
  notices: string[];
  /** For each data row of the design's input (0-based), its 1-based row or line in the file. */
  fileRows: number[];
}

/**
 * Reads a .csv or .xlsx file (readDataTable: the column rule applied) and builds the Design of
 * the chosen y and x columns (rows with a blank, text or error cell skipped and listed by the
 * design). Without --x the predictors are every other "number" or "category" column; the
 * columns left out are named in the notices.
 */
export async function loadDesign(source: DesignSource): Promise<LoadedDesign> {
  const table = await readDataTable(source.file, { sheet: source.sheet, headerRow: source.headerRow });
  if (table.rows.length === 0) throw new SkeinError("bad-input", `${table.where} has a header row but no data rows below it; add rows of data under the column names.`);
  const yColumn = withHeaderHint(table, () => chooseColumn(table, source.y));
  if (yColumn.kind === "category" || yColumn.kind === "text" || yColumn.kind === "empty") {
    throw new SkeinError("bad-input", `The outcome column ${yColumn.name} (${yColumn.letter}) holds ${yColumn.reason}, not numbers; choose a column of numbers with --y.`);
  }
  const y = yColumn.position;
  const notices = [...table.notices];
  let x: number[];
  if (source.x !== undefined) {
    x = source.x.map((wanted) => withHeaderHint(table, () => chooseColumn(table, wanted)).position);
    if (x.includes(y)) throw new SkeinError("bad-input", `${table.names[y]} is the response (--y); leave it out of --x.`);
    const repeated = x.find((j, i) => x.indexOf(j) !== i);
    if (repeated !== undefined) throw new SkeinError("bad-input", `${table.names[repeated]} appears twice in --x; list each predictor once.`);
  } else {
    x = table.columns.filter((c) => c.position !== y && c.defaultPredictor).map((c) => c.position);
    const leftOut = describeColumns(table.columns.filter((c) => c.position !== y)).notPredictors;
    if (x.length === 0) {
      const why = leftOut.length > 0 ? ` (left out: ${leftOut.join(", ")})` : "";
      throw new SkeinError("bad-input", `${table.where} has no column of numbers or categories besides ${table.names[y]}${why}; name the predictors with --x.`);
    }
    if (leftOut.length > 0) notices.push(`Left out of the predictors: ${leftOut.join(", ")}. Name a column in --x to use it.`);
  }
  const converted = describeColumns(table.columns.filter((c) => c.position === y || x.includes(c.position))).converted;
  if (converted.length > 0) notices.push(`Read as numbers: ${converted.join(", ")}.`);
  let design: Design;
  try {
    design = buildDesign(columnCells(table, [y]), columnCells(table, x), { headers: true, intercept: source.intercept });
  } catch (error) {
    // Rows skipped for text in a column whose numbers mix styles: say why that column is text.
    const used = [y, ...x].map((j) => table.names[j]);
    const why = table.notices.filter((notice) => used.some((name) => notice.startsWith(`${name} writes numbers in more than one way`)));
    if (error instanceof SkeinError && why.length > 0) throw new SkeinError(error.code, `${error.message} ${why.join(" ")}`);
    throw error;
  }
  const columns: ColumnReport[] = table.columns.map((c) => ({
    name: c.name,
    letter: c.letter,
    kind: c.kind,
    role: c.position === y ? "outcome" : x.includes(c.position) ? "predictor" : "not used",
    reason: c.reason,
    ...(c.converted ? { converted: c.converted } : {}),
  }));
  return { design, sheetName: table.sheetName, columns, notices, fileRows: table.dataRowNumbers };
}

/** A column that cannot be found may sit under a grouping header: add the reader's hint to the message. */
function withHeaderHint<T>(table: DataTable, choose: () => T): T {
  try {
    return choose();
  } catch (error) {
    const hint = table.notices.find((notice) => notice.includes("--header-row"));
    if (error instanceof SkeinError && hint) throw new SkeinError(error.code, `${error.message} ${hint}`);
    throw error;
  }
}

/** Chosen columns as a range with the header row on top, as a worksheet range would hold them. */
function columnCells(table: DataTable, positions: readonly number[]): Cell[][] {
  return [positions.map((j) => table.names[j]), ...table.rows.map((row) => positions.map((j) => row[j]))];
}

export interface NewRows {
  /** Rows with a finite number in every predictor, m x p row-major. */
  x: Float64Array;
  m: number;
  /** For each of those rows, its 0-based data row in the file. */
  rowIndex: number[];
  /** 1-based data rows left out for a predictor cell that is not a number. */
  skipped: number[];
  inputRows: number;
  /** Every data row's cells in the predictors' order, converted by the column rule (text kept for categories). */
  cells: Cell[][];
  notices: string[];
}

/**
 * The named predictor columns of a file of new rows, as an m x p row-major block; rows with a
 * cell that is not a finite number are left out and listed (1-based data rows). A file with no
 * rows under its header is an error saying so.
 */
export async function loadNewRows(file: string, predictorNames: readonly string[], sheet?: string): Promise<NewRows> {
  const table = await readDataTable(file, { sheet });
  if (table.rows.length === 0) {
    throw new SkeinError("bad-input", `${table.where} (--new) has column names but no rows below them, so there is nothing to predict; add one row per prediction with the columns ${predictorNames.join(", ")}.`);
  }
  const columns = predictorNames.map((name) => chooseColumn(table, name).position);
  const p = columns.length;
  const values: number[] = [];
  const rowIndex: number[] = [];
  const skipped: number[] = [];
  const cells = table.rows.map((row) => columns.map((j) => row[j]));
  cells.forEach((row, r) => {
    if (row.every((cell) => typeof cell === "number" && Number.isFinite(cell))) {
      values.push(...(row as number[]));
      rowIndex.push(r);
    } else {
      skipped.push(r + 1);
    }
  });
  const converted = describeColumns(table.columns.filter((c) => columns.includes(c.position))).converted;
  const notices = [...table.notices, ...(converted.length > 0 ? [`Read as numbers in ${path.basename(file)}: ${converted.join(", ")}.`] : [])];
  return { x: Float64Array.from(values), m: values.length / Math.max(p, 1), rowIndex, skipped, inputRows: table.rows.length, cells, notices };
}
