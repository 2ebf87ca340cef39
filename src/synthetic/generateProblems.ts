/**
 * Seeded generators of synthetic mixtures of linear regressions (invented demo data), shared
 * by the tests and the bench. Every draw comes from the one Random passed in (or made from the
 * given seed), so a seed fixes the problem. Three recipes:
 *
 *  - noiselessProblem / noisyProblem: the accuracy problems. Noiseless: no intercept, each
 *    component draws its rows from a zero-mean Gaussian with its own covariance
 *    C_k = R_k diag(λ) R_kᵀ (λ uniform in [0.5, 2], R_k a uniformly random rotation); smallest
 *    weight at least 0.5/K; component vectors uniform in the unit ball and at least 0.3 apart.
 *    Noisy: intercepts and shifted design means, noise SD 0.05–0.15.
 *  - wellSeparatedProblem: the K-scan problems, p = 2, components at least MIN_GAP noise SDs
 *    apart.
 *  - generateProblem: a configurable problem for unit tests (equal weights, shuffled labels).
 */
import { createRandom, shuffleInPlace, type Random } from "../engine/random";
import type { RegressionData } from "../engine/mixtureTypes";
import { solveAssignment } from "../engine/solveAssignment";

export interface GeneratedProblem {
  data: RegressionData;
  k: number;
  intercept: boolean;
  /** Per component: intercept first when `intercept`, then the p slopes. */
  coefficients: Float64Array[];
  weights: number[];
  /** Noise SD per component (0 for the noiseless problems). */
  sigmas: number[];
  /** True component of each row. */
  labels: Int32Array;
}

/** Smallest allowed distance between two component vectors of the accuracy problems. */
const MIN_SEPARATION = 0.3;

/** Weights π_k = 0.5/K + 0.5 · (Dirichlet(1,…,1))_k: each at least 0.5/K, summing to 1. */
function drawWeights(k: number, random: Random): number[] {
  const gamma = Array.from({ length: k }, () => -Math.log(1 - random.next()));
  const total = gamma.reduce((s, g) => s + g, 0);
  return gamma.map((g) => 0.5 / k + (0.5 * g) / total);
}

/** Row counts proportional to the weights (largest remainder), every count at least `minimum`. */
function rowCounts(weights: number[], n: number, minimum: number): number[] {
  const raw = weights.map((w) => w * n);
  const counts = raw.map((r) => Math.max(minimum, Math.floor(r)));
  let missing = n - counts.reduce((s, c) => s + c, 0);
  const order = raw.map((r, i) => [r - Math.floor(r), i]).sort((a, b) => b[0] - a[0]);
  for (let t = 0; missing > 0; t = (t + 1) % order.length, missing--) counts[order[t][1]]++;
  return counts;
}

/** A point uniform in the unit ball of R^d: a Gaussian direction times U^(1/d). */
function pointInUnitBall(d: number, random: Random): Float64Array {
  const v = new Float64Array(d);
  let norm = 0;
  for (let j = 0; j < d; j++) {
    v[j] = random.normal();
    norm += v[j] * v[j];
  }
  const radius = Math.pow(random.next(), 1 / d) / Math.sqrt(norm);
  for (let j = 0; j < d; j++) v[j] *= radius;
  return v;
}

/** Unit-ball vectors pairwise at least MIN_SEPARATION apart (rejection sampling). */
function separatedVectors(k: number, d: number, random: Random): Float64Array[] {
  for (;;) {
    const vectors = Array.from({ length: k }, () => pointInUnitBall(d, random));
    let ok = true;
    for (let a = 0; a < k && ok; a++) {
      for (let b = a + 1; b < k && ok; b++) {
        let s = 0;
        for (let j = 0; j < d; j++) s += (vectors[a][j] - vectors[b][j]) ** 2;
        ok = Math.sqrt(s) >= MIN_SEPARATION;
      }
    }
    if (ok) return vectors;
  }
}

/**
 * A square root A of a random covariance (C = A Aᵀ = R diag(λ) Rᵀ), row-major d x d: R is
 * the Q factor of a Gaussian matrix with the signs of R's diagonal fixed, which makes it
 * Haar-distributed (Mezzadri 2007, "How to generate random matrices from the classical
 * compact groups"); λ uniform in [0.5, 2].
 */
