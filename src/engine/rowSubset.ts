import type { RegressionData } from "./mixtureTypes";
import { shareableArray } from "./helperThread";

/**
 * Row subsets, the one way the engine copies chosen rows out of a row-major matrix: sub-fits
 * on the rows a move sets aside, subsamples, bootstrap resamples, and least-squares fits on
 * the rows one component holds.
 */

/** Rows `rows[0..count)` of an n x width row-major matrix and the matching responses, copied in that order (repeats allowed). */
export function gatherRows(matrix: Float64Array, width: number, y: Float64Array, rows: ArrayLike<number>, count = rows.length): { matrix: Float64Array; y: Float64Array } {
  // Shared with the helper thread when one is installed: sub-fits run on these rows.
  const out = shareableArray(count * width);
  const responses = shareableArray(count);
  for (let t = 0; t < count; t++) {
    const row = rows[t];
    const from = row * width;
    const to = t * width;
    for (let j = 0; j < width; j++) out[to + j] = matrix[from + j];
    responses[t] = y[row];
  }
  return { matrix: out, y: responses };
}

/** The listed rows of the data (indices into data, repeats allowed), as data of their own. */
export function selectRows(data: RegressionData, rows: ArrayLike<number>): RegressionData {
  const { matrix, y } = gatherRows(data.x, data.p, data.y, rows);
  return { x: matrix, y, n: rows.length, p: data.p };
}

/** Indices of the rows whose label is `label`, in row order. */
export function rowsWithLabel(labels: ArrayLike<number>, label: number): Int32Array {
  let count = 0;
  for (let i = 0; i < labels.length; i++) if (labels[i] === label) count++;
  const rows = new Int32Array(count);
  let t = 0;
  for (let i = 0; i < labels.length; i++) if (labels[i] === label) rows[t++] = i;
  return rows;
}
