/**
 * Minimum-cost assignment of rows to columns of a square k x k cost matrix (row-major) by the
 * Hungarian method with potentials (Kuhn 1955; Munkres 1957; the O(k³) shortest augmenting
 * path form of Jonker & Volgenant 1987). Returns, for each column, its row.
 */
export function solveAssignment(cost: Float64Array, k: number): Int32Array {
  // 1-based arrays with a dummy row/column 0, as in the textbook statement of the method.
  const u = new Float64Array(k + 1);
  const v = new Float64Array(k + 1);
  const rowOfColumn = new Int32Array(k + 1);
  const way = new Int32Array(k + 1);
  const minimum = new Float64Array(k + 1);
  const used = new Uint8Array(k + 1);
  for (let row = 1; row <= k; row++) {
    rowOfColumn[0] = row;
    let column = 0;
    minimum.fill(Infinity);
    used.fill(0);
    do {
      used[column] = 1;
      const r = rowOfColumn[column];
      let delta = Infinity;
      let next = 0;
      for (let j = 1; j <= k; j++) {
        if (used[j]) continue;
        const reduced = cost[(r - 1) * k + (j - 1)] - u[r] - v[j];
        if (reduced < minimum[j]) {
          minimum[j] = reduced;
          way[j] = column;
        }
        if (minimum[j] < delta) {
          delta = minimum[j];
          next = j;
        }
      }
      for (let j = 0; j <= k; j++) {
        if (used[j]) {
          u[rowOfColumn[j]] += delta;
          v[j] -= delta;
        } else {
          minimum[j] -= delta;
        }
      }
      column = next;
    } while (rowOfColumn[column] !== 0);
    do {
      const previousColumn = way[column];
      rowOfColumn[column] = rowOfColumn[previousColumn];
      column = previousColumn;
    } while (column !== 0);
  }
  const result = new Int32Array(k);
  for (let j = 1; j <= k; j++) result[j - 1] = rowOfColumn[j] - 1;
  return result;
}
