import * as path from "path";
import { buildDesign, type Design } from "../engine/design";
import { encodeRow, encodedWidth, type PredictorColumn } from "../engine/categoryLevels";
import { SkeinError } from "../engine/errors";
import { readTable } from "../io/readTable";
import { checkRectangular, columnRange, columnsRange, findColumn, headerNames, isMostlyNumeric } from "./columns";

/** Which file and columns a fit, scan or predict command fits on. */
export interface DesignSource {
  file: string;
  sheet?: string;
  y: string;
  /** Predictor names; undefined: every other mostly numeric column. */
  x?: string[];
  intercept: boolean;
  /** The number of components asked for (named when there are too few rows). */
  k?: number;
  /** 1-based data rows to leave out of the fit (--leave-out). */
  leaveOut?: number[];
}

/**
 * Reads a .csv or .xlsx file whose first row names the columns and builds the Design of the
 * chosen y and x columns (rows with a blank, text or error cell skipped and listed).
 */
export async function loadDesign(source: DesignSource): Promise<{ design: Design; sheetName?: string }> {
  const fileName = path.basename(source.file);
  const table = await readTable(source.file, source.sheet);
  const rows = table.rows;
  const names = headerNames(rows, fileName);
  checkRectangular(rows, fileName);
  if (rows.length < 2) throw new SkeinError("bad-input", `${fileName} has a header row but no data rows below it.`);
  const y = findColumn(names, source.y, fileName);
  let x: number[];
  if (source.x !== undefined) {
    x = source.x.map((name) => findColumn(names, name, fileName));
    if (x.includes(y)) throw new SkeinError("bad-input", `${names[y]} is the response (--y); leave it out of --x.`);
    const repeated = x.find((j, i) => x.indexOf(j) !== i);
    if (repeated !== undefined) throw new SkeinError("bad-input", `${names[repeated]} appears twice in --x; list each predictor once.`);
  } else {
    x = [];
    for (let j = 0; j < names.length; j++) if (j !== y && isMostlyNumeric(rows, j)) x.push(j);
    if (x.length === 0) throw new SkeinError("bad-input", `${fileName} has no numeric column besides ${names[y]}; name the predictors with --x.`);
  }
  const dataRows = rows.length - 1;
  const beyond = source.leaveOut?.find((row) => row > dataRows);
  if (beyond !== undefined) throw new SkeinError("bad-input", `--leave-out names data row ${beyond}, but ${fileName} has ${dataRows} data row${dataRows === 1 ? "" : "s"}; count data rows from 1 below the header.`);
  const leaveOut = source.leaveOut ? new Set(source.leaveOut.map((row) => row - 1)) : undefined;
  const design = buildDesign(columnRange(rows, y), columnsRange(rows, x), { headers: true, intercept: source.intercept, leaveOut, components: source.k });
  return { design, sheetName: table.sheetName };
}

/**
 * The predictor columns of a file of new rows (found by the names of the fitted input
 * columns), encoded as the fit's design was, as an m x p row-major block; rows with a blank
 * or non-numeric cell where a number is needed are left out and listed (1-based data rows).
 * A category value the fit never saw is a bad-input SkeinError naming it.
 */
export async function loadNewRows(file: string, predictors: readonly PredictorColumn[], sheet?: string): Promise<{ x: Float64Array; m: number; rowIndex: number[]; skipped: number[]; inputRows: number }> {
  const fileName = path.basename(file);
  const table = await readTable(file, sheet);
  const rows = table.rows;
  const names = headerNames(rows, fileName);
  checkRectangular(rows, fileName);
  const columns = predictors.map((column) => findColumn(names, column.name, fileName));
  const p = encodedWidth(predictors);
  const values = new Float64Array(Math.max(rows.length - 1, 0) * p);
  const rowIndex: number[] = [];
  const skipped: number[] = [];
  for (let r = 1; r < rows.length; r++) {
    const cells = columns.map((j) => rows[r][j]);
    if (encodeRow(predictors, cells, values, rowIndex.length * p, `Data row ${r} of ${fileName}`)) rowIndex.push(r - 1);
    else skipped.push(r);
  }
  return { x: values.slice(0, rowIndex.length * p), m: rowIndex.length, rowIndex, skipped, inputRows: rows.length - 1 };
}