function randomCovarianceRoot(d: number, random: Random): Float64Array {
  // Gram–Schmidt (modified) on Gaussian columns equals QR with a positive R diagonal.
  const q = new Float64Array(d * d); // column j at q[j*d ..]
  for (let j = 0; j < d; j++) {
    const col = q.subarray(j * d, j * d + d);
    for (let i = 0; i < d; i++) col[i] = random.normal();
    for (let m = 0; m < j; m++) {
      const prev = q.subarray(m * d, m * d + d);
      let dot = 0;
      for (let i = 0; i < d; i++) dot += col[i] * prev[i];
      for (let i = 0; i < d; i++) col[i] -= dot * prev[i];
    }
    let norm = 0;
    for (let i = 0; i < d; i++) norm += col[i] * col[i];
    norm = Math.sqrt(norm);
    for (let i = 0; i < d; i++) col[i] /= norm;
  }
  const root = new Float64Array(d * d);
  for (let j = 0; j < d; j++) {
    const scale = Math.sqrt(0.5 + 1.5 * random.next());
    for (let i = 0; i < d; i++) root[i * d + j] = q[j * d + i] * scale;
  }
  return root;
}

interface DrawOptions {
  d: number;
  k: number;
  /** Rows per predictor per component: n = rowsPerPredictor · d · k. */
  rowsPerPredictor: number;
  intercept: boolean;
  /** SD of the shift of each component's design mean (0: zero-mean designs). */
  meanShift: number;
  /** Noise SD range [low, high] per component (0, 0 for noiseless). */
  noise: [number, number];
}

function drawProblem(options: DrawOptions, random: Random): GeneratedProblem {
  const { d, k, rowsPerPredictor, intercept, meanShift, noise } = options;
  const n = Math.round(rowsPerPredictor * d * k);
  const weights = drawWeights(k, random);
  const slopes = separatedVectors(k, d, random);
  const coefficients = slopes.map((s) => {
    if (!intercept) return s;
    const c = new Float64Array(d + 1);
    c[0] = 2 * random.next() - 1;
    c.set(s, 1);
    return c;
  });
  const sigmas = weights.map(() => noise[0] + (noise[1] - noise[0]) * random.next());
  const counts = rowCounts(weights, n, d + 2);
  const total = counts.reduce((s, c) => s + c, 0);
  const order = shuffleInPlace(Int32Array.from({ length: total }, (_, i) => i), random);
  const x = new Float64Array(total * d);
  const y = new Float64Array(total);
  const labels = new Int32Array(total);
  const z = new Float64Array(d);
  let next = 0;
  for (let c = 0; c < k; c++) {
    const root = randomCovarianceRoot(d, random);
    const mean = new Float64Array(d);
    for (let j = 0; j < d; j++) mean[j] = meanShift * random.normal();
    for (let r = 0; r < counts[c]; r++) {
      const row = order[next++];
      for (let j = 0; j < d; j++) z[j] = random.normal();
      let fitted = intercept ? coefficients[c][0] : 0;
      const offset = intercept ? 1 : 0;
      for (let i = 0; i < d; i++) {
        let v = mean[i];
        for (let j = 0; j < d; j++) v += root[i * d + j] * z[j];
        x[row * d + i] = v;
        fitted += coefficients[c][offset + i] * v;
      }
      y[row] = fitted + sigmas[c] * random.normal();
      labels[row] = c;
    }
  }
  const finalWeights = counts.map((c) => c / total);
  return { data: { x, y, n: total, p: d }, k, intercept, coefficients, weights: finalWeights, sigmas, labels };
}

/** Item 6(i): noiseless, zero-mean designs with per-component covariances, no intercept. */
export function noiselessProblem(d: number, k: number, rowsPerPredictor: number, random: Random): GeneratedProblem {
  return drawProblem({ d, k, rowsPerPredictor, intercept: false, meanShift: 0, noise: [0, 0] }, random);
}

/**
 * Item 6(ii): noise SD between 0.05 and 0.15 per component, intercepts uniform in [−1, 1],
 * each component's design mean shifted by N(0, 0.5²) per coordinate.
 */
export function noisyProblem(d: number, k: number, rowsPerPredictor: number, random: Random): GeneratedProblem {
  return drawProblem({ d, k, rowsPerPredictor, intercept: true, meanShift: 0.5, noise: [0.05, 0.15] }, random);
}

