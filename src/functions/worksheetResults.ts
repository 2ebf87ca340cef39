/**
 * What each SKEIN function shows, built from a shared fit or scan: the column headers (the
 * words of docs/glossary.md) and the rows (spill.ts shapes them). Shares of rows (weights,
 * misassigned rows) are percentages, as on every other surface.
 */
import { checkSeparation } from "../engine/checkSeparation";
import { encodeRow, levelOf, type PredictorColumn } from "../engine/categoryLevels";
import { findStrayRows } from "../engine/strayRows";
import { readNumberText } from "../io/numberText";
import { SkeinError } from "../engine/errors";
import { engineService } from "../service/engineService";
import { isExactFit } from "../engine/exactFit";
import { withHostControls } from "../report/warningControls";
import { startsAgree } from "../engine/scanComponents";
import { formatNumber } from "../report/formatNumber";
import type { FunctionSettings } from "./settings";
import type { SharedFit, SharedScan } from "./sharedFit";
import { cell, perInputRow, rowsThroughLastData, showsHeader, table, type Cell, type RowLayout } from "./spill";

/** Stray rows CHECK lists one by one; the rest are counted. */
const STRAY_ROWS_LISTED = 10;

/** SKEIN.FIT: one row per component. The intercept column is "" when the fit has none. */
export function componentTable({ design, fit }: SharedFit, settings: FunctionSettings): Cell[][] {
  const header: Cell[] = ["component", "weight (%)", "noise SD", "intercept", ...design.predictorNames];
  const rows = fit.components.map((component, c): Cell[] => {
    const coefficients = Array.from(component.coefficients, cell);
    return [c + 1, percent(component.weight), cell(component.sigma), fit.intercept ? coefficients[0] : "", ...coefficients.slice(1)];
  });
  return table(header, rows, showsHeader(settings, design.hasHeaderRow));
}

/** SKEIN.LABELS: per input row, the most probable component (numbered from 1). */
export function labelColumn({ design, fit, layout }: SharedFit, settings: FunctionSettings): Cell[][] {
  const rows = perInputRow(layout, 1, (i, out) => (out[0] = fit.labels[i] + 1));
  return table(["component"], rows, showsHeader(settings, design.hasHeaderRow));
}

/** SKEIN.MEMBERSHIP: per input row, the probability of each component. */
export function membershipTable({ design, fit, layout }: SharedFit, settings: FunctionSettings): Cell[][] {
  const k = fit.k;
  const rows = perInputRow(layout, k, (i, out) => {
    for (let c = 0; c < k; c++) out[c] = cell(fit.memberships[i * k + c]);
  });
  const header = Array.from({ length: k }, (_, c): Cell => `membership ${c + 1}`);
  return table(header, rows, showsHeader(settings, design.hasHeaderRow));
}

/** The row of the input ranges (1 = their first row, the header row when there is one) that a fitted row came from. */
function rangeRow(design: SharedFit["design"], fittedRow: number): number {
  return design.rowIndex[fittedRow] + (design.hasHeaderRow ? 2 : 1);
}

/** A share (0 to 1) as a percentage cell. */
function percent(share: number): Cell {
  return cell(100 * share);
}

/** SKEIN.SCAN: one row per K with the figures that choose it, the suggested K marked TRUE. */
export function scanTable({ design, scan }: SharedScan, settings: FunctionSettings): Cell[][] {
  const header: Cell[] = ["K", "BIC", "ICL", "log-likelihood", "smallest gap (noise SDs)", "starts agree", "converged", "suggested", "note"];
  const rows = scan.rows.map((row): Cell[] => [
    row.k,
    cell(row.bic),
    cell(row.icl),
    cell(row.logLikelihood),
    cell(row.minSeparation),
    row.startsAgree,
    row.converged,
    row.k === scan.chosenK,
    row.note ?? "",
  ]);
  // The suggested K's stray rows go in its note, as the command line's scan lists them.
  const suggested = scan.rows.findIndex((row) => row.k === scan.chosenK);
  if (suggested >= 0) {
    const stray = findStrayRows({ y: design.y, x: design.x, n: design.n, p: design.p }, scan.rows[suggested].fit);
    if (stray.rows.length > 0) {
      const listed = stray.rows.slice(0, STRAY_ROWS_LISTED).map((s) => `row ${rangeRow(design, s.row)} of the ranges (${formatNumber(s.distance)} noise SDs from component ${s.nearest + 1})`);
      if (stray.rows.length > STRAY_ROWS_LISTED) listed.push(`and ${stray.rows.length - STRAY_ROWS_LISTED} more`);
      const note = `Stray rows at K = ${scan.chosenK}: ${listed.join(", ")}; ${stray.rule}. A blank outcome cell leaves a row out.`;
      const current = rows[suggested][8];
      rows[suggested][8] = current === "" ? note : `${current} ${note}`;
    }
  }
  // Why the scan stopped before kmax goes with the last K tried.
  if (scan.stoppedEarly && rows.length > 0) {
    const last = rows[rows.length - 1];
    last[8] = last[8] === "" ? scan.stoppedEarly : `${last[8]} ${scan.stoppedEarly}`;
  }
  return table(header, rows, showsHeader(settings, design.hasHeaderRow));
}

