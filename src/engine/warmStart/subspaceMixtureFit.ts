import type { Random } from "../random";
import { choleskyScratchLength, scaledCholeskySolve } from "../cholesky";
import { componentLogConstant, normaliseLogDensities } from "../logDensities";
import { dot } from "../weightedGram";

/**
 * EM for a mixture of K regressions restricted to a K-dimensional subspace: the rows are the
 * projections z_i = Uᵀx̃_i of the whitened predictors onto the top-K eigenvectors of the
 * response-weighted moment (Yi, Caramanis & Sanghavi 2014; Zhong, Jain & Dhillon 2016 search
 * inside that subspace). The part of each component outside the subspace acts as extra
 * noise, so plain EM with one variance per component (Dempster, Laird & Rubin 1977) is the
 * right low-dimensional model; each iteration costs O(n·K²) instead of O(n·d²).
 */
export interface SubspaceMixture {
  /** K coefficient vectors in subspace coordinates (length K each). */
  coefficients: Float64Array[];
  /** n x K memberships, row-major. */
  memberships: Float64Array;
  logLikelihood: number;
}

/** Relative variance floor: keeps a component that fits few rows closely from collapsing. */
const RELATIVE_VARIANCE_FLOOR = 1e-6;
/** Memberships below this are left out of the M-step sums. */
const MEMBERSHIP_CUTOFF = 1e-6;

/**
 * @param z n x m projected rows (row-major), m = subspace dimension
 * @param start initial memberships n x k (a random partition, for example), overwritten
 */
export function subspaceMixtureFit(z: Float64Array, y: Float64Array, n: number, m: number, k: number, start: Float64Array, iterations: number): SubspaceMixture {
  const tau = start;
  const coefficients = Array.from({ length: k }, () => new Float64Array(m));
  const variances = new Float64Array(k);
  const weights = new Float64Array(k);
  const gram = new Float64Array(m * m);
  const scratch = new Float64Array(choleskyScratchLength(m));
  const right = new Float64Array(m);
  const logDensity = new Float64Array(k);
  let meanSquare = 0;
  for (let i = 0; i < n; i++) meanSquare += y[i] * y[i];
  meanSquare /= n;
  const floor = RELATIVE_VARIANCE_FLOOR * meanSquare;
  // Each row's products z_a z_b (lower triangle, a ≥ b) and z_a y, computed once and stored
  // by column (product e of row i at e·n + i). The M-step's sums over rows are then one matrix
  // product, sums(K x width) = τᵀ · products, taken as dot products of contiguous columns (the
  // weighted-Gram kernel's dot): about twice as fast as adding each row's products into every
  // component's sums, whose adds wait on one another.
  const width = (m * (m + 1)) / 2 + m;
  const products = new Float64Array(n * width);
  for (let i = 0; i < n; i++) {
    const row = i * m;
    let e = 0;
    for (let a = 0; a < m; a++) {
      for (let b = 0; b <= a; b++) products[e++ * n + i] = z[row + a] * z[row + b];
    }
    for (let a = 0; a < m; a++) products[e++ * n + i] = z[row + a] * y[i];
  }
  const sums = new Float64Array(k * width);
  const masses = new Float64Array(k);
  const solved = new Uint8Array(k);
  // Memberships by component (τ_j of row i at j·n + i), the negligible ones set to 0.
  const byComponent = new Float64Array(n * k);
  // Squared residuals of every row under every component, shared by the variances and the E-step.
  const squares = new Float64Array(n * k);
  const rss = new Float64Array(k);
  const flat = new Float64Array(k * m);
  let logLikelihood = -Infinity;
  for (let iteration = 0; iteration < iterations; iteration++) {
    // M-step: weighted least squares per component through the m x m normal equations
    // (m = K is tiny and the projected columns are close to orthonormal).
    masses.fill(0);
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < k; j++) {
        // Negligible memberships are left out (they change nothing visible). In the subspace the
        // missed part of each component acts as noise, so memberships stay soft and few are
        // skipped.
        const t = tau[i * k + j];
        const kept = t < MEMBERSHIP_CUTOFF ? 0 : t;
        byComponent[j * n + i] = kept;
        masses[j] += kept;
      }
    }
    for (let j = 0; j < k; j++) {
      for (let e = 0; e < width; e++) sums[j * width + e] = dot(byComponent, j * n, products, e * n, n);
    }
    for (let j = 0; j < k; j++) {
      let e = j * width;
      for (let a = 0; a < m; a++) for (let b = 0; b <= a; b++) gram[b * m + a] = sums[e++];
      for (let a = 0; a < m; a++) right[a] = sums[e++];
      weights[j] = Math.max(masses[j] / n, 1e-12);
      solved[j] = scaledCholeskySolve(gram, right, m, coefficients[j], scratch, false) ? 1 : 0;
    }
    rss.fill(0);
    for (let j = 0; j < k; j++) flat.set(coefficients[j], j * m);
    for (let i = 0; i < n; i++) {
      const row = i * m;
      for (let j = 0; j < k; j++) {
        let fitted = 0;
        for (let a = 0; a < m; a++) fitted += z[row + a] * flat[j * m + a];
        const square = (y[i] - fitted) ** 2;
        squares[i * k + j] = square;
        rss[j] += tau[i * k + j] * square;
      }
    }
    for (let j = 0; j < k; j++) if (solved[j]) variances[j] = Math.max(floor, masses[j] > 0 ? rss[j] / masses[j] : meanSquare);
    // E-step through the kernel (log-sum-exp).
    for (let j = 0; j < k; j++) logDensity[j] = componentLogConstant(weights[j], variances[j]);
    for (let t = 0; t < n * k; t++) tau[t] = logDensity[t % k] - (0.5 * squares[t]) / variances[t % k];
    logLikelihood = normaliseLogDensities(tau, n, k);
  }
  return { coefficients, memberships: tau, logLikelihood };
}

/** A random hard partition as starting memberships (n x k). */
export function randomPartition(n: number, k: number, random: Random, out: Float64Array): Float64Array {
  out.fill(0);
  for (let i = 0; i < n; i++) out[i * k + random.integer(k)] = 1;
  return out;
}
