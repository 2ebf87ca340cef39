import * as path from "path";
import { buildDesign, buildNumberDesign, type Design, type DesignOptions } from "../engine/design";
import { encodeRow, encodedWidth, type PredictorColumn } from "../engine/categoryLevels";
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
  /** The number of components asked for (named when there are too few rows). */
  k?: number;
  /** 1-based data rows to leave out of the fit (--leave-out). */
  leaveOut?: number[];
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
  return designOfTable(await readDataTable(source.file, { sheet: source.sheet, headerRow: source.headerRow }), source);
}

/** loadDesign on a table already read: the columns chosen, the Design built. */
export function designOfTable(table: DataTable, source: Omit<DesignSource, "file" | "sheet" | "headerRow">): LoadedDesign {
  if (table.dataRowNumbers.length === 0) throw new SkeinError("bad-input", `${table.where} has a header row but no data rows below it; add rows of data under the column names.`);
  const y = outcomeColumn(table, source.y);
  const notices = [...table.notices];
  const x = source.x !== undefined ? chosenPredictors(table, source.x, y) : defaultPredictors(table, y, notices);
  const converted = describeColumns(table.columns.filter((c) => c.position === y || x.includes(c.position))).converted;
  if (converted.length > 0) notices.push(`Read as numbers: ${converted.join(", ")}.`);
  const leaveOut = rowsToLeaveOut(table, source.leaveOut);
  const design = tableDesign(table, y, x, { intercept: source.intercept, leaveOut, components: source.k });
  // The design's own notes (a category column made into indicators, its reference level) follow the file's.
  return { design, sheetName: table.sheetName, columns: columnReports(table, y, x), notices: [...notices, ...design.notices], fileRows: table.dataRowNumbers };
}

/** The position of the outcome column --y names; it must hold numbers. */
function outcomeColumn(table: DataTable, wanted: string): number {
  const yColumn = withHeaderHint(table, () => chooseColumn(table, wanted));
  if (yColumn.kind === "category" || yColumn.kind === "text" || yColumn.kind === "empty") {
    throw new SkeinError("bad-input", `The outcome column ${yColumn.name} (${yColumn.letter}) holds ${yColumn.reason}, not numbers; choose a column of numbers with --y.`);
  }
  return yColumn.position;
}

/** The positions of the predictors --x names, each once and none the outcome. */
function chosenPredictors(table: DataTable, wanted: readonly string[], y: number): number[] {
  const x = wanted.map((name) => withHeaderHint(table, () => chooseColumn(table, name)).position);
  if (x.includes(y)) throw new SkeinError("bad-input", `${table.names[y]} is the outcome (--y); leave it out of --x.`);
  const repeated = x.find((j, i) => x.indexOf(j) !== i);
  if (repeated !== undefined) throw new SkeinError("bad-input", `${table.names[repeated]} appears twice in --x; list each predictor once.`);
  return x;
}

/** Without --x: every other column of numbers or categories, and a notice in `notices` naming the columns left out. */
function defaultPredictors(table: DataTable, y: number, notices: string[]): number[] {
  const x = table.columns.filter((c) => c.position !== y && c.defaultPredictor).map((c) => c.position);
  const leftOut = describeColumns(table.columns.filter((c) => c.position !== y)).notPredictors;
  if (x.length === 0) {
    const why = leftOut.length > 0 ? ` (left out: ${leftOut.join(", ")})` : "";
    throw new SkeinError("bad-input", `${table.where} has no column of numbers or categories besides ${table.names[y]}${why}; name the predictors with --x.`);
  }
  if (leftOut.length > 0) notices.push(`Left out of the predictors: ${leftOut.join(", ")}. Name a column in --x to use it.`);
  return x;
}

/** The 0-based data rows --leave-out names, each checked to be in the table. */
function rowsToLeaveOut(table: DataTable, leaveOut: readonly number[] | undefined): Set<number> | undefined {
  const dataRows = table.dataRowNumbers.length;
  const beyond = leaveOut?.find((row) => row > dataRows);
  if (beyond !== undefined) throw new SkeinError("bad-input", `--leave-out names data row ${beyond}, but ${table.where} has ${dataRows} data row${dataRows === 1 ? "" : "s"}; count data rows from 1 below the header.`);
  return leaveOut ? new Set(leaveOut.map((row) => row - 1)) : undefined;
}

