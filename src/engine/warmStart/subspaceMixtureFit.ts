import type { Random } from "../random";
import { choleskyScratchLength, scaledCholeskySolve } from "../cholesky";
import { componentLogConstant, squareMemberships, squaredResidualSums } from "../logDensities";
import { addBlockDots, addBlockGram, cutMemberships, rowBlock, stageMemberships, weighBlock, type RowBlock } from "../weightedGram";
import { paddedLength } from "../rowResiduals";

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
  const state = createState(z, y, n, m, k, start);
  let logLikelihood = -Infinity;
  for (let iteration = 0; iteration < iterations; iteration++) {
    solveComponents(state);
    squaredResiduals(state);
    updateVariances(state);
    logLikelihood = updateMemberships(state);
  }
  return { coefficients: state.coefficients, memberships: state.tau, logLikelihood };
}

/** The rows, the mixture's parameters and the scratch one fit's iterations share. */
interface SubspaceState {
  y: Float64Array;
  n: number;
  m: number;
  k: number;
  /** n x k memberships, row-major (the caller's start, overwritten). */
  tau: Float64Array;
  coefficients: Float64Array[];
  variances: Float64Array;
  weights: Float64Array;
  /** Mean of y², the variance of a component that holds no rows. */
  meanSquare: number;
  /** The variance floor (RELATIVE_VARIANCE_FLOOR of meanSquare). */
  floor: number;
  /** The projected rows, row-major (n x m). */
  z: Float64Array;
  /** Per component, the sum of its kept memberships. */
  masses: Float64Array;
  /** Per component, whether its normal equations were solved this iteration. */
  solved: Uint8Array;
  gram: Float64Array;
  right: Float64Array;
  scratch: Float64Array;
  /** Squared residuals of every row under every component (n x k), shared by the variances and the E-step. */
  squares: Float64Array;
  /** Per component, Σ τ r² over all rows. */
  rss: Float64Array;
  /** The coefficients one component after another, padded for rowResiduals. */
  grouped: Float64Array;
  logDensity: Float64Array;
  /** The row block holding the rows and responses (filled once a fit), or null before the first M-step. */
  filled: RowBlock | null;
}

function createState(z: Float64Array, y: Float64Array, n: number, m: number, k: number, start: Float64Array): SubspaceState {
  let meanSquare = 0;
  for (let i = 0; i < n; i++) meanSquare += y[i] * y[i];
  meanSquare /= n;
  return {
    y,
    n,
    m,
    k,
    tau: start,
    coefficients: Array.from({ length: k }, () => new Float64Array(m)),
    variances: new Float64Array(k),
    weights: new Float64Array(k),
    meanSquare,
    floor: RELATIVE_VARIANCE_FLOOR * meanSquare,
    z,
    masses: new Float64Array(k),
    solved: new Uint8Array(k),
    gram: new Float64Array(m * m),
    right: new Float64Array(m),
    scratch: new Float64Array(choleskyScratchLength(m)),
    squares: new Float64Array(n * k),
    rss: new Float64Array(k),
    grouped: new Float64Array(paddedLength(k, m)),
    logDensity: new Float64Array(k),
    filled: null,
  };
}

/**
 * M-step: weighted least squares per component through the m x m normal equations
 * (m = K is tiny and the projected columns are close to orthonormal), and the weights.
 */
function solveComponents(state: SubspaceState): void {
  const { z, y, n, m, k, tau, coefficients, weights, masses, solved, gram, right, scratch } = state;
  // All n rows go into one row block (a few thousand at most: the warm start's subsample), so
  // each sum runs over the rows in order; per row its response, then the component's membership.
  const block = rowBlock(m, n, 2, 0, 0, k);
  // The rows and responses go in once a fit: nothing else takes a row block between its
  // iterations (the solves and the E-step use modules of their own), so they stay.
  if (state.filled !== block) {
    const { plain, vectors, qp } = block;
    for (let i = 0; i < n; i++) {
      for (let a = 0; a < m; a++) plain[i * qp + a] = z[i * m + a];
      for (let a = m; a < qp; a++) plain[i * qp + a] = 0;
      vectors[2 * i] = y[i];
    }
    state.filled = block;
  }
  stageMemberships(block, tau, y, 0, n);
  for (let j = 0; j < k; j++) {
    // Negligible memberships are left out (they change nothing visible). In the subspace the
    // missed part of each component acts as noise, so memberships stay soft and few are skipped.
    const mass = cutMemberships(block, n, j, MEMBERSHIP_CUTOFF, 1);
    masses[j] = mass;
    weighBlock(block, n, 1);
    gram.fill(0);
    right.fill(0);
    addBlockGram(block, n, gram, 0);
    addBlockDots(block, n, "weighted", 0, right, 0);
    weights[j] = Math.max(mass / n, 1e-12);
    solved[j] = scaledCholeskySolve(gram, right, m, coefficients[j], scratch, false) ? 1 : 0;
  }
}

/**
 * Each row's squared residual under each component and each component's Σ τ r², row by row
 * through the E-step kernel's residual pass (squaredResidualSums: each residual summed in the
 * residual kernel's order, rowResiduals.ts).
 */
function squaredResiduals(state: SubspaceState): void {
  const { y, z, n, m, k, tau, coefficients, squares, rss, grouped } = state;
  for (let j = 0; j < k; j++) grouped.set(coefficients[j], j * m);
  squaredResidualSums(z, n, m, y, grouped, k, tau, squares, rss);
}

/** The variance of each component just solved, at least the floor. */
function updateVariances(state: SubspaceState): void {
  const { k, variances, meanSquare, floor, masses, solved, rss } = state;
  for (let j = 0; j < k; j++) if (solved[j]) variances[j] = Math.max(floor, masses[j] > 0 ? rss[j] / masses[j] : meanSquare);
}

/** E-step through the kernel (log-sum-exp): new memberships; returns the log-likelihood. */
function updateMemberships(state: SubspaceState): number {
  const { n, k, tau, variances, weights, squares, logDensity } = state;
  for (let j = 0; j < k; j++) logDensity[j] = componentLogConstant(weights[j], variances[j]);
  return squareMemberships(squares, n, k, logDensity, variances, tau);
}

/** A random hard partition as starting memberships (n x k). */
export function randomPartition(n: number, k: number, random: Random, out: Float64Array): Float64Array {
  out.fill(0);
  for (let i = 0; i < n; i++) out[i * k + random.integer(k)] = 1;
  return out;
}