/**
 * Noisier sheets: as noisyProblem, with noise SD 0.3-1 per component (the slopes have unit
 * length and the predictors variances 0.5-2), so that neighbouring components overlap and
 * different starts can reach different optima.
 */
export function noisierProblem(d: number, k: number, rowsPerPredictor: number, random: Random): GeneratedProblem {
  return drawProblem({ d, k, rowsPerPredictor, intercept: true, meanShift: 0.5, noise: [0.3, 1] }, random);
}

/**
 * Well-separated scan problems: p = 2 predictors drawn N(0, 1) independently, an intercept,
 * weights 0.5/K + 0.5·Dirichlet(1,…,1) so each is at least 0.5/K, noise SD per component
 * uniform in [0.5, 1], and coefficient vectors (intercept and slopes) uniform in [−4, 4]³,
 * redrawn until every pair of components is at least MIN_GAP noise SDs apart in the gap of
 * checkSeparation (with x ~ N(0, I) and an intercept, Ê[xxᵀ] = I, so the gap is
 * ‖β_a − β_b‖ / sqrt((σ_a² + σ_b²)/2)). ROWS_PER_COEFFICIENT rows per coefficient per component.
 */
/** Well separated: a gap of 4 noise SDs leaves a Bayes error of Φ(−2) ≈ 2% per pair. */
export const MIN_GAP = 4;
export const ROWS_PER_COEFFICIENT = 40;
const WELL_SEPARATED_PREDICTORS = 2;

/** One well-separated problem with `k` components (see the module comment). */
export function wellSeparatedProblem(k: number, random: Random, rowsPerCoefficient = ROWS_PER_COEFFICIENT, minGap = MIN_GAP): GeneratedProblem {
  const q = WELL_SEPARATED_PREDICTORS + 1;
  const gamma = Array.from({ length: k }, () => -Math.log(1 - random.next()));
  const total = gamma.reduce((s, g) => s + g, 0);
  const weights = gamma.map((g) => 0.5 / k + (0.5 * g) / total);
  const sigmas = weights.map(() => 0.5 + 0.5 * random.next());
  let coefficients: Float64Array[];
  for (;;) {
    coefficients = weights.map(() => Float64Array.from({ length: q }, () => 8 * random.next() - 4));
    let ok = true;
    for (let a = 0; a < k && ok; a++) {
      for (let b = a + 1; b < k && ok; b++) {
        let d = 0;
        for (let j = 0; j < q; j++) d += (coefficients[a][j] - coefficients[b][j]) ** 2;
        ok = Math.sqrt(d) / Math.sqrt((sigmas[a] ** 2 + sigmas[b] ** 2) / 2) >= minGap;
      }
    }
    if (ok) break;
  }
  const n = rowsPerCoefficient * q * k;
  const x = new Float64Array(n * WELL_SEPARATED_PREDICTORS);
  const y = new Float64Array(n);
  const labels = new Int32Array(n);
  for (let i = 0; i < n; i++) {
    // Component drawn by its weight (inverse CDF of the categorical distribution).
    let u = random.next();
    let c = 0;
    while (c < k - 1 && u >= weights[c]) u -= weights[c++];
    labels[i] = c;
    let fitted = coefficients[c][0];
    for (let j = 0; j < WELL_SEPARATED_PREDICTORS; j++) {
      const v = random.normal();
      x[i * WELL_SEPARATED_PREDICTORS + j] = v;
      fitted += coefficients[c][j + 1] * v;
    }
    y[i] = fitted + sigmas[c] * random.normal();
  }
  return { data: { x, y, n, p: WELL_SEPARATED_PREDICTORS }, k, intercept: true, coefficients, sigmas, weights, labels };
}

export interface ProblemSettings {
  n: number;
  p: number;
  k: number;
  seed: number;
  /** Noise SD (0 = noiseless). */
  sigma: number;
  intercept: boolean;
  /** Shift of each component's design mean, in SDs of x (0 = all centred). */
  meanShift?: number;
  /** Per-component random design covariance with eigenvalues in [0.5, 2]. */
  componentCovariance?: boolean;
  /** Smallest distance between component coefficient vectors. */
  minSeparation?: number;
}

/**
 * Seeded generator: components' coefficients drawn uniformly in the unit ball (rejecting
 * draws closer than minSeparation to an earlier one), intercepts in [−2, 2], equal weights
 * with shuffled labels, designs N(shift_k, C_k), Gaussian noise.
 */
