/**
 * Noise variances of the M-step under the two guards against degenerate fits:
 *  - a floor (any q rows are fitted exactly, so without a floor the likelihood is unbounded);
 *  - a bound c on the ratio of the smallest to the largest variance (Hathaway 1985, Annals of
 *    Statistics 13, "A constrained formulation of maximum-likelihood estimation for normal
 *    mixture distributions"), under which the constrained likelihood has a global maximum.
 *
 * Exact constrained maximiser for univariate variances (Hathaway 1985, section 3; the same
 * clipping form as Ingrassia 2004, Statistical Methods and Applications 13): the optimum
 * clips each unconstrained variance s_k into [a, a/c] for the best lower end a. The M-step
 * objective Σ_k n_k (log v_k + s_k / v_k) is minimised over a piecewise: between breakpoints
 * (the s_k and c·s_k) the clipped sets are fixed and the best a is their weighted mean
 * (s_k for components clipped up, c·s_k for those clipped down). Being exact keeps EM monotone.
 *
 * @param unconstrained s_k = Σ_i τ_ik r_ik² / n_k (may be 0)
 * @param sizes n_k = Σ_i τ_ik
 * @param out receives the constrained variances
 * @returns true when a bound was active
 */
export function constrainedVariances(unconstrained: Float64Array, sizes: Float64Array, ratioBound: number, floor: number, out: Float64Array): boolean {
  const k = unconstrained.length;
  let smallest = Infinity;
  let largest = 0;
  for (let j = 0; j < k; j++) {
    smallest = Math.min(smallest, unconstrained[j]);
    largest = Math.max(largest, unconstrained[j]);
  }
  if (smallest >= floor && smallest >= ratioBound * largest) {
    out.set(unconstrained);
    return false;
  }
  // Candidate lower ends: every breakpoint and the best a inside every interval between them.
  const breakpoints: number[] = [floor];
  for (let j = 0; j < k; j++) {
    if (unconstrained[j] > floor) breakpoints.push(unconstrained[j]);
    if (ratioBound * unconstrained[j] > floor) breakpoints.push(ratioBound * unconstrained[j]);
  }
  breakpoints.sort((a, b) => a - b);
  let bestLower = floor;
  let bestObjective = Infinity;
  const consider = (lower: number): void => {
    if (!(lower >= floor) || !Number.isFinite(lower)) return;
    const objective = clippedObjective(unconstrained, sizes, lower, lower / ratioBound);
    if (objective < bestObjective) {
      bestObjective = objective;
      bestLower = lower;
    }
  };
  for (let b = 0; b < breakpoints.length; b++) {
    consider(breakpoints[b]);
    const low = breakpoints[b];
    const high = b + 1 < breakpoints.length ? breakpoints[b + 1] : Infinity;
    const middle = high === Infinity ? low * 2 : 0.5 * (low + high);
    // With a inside (low, high): clipped up are s_j < a, clipped down are s_j > a / c.
    let numerator = 0;
    let denominator = 0;
    for (let j = 0; j < k; j++) {
      if (unconstrained[j] < middle) {
        numerator += sizes[j] * unconstrained[j];
        denominator += sizes[j];
      } else if (unconstrained[j] > middle / ratioBound) {
        numerator += sizes[j] * ratioBound * unconstrained[j];
        denominator += sizes[j];
      }
    }
    if (denominator > 0) consider(Math.min(Math.max(numerator / denominator, low), high));
  }
  for (let j = 0; j < k; j++) out[j] = Math.min(Math.max(unconstrained[j], bestLower), bestLower / ratioBound);
  return true;
}

function clippedObjective(unconstrained: Float64Array, sizes: Float64Array, lower: number, upper: number): number {
  let total = 0;
  for (let j = 0; j < unconstrained.length; j++) {
    const v = Math.min(Math.max(unconstrained[j], lower), upper);
    total += sizes[j] * (Math.log(v) + unconstrained[j] / v);
  }
  return total;
}
