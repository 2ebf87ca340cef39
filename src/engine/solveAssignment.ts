/**
 * Minimum-cost assignment of rows to columns of a square k x k cost matrix (row-major) by the
 * Hungarian method with potentials (Kuhn 1955; Munkres 1957; the O(k³) shortest augmenting
 * path form of Jonker & Volgenant 1987). Returns, for each column, its row.
 *
 * Costs that are not finite (a squared distance between coefficients of 1e155 overflows to
 * Infinity, and Infinity − Infinity is NaN) are first made finite (finiteCosts): with a NaN
 * reduced cost no column is ever the nearest, and the augmenting search would go on forever.
 * Each augmenting search also marks one more column per pass, so it ends after at most k + 1
 * passes whatever the numbers.
 */
export function solveAssignment(rawCost: Float64Array, k: number): Int32Array {
  const cost = finiteCosts(rawCost, k);
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
      if (next === 0) {
        // Only reachable if the reduced costs stopped being numbers: take the first free
        // column without moving the potentials, so the search still marks one column per pass.
        delta = 0;
        for (let j = 1; j <= k && next === 0; j++) if (!used[j]) next = j;
        way[next] = column;
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

/**
 * The costs divided by their largest finite magnitude, with +Infinity and NaN as 4k + 4 and
 * −Infinity as −(4k + 4). Finite costs then lie in [−1, 1], so an assignment that uses fewer
 * non-finite entries always costs less (k finite entries differ by at most 2k in total); the
 * common case, every cost finite and of ordinary size, is returned as it is.
 */
function finiteCosts(cost: Float64Array, k: number): Float64Array {
  const length = k * k;
  let largest = 0;
  let allFinite = true;
  for (let i = 0; i < length; i++) {
    const magnitude = Math.abs(cost[i]);
    if (Number.isFinite(magnitude)) {
      if (magnitude > largest) largest = magnitude;
    } else allFinite = false;
  }
  if (allFinite && largest < 1e150) return cost;
  const unit = largest > 0 ? largest : 1;
  const beyond = 4 * k + 4;
  const result = new Float64Array(length);
  for (let i = 0; i < length; i++) {
    const value = cost[i];
    result[i] = Number.isFinite(value) ? value / unit : value === -Infinity ? -beyond : beyond;
  }
  return result;
}