/** SKEIN.CHECK: a two-column table of checks, then one row per warning. */
export function checkTable(shared: SharedFit, settings: FunctionSettings, kFromScan = false): Cell[][] {
  const { design, fit } = shared;
  shared.separation ??= checkSeparation({ y: design.y, x: design.x, n: design.n, p: design.p }, fit);
  const separation = shared.separation;
  const exact = isExactFit(fit, design.y);
  const rows: Cell[][] = [
    ["components (K)", fit.k],
    ["starts agree", startsAgree(fit.warmStart)],
    ["converged", fit.refinement.converged],
    ["iterations", fit.refinement.iterations],
    ["smallest gap (noise SDs)", fit.k === 1 ? "one component" : exact ? "no overlap (noise about 0)" : cell(separation.minGap)],
    ["misassigned rows (%)", percent(separation.misclassification)],
    ["membership clarity", cell(separation.normalisedEntropy)],
    ["smallest weight (%)", percent(separation.smallestWeight)],
    ["rows used", design.n],
    ["rows skipped", design.skipped.length],
  ];
  if (exact) rows.push(["note", "exact fit (noise about 0)"]);
  if (kFromScan) rows.push(["note", `K = ${fit.k}, the number the scan suggests (no k was given)`]);
  for (const notice of design.notices) rows.push(["note", notice]);
  if (fit.background) rows.push(["background weight (%)", percent(fit.background.weight)]);
  shared.stray ??= findStrayRows({ y: design.y, x: design.x, n: design.n, p: design.p }, fit);
  const stray = shared.stray;
  rows.push(["stray rows", stray.rows.length]);
  for (const s of stray.rows.slice(0, STRAY_ROWS_LISTED)) {
    rows.push(["stray row", `row ${rangeRow(design, s.row)} of the ranges: ${formatNumber(s.distance)} noise SDs from component ${s.nearest + 1}, the nearest`]);
  }
  if (stray.rows.length > STRAY_ROWS_LISTED) rows.push(["stray row", `and ${stray.rows.length - STRAY_ROWS_LISTED} more`]);
  if (stray.rows.length > 0) rows.push(["stray row rule", stray.rule]);
  const controls = { iterations: "the max_iterations setting", restarts: "the restarts setting" };
  const warnings = [...new Set([...fit.warnings, ...separation.warnings])].map((warning) => withHostControls(warning, controls));
  if (warnings.length === 0) rows.push(["warning", "none"]);
  for (const warning of warnings) rows.push(["warning", warning]);
  return table(["check", "value"], rows, showsHeader(settings, design.hasHeaderRow));
}

/**
 * SKEIN.PREDICT: per row of new_rows, each component's prediction and the weighted prediction
 * (weights from x in the joint model, the mixing weights in the plain one). A new_rows row with
 * any cell that is not a number (blank, text, logical, error) gets "". A first row that is all
 * text is a header row.
 */
export async function predictionTable({ design, fit }: SharedFit, newRowCells: unknown, settings: FunctionSettings): Promise<Cell[][]> {
  const rows = readNewRows(newRowCells, design.columns, design.p);
  const k = fit.k;
  // Through the engine service: many new rows go to the engine worker like a large fit.
  const prediction = await engineService.predict(fit, rows.x, rows.n);
  const output = perInputRow(rows, k + 1, (i, out) => {
    for (let c = 0; c < k; c++) out[c] = cell(prediction.perComponent[i * k + c]);
    out[k] = cell(prediction.weighted[i]);
  });
  const header: Cell[] = [...Array.from({ length: k }, (_, c): Cell => `component ${c + 1} prediction`), "weighted prediction"];
  return table(header, output, showsHeader(settings, rows.hasHeaderRow));
}

interface NewRows extends RowLayout {
  /** n x p row-major, usable rows only. */
  x: Float64Array;
  hasHeaderRow: boolean;
}

/**
 * The usable rows of new_rows, one cell per input column of x, encoded as x was (a category
 * column's text becomes its indicators; a value the fit never saw is refused by name). The
 * rule for numbers is the data layer's: only finite numbers are used, and a row with anything
 * else is left out (its output row stays ""). The data layer's checks on predictors (constant
 * or duplicated columns) do not apply: one row to predict for is fine. A first row that is all
 * text is a header row unless each of its cells is a value of its column (a known category
 * value, or number text such as "10%" in a column of numbers).
 */
function readNewRows(newRowCells: unknown, columns: readonly PredictorColumn[], p: number): NewRows {
  if (!Array.isArray(newRowCells) || newRowCells.length === 0 || !newRowCells.every(Array.isArray)) {
    throw new SkeinError("bad-input", "new_rows must be a range of rows of predictors to predict for; it is empty or not a range.");
  }
  const cells = newRowCells as unknown[][];
  const width = columns.length;
  for (let r = 0; r < cells.length; r++) {
    if (cells[r].length !== width) {
      throw new SkeinError("bad-input", `new_rows has ${cells[r].length} column${cells[r].length === 1 ? "" : "s"} in row ${r + 1} but x has ${width}; give new_rows the same predictor columns as x, in the same order.`);
    }
  }
  const hasHeaderRow =
    cells[0].every((value) => typeof value === "string" && value.trim() !== "" && !value.trim().startsWith("#")) &&
    !cells[0].every((value, j) => isDataValue(columns[j], value));
  const first = hasHeaderRow ? 1 : 0;
  const inputRows = rowsThroughLastData([cells], first);
  const x = new Float64Array(inputRows * p);
  const rowIndex = new Int32Array(inputRows);
  let n = 0;
  for (let r = 0; r < inputRows; r++) {
    if (encodeRow(columns, cells[r + first], x, n * p, `Row ${r + first + 1} of new_rows`)) rowIndex[n++] = r;
  }
  return { x: x.slice(0, n * p), n, shownRows: inputRows, rowIndex: rowIndex.slice(0, n), hasHeaderRow };
}

/** A cell that is a value of its column rather than a name: a known category value, or number text ("10%") in a column of numbers. */
function isDataValue(column: PredictorColumn, value: unknown): boolean {
  if (column.kind !== "category") return typeof value === "string" && readNumberText(value, ".") !== undefined;
  const level = levelOf(value);
  return level !== null && column.counts.some((c) => c.level.toLowerCase() === level[0]);
}
