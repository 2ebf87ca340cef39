import type { RegressionData } from "./mixtureTypes";

/**
 * Ê[xxᵀ] = (1/n) Σ_i x̃_i x̃_iᵀ over the rows, with x̃_i = (1, x_i): (p + 1) x (p + 1) row-major,
 * laid out like a component's coefficients (intercept slot first). A coefficient difference d
 * then gives dᵀ Ê[xxᵀ] d, the mean squared difference of two regressions' predictions.
 */
export function secondMoment(data: RegressionData): Float64Array {
  const { x, n, p } = data;
  const size = p + 1;
  const moment = new Float64Array(size * size);
  const row = new Float64Array(size);
  row[0] = 1;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < p; j++) row[j + 1] = x[i * p + j];
    // Upper triangle only; mirrored below.
    for (let a = 0; a < size; a++) {
      const ra = row[a];
      const offset = a * size;
      for (let b = a; b < size; b++) moment[offset + b] += ra * row[b];
    }
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
