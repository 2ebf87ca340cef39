import { largestMagnitude } from "./scaledNorm";
import { MAD_TO_SD, median } from "./median";

/**
 * The variance of y that the fit's floors and its exact-fit test are measured against.
 *
 * Usually the plain variance. When a few extreme values dominate it (a typed-in 1e154 among
 * values near 10), a floor relative to it would sit far above the real noise, and every
 * component would look exact or be held at that floor. So when the plain variance exceeds
 * DOMINATED_RATIO times a robust one, the robust one is used: (1.4826 · MAD)², the median
 * absolute deviation from the median scaled to the normal SD (Hampel 1974). Ordinary data
 * never come near that ratio (for normal data the two agree to a few percent), so their fits
 * are unchanged.
 */
const DOMINATED_RATIO = 1e6;
/** Below this magnitude squares and their sums cannot overflow, and the variance is computed directly. */
const DIRECT_LIMIT = 1e150;

export function referenceVariance(values: Float64Array, n: number): number {
  if (!(largestMagnitude(values, n) <= DIRECT_LIMIT)) {
    const spread = referenceSpread(values, n);
    return spread * spread;
  }
  return varianceInUnits(values, n, 1);
}

/**
 * The square root of referenceVariance, computed in units of the largest magnitude so that it
 * stays finite for values up to the largest doubles (the command line and the worksheet
 * results test exact fits on the user's own numbers, which the fit's scaling never touched).
 */
export function referenceSpread(values: Float64Array, n: number): number {
  const largest = largestMagnitude(values, n);
  if (!(largest > 0) || !Number.isFinite(largest)) return largest === 0 ? 0 : NaN;
  const unit = largest <= DIRECT_LIMIT ? 1 : largest;
  return unit * Math.sqrt(varianceInUnits(values, n, unit));
}

/** The reference variance of values / unit: the plain one, or the robust one when a few values dominate the plain one. */
function varianceInUnits(values: Float64Array, n: number, unit: number): number {
  const plain = plainVariance(values, n, unit);
  if (!(plain > 0) || !Number.isFinite(plain) || n < 3) return plain;
  const robustSd = (MAD_TO_SD * medianAbsoluteDeviation(values, n)) / unit;
  const robust = robustSd * robustSd;
  return robust > 0 && plain > DOMINATED_RATIO * robust ? robust : plain;
}

/** Two-pass variance of values / unit (mean first, then centred squares: Chan, Golub & LeVeque 1983). */
function plainVariance(values: Float64Array, n: number, unit: number): number {
  let mean = 0;
  for (let i = 0; i < n; i++) mean += unit === 1 ? values[i] : values[i] / unit;
  mean /= n;
  let total = 0;
  for (let i = 0; i < n; i++) {
    const d = (unit === 1 ? values[i] : values[i] / unit) - mean;
    total += d * d;
  }
  return total / n;
}

/**
 * Rows the median absolute deviation is taken over at most: evenly spaced through the rows
 * beyond that. Two sorts of a million rows took about a second per workspace; 4096 rows put
 * the MAD within a few percent of the full one (the standard error of a sample median is
 * about 1.25 σ / sqrt(m)), far inside the factor of 1e6 it is compared at.
 */
const MAD_SAMPLE = 4096;

function medianAbsoluteDeviation(values: Float64Array, n: number): number {
  const m = Math.min(n, MAD_SAMPLE);
  const sample = new Float64Array(m);
  for (let t = 0; t < m; t++) sample[t] = values[m === n ? t : Math.floor((t * n) / m)];
  const scratch = Float64Array.from(sample);
  const centre = median(scratch);
  for (let t = 0; t < m; t++) scratch[t] = Math.abs(sample[t] - centre);
  return median(scratch);
}
