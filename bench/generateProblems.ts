/**
 * Seeded generator of the accuracy problems of issue 3, item 6:
 *
 * (i)  noiseless mixtures of K linear regressions without intercept; each component draws
 *      its rows from a zero-mean Gaussian with its own covariance C_k = R_k diag(λ) R_kᵀ
 *      (λ uniform in [0.5, 2], R_k a uniformly random rotation); smallest weight at least
 *      0.5/K; component vectors uniform in the unit ball and at least 0.3 apart.
 * (ii) noisy mixtures with intercepts and shifted design means (each component's x is
 *      centred at its own mean), for comparison with an oracle that knows the labels.
 *
 * Everything is drawn from the one Random passed in, so a seed fixes the problem.
 */
import type { Random } from "../src/engine/random";
import { shuffleInPlace } from "../src/engine/random";
import type { RegressionData } from "../src/engine/mixtureTypes";

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

/** Smallest allowed distance between two component vectors (issue 3, item 6(i)). */
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
