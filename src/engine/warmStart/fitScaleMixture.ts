/**
 * A one-dimensional mixture of Gaussians fitted to residuals by a few EM steps (Dempster,
 * Laird & Rubin 1977). With `centred` the means are held at 0: the residuals y − ⟨a, x⟩ of a
 * mixture of regressions with zero-mean Gaussian designs form exactly such a scale mixture,
 * with variances ‖C_k^½(β_k − a)‖² + σ_k² (METHODS.md, moment descent). With an intercept the
 * components' residuals are shifted, so the means are free.
 */
export interface ScaleMixture {
  /** Variances in increasing order. */
  variances: Float64Array;
  /** Matching weights. */
  weights: Float64Array;
  /** Matching means (all 0 when centred). */
  means: Float64Array;
}

/** EM steps per fit: enough to separate scales that differ by a factor of two or more. */
const EM_STEPS = 30;

/**
 * Variance floor relative to the mean square residual: a component that fits rows exactly
 * would otherwise collapse to variance 0 and stall EM (the likelihood is unbounded there).
 * 1e-26 keeps rounding-level fits (relative residuals near 1e-13) distinguishable.
 */
const RELATIVE_VARIANCE_FLOOR = 1e-26;

/**
 * @param responsibilities scratch of length n·k, allocated once by the caller
 */
export function fitScaleMixture(residuals: Float64Array, n: number, k: number, centred: boolean, responsibilities: Float64Array): ScaleMixture {
  let meanSquare = 0;
  for (let i = 0; i < n; i++) meanSquare += residuals[i] * residuals[i];
  meanSquare /= n;
  const floor = Math.max(RELATIVE_VARIANCE_FLOOR * meanSquare, Number.MIN_VALUE);
  const variances = new Float64Array(k);
  const weights = new Float64Array(k).fill(1 / k);
  const means = new Float64Array(k);
  // Start from quantiles of r²: the j-th component takes the j-th slice of sorted squares.
  const squares = new Float64Array(n);
  for (let i = 0; i < n; i++) squares[i] = residuals[i] * residuals[i];
  squares.sort();
  for (let j = 0; j < k; j++) {
    const from = Math.floor((j * n) / k);
    const to = Math.max(from + 1, Math.floor(((j + 1) * n) / k));
    let s = 0;
    for (let i = from; i < to; i++) s += squares[i];
    variances[j] = Math.max(floor, s / (to - from));
  }
  const logWeights = new Float64Array(k);
  for (let step = 0; step < EM_STEPS; step++) {
    for (let j = 0; j < k; j++) logWeights[j] = Math.log(weights[j]) - 0.5 * Math.log(variances[j]);
    // E-step in log space with the row maximum subtracted (log-sum-exp).
    for (let i = 0; i < n; i++) {
      const r = residuals[i];
      const row = i * k;
      let best = -Infinity;
      for (let j = 0; j < k; j++) {
        const d = r - means[j];
        const l = logWeights[j] - (0.5 * d * d) / variances[j];
        responsibilities[row + j] = l;
        if (l > best) best = l;
      }
      let total = 0;
      for (let j = 0; j < k; j++) {
        const e = Math.exp(responsibilities[row + j] - best);
        responsibilities[row + j] = e;
        total += e;
      }
      const inv = 1 / total;
      for (let j = 0; j < k; j++) responsibilities[row + j] *= inv;
    }
    // M-step.
    for (let j = 0; j < k; j++) {
      let mass = 0;
      let first = 0;
      for (let i = 0; i < n; i++) {
        const t = responsibilities[i * k + j];
        mass += t;
        first += t * residuals[i];
      }
      if (mass < 1e-9 * n) {
        // An emptied component restarts at the overall scale rather than dividing by zero.
        weights[j] = 1e-9;
        variances[j] = meanSquare;
        means[j] = 0;
        continue;
      }
      const mean = centred ? 0 : first / mass;
      let second = 0;
      for (let i = 0; i < n; i++) {
        const d = residuals[i] - mean;
        second += responsibilities[i * k + j] * d * d;
      }
      weights[j] = mass / n;
      means[j] = mean;
      variances[j] = Math.max(floor, second / mass);
    }
  }
  const order = Array.from({ length: k }, (_, j) => j).sort((a, b) => variances[a] - variances[b]);
  return {
    variances: Float64Array.from(order, (j) => variances[j]),
    weights: Float64Array.from(order, (j) => weights[j]),
    means: Float64Array.from(order, (j) => means[j]),
  };
}
