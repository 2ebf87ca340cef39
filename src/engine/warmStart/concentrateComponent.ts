import { leastSquares } from "../leastSquares";
import { selectSmallest } from "./selectSmallest";

/**
 * Concentration steps towards one component (the C-steps of least trimmed squares,
 * Rousseeuw & Van Driessen 2006, Data Mining and Knowledge Discovery): keep the rows with the
 * smallest absolute residuals, refit least squares on them, repeat. Started near a component,
 * the kept rows are mostly that component's (its residuals are the narrowest), so each refit
 * moves closer; in noiseless data it lands on an exact fit of all the component's rows.
 */
export interface ConcentrationScratch {
  /** |residual| per row, length n. */
  absolute: Float64Array;
  /** Selection workspace, length n. */
  select: Float64Array;
  /** Gathered design rows, length n·q. */
  rows: Float64Array;
  /** Gathered responses, length n. */
  responses: Float64Array;
}

export function createConcentrationScratch(n: number, q: number): ConcentrationScratch {
  return {
    absolute: new Float64Array(n),
    select: new Float64Array(n),
    rows: new Float64Array(n * q),
    responses: new Float64Array(n),
  };
}

export interface ConcentrationResult {
  coefficients: Float64Array;
  /** Rows whose absolute residual is at most the exact-fit tolerance. */
  exactRows: number;
}

/** |y − X c| for the active rows, into scratch.absolute (indexed by position in `active`). */
export function absoluteResiduals(design: Float64Array, q: number, y: Float64Array, active: Int32Array, count: number, c: Float64Array, out: Float64Array): void {
  for (let t = 0; t < count; t++) {
    const i = active[t];
    const row = i * q;
    let fitted = 0;
    for (let j = 0; j < q; j++) fitted += design[row + j] * c[j];
    out[t] = Math.abs(y[i] - fitted);
  }
}

/** Least squares on the active rows whose absolute residual is ≤ threshold; null if too few or singular. */
export function refitOnRows(
  design: Float64Array, q: number, y: Float64Array, active: Int32Array, count: number,
  threshold: number, scratch: ConcentrationScratch,
): Float64Array | null {
  let m = 0;
  for (let t = 0; t < count; t++) {
    if (scratch.absolute[t] > threshold) continue;
    const i = active[t];
    scratch.rows.set(design.subarray(i * q, i * q + q), m * q);
    scratch.responses[m] = y[i];
    m++;
  }
  if (m < q) return null;
  try {
    return leastSquares(scratch.rows.subarray(0, m * q), m, q, scratch.responses.subarray(0, m)).coefficients;
  } catch {
    return null; // singular subset: the caller treats the candidate as failed
  }
}

/**
 * @param keep rows kept per step (must exceed q for the refit to say anything)
 * @param exactTolerance absolute residual counted as an exact fit
 * @param enough stop as soon as this many rows fit exactly
 */
export function concentrateComponent(
  design: Float64Array, q: number, y: Float64Array, active: Int32Array, count: number,
  start: Float64Array, keep: number, steps: number, exactTolerance: number, enough: number,
  scratch: ConcentrationScratch,
): ConcentrationResult {
  let c = start;
  let exactRows = 0;
  for (let step = 0; step <= steps; step++) {
    absoluteResiduals(design, q, y, active, count, c, scratch.absolute);
    exactRows = 0;
    for (let t = 0; t < count; t++) if (scratch.absolute[t] <= exactTolerance) exactRows++;
    if (exactRows >= enough || step === steps) break;
    const threshold = selectSmallest(scratch.absolute, count, Math.min(count, keep) - 1, scratch.select);
    const next = refitOnRows(design, q, y, active, count, threshold, scratch);
    if (!next) break;
    c = next;
  }
  if (exactRows >= enough) {
    // Refit on every exactly fitted row, which can only add rows of the same component.
    const refit = refitOnRows(design, q, y, active, count, exactTolerance, scratch);
    if (refit) {
      c = refit;
      absoluteResiduals(design, q, y, active, count, c, scratch.absolute);
      exactRows = 0;
      for (let t = 0; t < count; t++) if (scratch.absolute[t] <= exactTolerance) exactRows++;
    }
  }
  return { coefficients: c, exactRows };
}