export function generateProblem(settings: ProblemSettings): GeneratedProblem & { sigma: number } {
  const { n, p, k, sigma, intercept } = settings;
  const random = createRandom(settings.seed);
  const q = intercept ? p + 1 : p;
  const minSeparation = settings.minSeparation ?? 0.3;
  const slopes: Float64Array[] = [];
  for (let attempt = 0; slopes.length < k && attempt < 10000; attempt++) {
    const candidate = pointInUnitBall(p, random);
    if (slopes.every((s) => Math.hypot(...s.map((v, j) => v - candidate[j])) >= minSeparation)) slopes.push(candidate);
  }
  const coefficients = slopes.map((s) => {
    const full = new Float64Array(q);
    if (intercept) full[0] = 4 * random.next() - 2;
    full.set(s, intercept ? 1 : 0);
    return full;
  });
  const shifts = Array.from({ length: k }, () => Float64Array.from({ length: p }, () => (settings.meanShift ?? 0) * random.normal()));
  // Per-component covariance C = A Aᵀ with A from randomCovarianceRoot.
  const mixers = Array.from({ length: k }, () => (settings.componentCovariance ? randomCovarianceRoot(p, random) : null));
  const labels = new Int32Array(n);
  for (let i = 0; i < n; i++) labels[i] = i % k;
  for (let i = n - 1; i > 0; i--) {
    const j = random.integer(i + 1);
    const held = labels[i];
    labels[i] = labels[j];
    labels[j] = held;
  }
  const x = new Float64Array(n * p);
  const y = new Float64Array(n);
  const z = new Float64Array(p);
  for (let i = 0; i < n; i++) {
    const c = labels[i];
    for (let j = 0; j < p; j++) z[j] = random.normal();
    const mixer = mixers[c];
    for (let j = 0; j < p; j++) {
      let value = z[j];
      if (mixer) {
        value = 0;
        for (let l = 0; l < p; l++) value += mixer[j * p + l] * z[l];
      }
      x[i * p + j] = value + shifts[c][j];
    }
    let fitted = intercept ? coefficients[c][0] : 0;
    for (let j = 0; j < p; j++) fitted += x[i * p + j] * coefficients[c][(intercept ? 1 : 0) + j];
    y[i] = fitted + sigma * random.normal();
  }
  const weights = Array.from({ length: k }, (_, c) => Math.floor((n - c + k - 1) / k) / n);
  return { data: { x, y, n, p }, k, intercept, coefficients, weights, sigmas: weights.map(() => sigma), labels, sigma };
}

/**
 * Fitted components matched to the true ones by the optimal assignment on squared coefficient
 * distance (solveAssignment): for each true component, the index of its fitted one.
 */
export function matchToTruth(fitted: readonly Float64Array[], truth: readonly Float64Array[]): Int32Array {
  const k = truth.length;
  const cost = new Float64Array(k * k);
  for (let a = 0; a < k; a++) {
    for (let b = 0; b < k; b++) {
      let s = 0;
      for (let j = 0; j < truth[b].length; j++) s += (fitted[a][j] - truth[b][j]) ** 2;
      cost[a * k + b] = s;
    }
  }
  return solveAssignment(cost, k);
}

/** Largest relative error ‖β̂_k − β_k‖ / ‖β_k‖ over the matched components. */
export function relativeCoefficientError(fitted: readonly Float64Array[], truth: readonly Float64Array[]): number {
  const match = matchToTruth(fitted, truth);
  let worst = 0;
  truth.forEach((t, c) => {
    const f = fitted[match[c]];
    let difference = 0;
    let size = 0;
    for (let j = 0; j < t.length; j++) {
      difference += (f[j] - t[j]) ** 2;
      size += t[j] * t[j];
    }
    worst = Math.max(worst, Math.sqrt(difference / Math.max(size, 1e-300)));
  });
  return worst;
}

/** Root of the summed squared coefficient errors over the matched components. */
export function totalCoefficientError(fitted: readonly Float64Array[], truth: readonly Float64Array[]): number {
  const match = matchToTruth(fitted, truth);
  let s = 0;
  truth.forEach((t, c) => {
    for (let j = 0; j < t.length; j++) s += (fitted[match[c]][j] - t[j]) ** 2;
  });
  return Math.sqrt(s);
}
