/**
 * The m-th smallest value (0-based) of values[0..n), by Hoare's selection algorithm
 * (FIND, Hoare 1961, CACM Algorithm 65) with median-of-three pivots: O(n) on average.
 * Works in `scratch` (length ≥ n), leaving `values` untouched.
 */
export function selectSmallest(values: Float64Array, n: number, m: number, scratch: Float64Array): number {
  for (let i = 0; i < n; i++) scratch[i] = values[i];
  let left = 0;
  let right = n - 1;
  while (right > left) {
    const middle = (left + right) >> 1;
    // Median of three as the pivot keeps sorted or constant runs from going quadratic.
    let a = scratch[left];
    let b = scratch[middle];
    let c = scratch[right];
    if (a > b) [a, b] = [b, a];
    if (b > c) [b, c] = [c, b];
    if (a > b) [a, b] = [b, a];
    const pivot = b;
    let i = left;
    let j = right;
    while (i <= j) {
      while (scratch[i] < pivot) i++;
      while (scratch[j] > pivot) j--;
      if (i <= j) {
        const held = scratch[i];
        scratch[i] = scratch[j];
        scratch[j] = held;
        i++;
        j--;
      }
    }
    if (m <= j) right = j;
    else if (m >= i) left = i;
    else return scratch[m];
  }
  return scratch[m];
}
