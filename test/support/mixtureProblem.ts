import { createRandom } from "../../src/engine/random";
import type { RegressionData } from "../../src/engine/mixtureTypes";

/** A generated mixture-of-regressions problem with its true labels and coefficients (invented demo data). */
export interface MixtureProblem {
  data: RegressionData;
  labels: Int32Array;
  /** K vectors of length q (intercept first when intercept). */
  coefficients: Float64Array[];
  sigma: number;
  intercept: boolean;
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
export function generateProblem(settings: ProblemSettings): MixtureProblem {
  const { n, p, k, sigma, intercept } = settings;
  const random = createRandom(settings.seed);
  const q = intercept ? p + 1 : p;
  const minSeparation = settings.minSeparation ?? 0.3;
  const slopes: Float64Array[] = [];
  for (let attempt = 0; slopes.length < k && attempt < 10000; attempt++) {
    const candidate = new Float64Array(p);
    let norm = 0;
    for (let j = 0; j < p; j++) {
      candidate[j] = random.normal();
      norm += candidate[j] ** 2;
    }
    const radius = Math.pow(random.next(), 1 / p) / Math.sqrt(norm);
    for (let j = 0; j < p; j++) candidate[j] *= radius;
    if (slopes.every((s) => Math.hypot(...s.map((v, j) => v - candidate[j])) >= minSeparation)) slopes.push(candidate);
  }
  const coefficients = slopes.map((s) => {
    const full = new Float64Array(q);
    if (intercept) full[0] = 4 * random.next() - 2;
    full.set(s, intercept ? 1 : 0);
    return full;
  });
  const shifts = Array.from({ length: k }, () => Float64Array.from({ length: p }, () => (settings.meanShift ?? 0) * random.normal()));
  // Per-component covariance: random orthogonal-ish mixing A with C = A Aᵀ, A = Q diag(√λ) built
  // from Gram–Schmidt of a Gaussian matrix and eigenvalues λ in [0.5, 2].
  const mixers = Array.from({ length: k }, () => (settings.componentCovariance ? randomMixer(p, random) : null));
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
  return { data: { x, y, n, p }, labels, coefficients, sigma, intercept };
}

function randomMixer(p: number, random: ReturnType<typeof createRandom>): Float64Array {
  const basis = new Float64Array(p * p);
  for (let j = 0; j < p; j++) {
    for (let l = 0; l < p; l++) basis[j * p + l] = random.normal();
    for (let m = 0; m < j; m++) {
      let dot = 0;
      for (let l = 0; l < p; l++) dot += basis[j * p + l] * basis[m * p + l];
      for (let l = 0; l < p; l++) basis[j * p + l] -= dot * basis[m * p + l];
    }
    let norm = 0;
    for (let l = 0; l < p; l++) norm += basis[j * p + l] ** 2;
    norm = Math.sqrt(norm);
    for (let l = 0; l < p; l++) basis[j * p + l] /= norm;
  }
  // A = Bᵀ diag(√λ): columns scaled basis vectors.
  const mixer = new Float64Array(p * p);
  for (let m = 0; m < p; m++) {
    const root = Math.sqrt(0.5 + 1.5 * random.next());
    for (let l = 0; l < p; l++) mixer[l * p + m] = basis[m * p + l] * root;
  }
  return mixer;
}

/**
 * Largest relative coefficient error after matching each true component to the nearest fitted
 * one: max_k ‖β̂_k − β_k‖ / max(‖β_k‖, 1e-300) under the best assignment (all K! for K ≤ 7).
 */
export function relativeCoefficientError(fitted: Float64Array[], truth: Float64Array[]): number {
  const k = truth.length;
  let best = Infinity;
  const permutation = Array.from({ length: k }, (_, i) => i);
  const visit = (depth: number): void => {
    if (depth === k) {
      let worst = 0;
      for (let c = 0; c < k; c++) {
        const f = fitted[permutation[c]];
        const t = truth[c];
        let diff = 0;
        let norm = 0;
        for (let j = 0; j < t.length; j++) {
          diff += (f[j] - t[j]) ** 2;
          norm += t[j] ** 2;
        }
        worst = Math.max(worst, Math.sqrt(diff) / Math.max(Math.sqrt(norm), 1e-300));
      }
      best = Math.min(best, worst);
      return;
    }
    for (let i = depth; i < k; i++) {
      [permutation[depth], permutation[i]] = [permutation[i], permutation[depth]];
      visit(depth + 1);
      [permutation[depth], permutation[i]] = [permutation[i], permutation[depth]];
    }
  };
  visit(0);
  return best;
}
