import type { Design } from "./design";

/**
 * The full row-major n x q regression design: a leading column of 1s when
 * `intercept` (q = p + 1), then the predictors in their Design order.
 */
export function designMatrix(design: Design, intercept: boolean): { matrix: Float64Array; q: number } {
  const { x, n, p } = design;
  const q = intercept ? p + 1 : p;
  if (!intercept) return { matrix: x.slice(0, n * p), q };
  const matrix = new Float64Array(n * q);
  for (let i = 0; i < n; i++) {
    const out = i * q;
    matrix[out] = 1;
    // Copy the row's p predictors behind the 1 in one block move.
    matrix.set(x.subarray(i * p, i * p + p), out + 1);
  }
  return { matrix, q };
}