/** The Design of columns y and x; a failure caused by a column whose numbers mix styles says so. */
function tableDesign(table: DataTable, y: number, x: number[], options: Pick<DesignOptions, "intercept" | "leaveOut" | "components">): Design {
  // The reader's kinds decide which columns are categories: its "category" columns, and text
  // columns it counted values of (one value, or too many: the design then says what is wrong);
  // a column of numbers written in mixed styles stays numeric, its text cells skipping rows.
  const categories = x.map((j) => {
    const column = table.columns.find((c) => c.position === j) as (typeof table.columns)[number];
    return column.kind === "category" || (column.kind === "text" && column.levels !== undefined);
  });
  try {
    // A file of plain numbers, read column by column, goes to the design without rows of cells.
    const numbers = table.numberColumns;
    return numbers && !categories.includes(true)
      ? buildNumberDesign({ name: table.names[y], values: numbers[y] }, x.map((j) => ({ name: table.names[j], values: numbers[j] })), options)
      : buildDesign(columnCells(table, [y]), columnCells(table, x), { ...options, headers: true, categories, numberText: false });
  } catch (error) {
    // Rows skipped for text in a column whose numbers mix styles: say why that column is text.
    const used = [y, ...x].map((j) => table.names[j]);
    const why = table.notices.filter((notice) => used.some((name) => notice.startsWith(`${name} writes numbers in more than one way`)));
    if (error instanceof SkeinError && why.length > 0) throw new SkeinError(error.code, `${error.message} ${why.join(" ")}`);
    throw error;
  }
}

/** Every column of the table with its part in the fit, as the output reports it. */
function columnReports(table: DataTable, y: number, x: number[]): ColumnReport[] {
  return table.columns.map((c) => ({
    name: c.name,
    letter: c.letter,
    kind: c.kind,
    role: c.position === y ? "outcome" : x.includes(c.position) ? "predictor" : "not used",
    reason: c.reason,
    ...(c.converted ? { converted: c.converted } : {}),
  }));
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
  /** Rows usable for every predictor, encoded as the fit's design (category columns as indicators), m x p row-major. */
  x: Float64Array;
  m: number;
  /** For each of those rows, its 0-based data row in the file. */
  rowIndex: number[];
  /** 1-based data rows left out for a blank cell, or one that is not a number where one is needed. */
  skipped: number[];
  inputRows: number;
  /** Every data row's cells in the predictors' order, converted by the column rule (text kept for categories). */
  cells: Cell[][];
  notices: string[];
}

/**
 * The predictor columns of a file of new rows (found by the names of the fitted input
 * columns), encoded as the fit's design was, as an m x p row-major block; rows with a blank
 * or non-numeric cell where a number is needed are left out and listed (1-based data rows).
 * A category value the fit never saw is a bad-input SkeinError naming it. A file with no rows
 * under its header is an error saying so.
 */
export async function loadNewRows(file: string, predictors: readonly PredictorColumn[], sheet?: string): Promise<NewRows> {
  const table = await readDataTable(file, { sheet });
  const predictorNames = predictors.map((column) => column.name);
  if (table.rows.length === 0) {
    throw new SkeinError("bad-input", `${table.where} (--new) has column names but no rows below them, so there is nothing to predict; add one row per prediction with the columns ${predictorNames.join(", ")}.`);
  }
  const columns = predictorNames.map((name) => chooseColumn(table, name).position);
  const p = encodedWidth(predictors);
  const values = new Float64Array(table.rows.length * p);
  const rowIndex: number[] = [];
  const skipped: number[] = [];
  const cells = table.rows.map((row) => columns.map((j) => row[j]));
  cells.forEach((row, r) => {
    if (encodeRow(predictors, row, values, rowIndex.length * p, `Data row ${r + 1} of ${table.where}`)) rowIndex.push(r);
    else skipped.push(r + 1);
  });
  const converted = describeColumns(table.columns.filter((c) => columns.includes(c.position))).converted;
  const notices = [...table.notices, ...(converted.length > 0 ? [`Read as numbers in ${path.basename(file)}: ${converted.join(", ")}.`] : [])];
  return { x: values.slice(0, rowIndex.length * p), m: rowIndex.length, rowIndex, skipped, inputRows: table.rows.length, cells, notices };
}
