import type { RegressionData } from "./mixtureTypes";
import { addBlockGram, blockRowsFor, gatherRows, rowBlock, stageRows, weighBlock } from "./weightedGram";

/**
 * Ê[xxᵀ] = (1/n) Σ_i x̃_i x̃_iᵀ over the rows, with x̃_i = (1, x_i): (p + 1) x (p + 1) row-major,
 * laid out like a component's coefficients (intercept slot first). A coefficient difference d
 * then gives dᵀ Ê[xxᵀ] d, the mean squared difference of two regressions' predictions.
 */
export function secondMoment(data: RegressionData): Float64Array {
  return meanOuterProduct(data.x, data.n, data.p, null, true);
}

/**
 * (1/n) Σ_i w_i x̃_i x̃_iᵀ (w_i = 1 when `weights` is null; x̃_i = (1, x_i) with `leadingOne`,
 * else x_i), full and symmetric, row-major. A block of rows at a time through the
 * weighted-Gram kernel. Used for the second moment above, the whitening of the warm start and
 * its response-weighted moment.
 */
export function meanOuterProduct(x: Float64Array, n: number, p: number, weights: Float64Array | null, leadingOne: boolean): Float64Array {
  const offset = leadingOne ? 1 : 0;
  const size = p + offset;
  const moment = new Float64Array(size * size);
  const blockRows = blockRowsFor(size);
  // Each block's rows staged once and gathered in order (after the leading 1), then weighed by
  // w: unweighted, w = 1 and 1·x is x itself, to the bit.
  const block = rowBlock(size, blockRows, 1, p);
  const { indices, vectors } = block;
  for (let r = 0; r < blockRows; r++) indices[r] = r;
  for (let start = 0; start < n; start += blockRows) {
    const m = Math.min(n, start + blockRows) - start;
    stageRows(block, x, start, start + m);
    for (let r = 0; r < m; r++) vectors[r] = weights ? weights[start + r] : 1;
    gatherRows(block, m, offset);
    weighBlock(block, m, 0);
    addBlockGram(block, m, moment, 0);
  }
  for (let a = 0; a < size; a++) {
    for (let b = a; b < size; b++) {
      const value = moment[a * size + b] / n;
      moment[a * size + b] = value;
      moment[b * size + a] = value;
    }
  }
  return moment;
}

/** dᵀ M d for the difference d = u − v of two coefficient vectors (never below 0). */
export function quadraticDifference(moment: Float64Array, u: Float64Array, v: Float64Array): number {
  const size = u.length;
  let total = 0;
  for (let a = 0; a < size; a++) {
    const da = u[a] - v[a];
    if (da === 0) continue;
    let row = 0;
    for (let b = 0; b < size; b++) row += moment[a * size + b] * (u[b] - v[b]);
    total += da * row;
  }
  return Math.max(total, 0);
}
