import type { RegressionData } from "./mixtureTypes";

/**
 * The row-major n x q regression design of RegressionData: a leading column of 1s when
 * `intercept` (q = p + 1), then the p predictors. The trust checks (separation, standard
 * errors, prediction) work on it so the intercept slot of every coefficient vector lines up
 * with a column.
 */
export function regressionMatrix(x: Float64Array, n: number, p: number, intercept: boolean): { matrix: Float64Array; q: number } {
  const q = intercept ? p + 1 : p;
  if (!intercept) return { matrix: x.slice(0, n * p), q };
  const matrix = new Float64Array(n * q);
  for (let i = 0; i < n; i++) {
    matrix[i * q] = 1;
    matrix.set(x.subarray(i * p, i * p + p), i * q + 1);
  }
  return { matrix, q };
}

/** regressionMatrix of a whole RegressionData. */
export function dataMatrix(data: RegressionData, intercept: boolean): { matrix: Float64Array; q: number } {
  return regressionMatrix(data.x, data.n, data.p, intercept);
}

/**
 * The coefficient slice a component applies to a design row: the fit stores q' = p + 1
 * coefficients with the intercept slot first (0 when there is none), while the design has
 * q = p columns without an intercept. Returns the offset into `coefficients`.
 */
export function coefficientOffset(coefficients: Float64Array, q: number): number {
  return coefficients.length - q;
}
