import { symmetricEigen } from "../symmetricEigen";

export interface EigenPairs {
  /** Eigenvalues in the order chosen (largest first, by value or by magnitude). */
  values: number[];
  /** Matching unit eigenvectors, each of length p. */
  vectors: Float64Array[];
}

/**
 * Entries this small next to the largest (1) are set to 0. The QL iteration stops when an
 * off-diagonal entry falls below machine epsilon times the largest row sum seen so far, and
 * has no iteration cap of its own: with a first row of subnormal numbers that bound is itself
 * 0 and a subnormal entry might never reach it. Ordinary matrices hold no such entries.
 */
const NEGLIGIBLE_ENTRY = 1e-200;

/**
 * The `count` leading eigenpairs of a symmetric p x p matrix (row-major), by value or by
 * absolute value. Small dense algebra: the symmetric eigensolver (Householder
 * tridiagonalisation and QL, EISPACK's tred2/tql2: symmetricEigen.ts).
 */
export function topEigenvectors(matrix: Float64Array, p: number, count: number, byMagnitude: boolean): EigenPairs {
  // The solver squares entries (Householder norms, QL shifts): entries near 1e160 would
  // overflow there, so the matrix is divided by (a power of two near) its largest magnitude first and the
  // eigenvalues multiplied back (eigenvectors do not change).
  let scale = 0;
  for (let t = 0; t < p * p; t++) scale = Math.max(scale, Math.abs(matrix[t]));
  if (!Number.isFinite(scale)) return coordinateVectors(p, count);
  // A power of two, so that dividing by it is exact and ordinary matrices give the same pairs bit for bit.
  scale = scale === 0 ? 1 : 2 ** Math.ceil(Math.log2(scale));
  const scaled = new Float64Array(p * p);
  for (let a = 0; a < p; a++) {
    // Symmetrise: the caller may have filled only one triangle exactly.
    for (let b = 0; b < p; b++) {
      const value = 0.5 * (matrix[a * p + b] / scale + matrix[b * p + a] / scale);
      scaled[a * p + b] = Math.abs(value) < NEGLIGIBLE_ENTRY ? 0 : value;
    }
  }
  const decomposition = symmetricEigen(scaled, p);
  const eigenvalues = decomposition.values;
  const order = Array.from({ length: p }, (_, i) => i);
  order.sort((i, j) => (byMagnitude ? Math.abs(eigenvalues[j]) - Math.abs(eigenvalues[i]) : eigenvalues[j] - eigenvalues[i]));
  const take = Math.min(count, p);
  const values: number[] = [];
  const vectors: Float64Array[] = [];
  for (let t = 0; t < take; t++) {
    const column = order[t];
    values.push(eigenvalues[column] * scale);
    vectors.push(decomposition.vectors.slice(column * p, column * p + p));
  }
  return { values, vectors };
}

/** The first `count` coordinate axes, a neutral subspace when the matrix holds no usable numbers (no eigenvalues: NaN). */
function coordinateVectors(p: number, count: number): EigenPairs {
  const take = Math.min(count, p);
  const vectors = Array.from({ length: take }, (_, t) => {
    const v = new Float64Array(p);
    v[t] = 1;
    return v;
  });
  return { values: new Array<number>(take).fill(NaN), vectors };
}
