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
const MAD_TO_SD = 1.4826;

export function referenceVariance(values: Float64Array, n: number): number {
  let mean = 0;
  for (let i = 0; i < n; i++) mean += values[i];
  mean /= n;
  let total = 0;
  for (let i = 0; i < n; i++) {
    const d = values[i] - mean;
    total += d * d;
  }
  // Two-pass variance (mean first, then centred squares: Chan, Golub & LeVeque 1983).
  const plain = total / n;
  if (!(plain > 0) || !Number.isFinite(plain) || n < 3) return plain;
  const robustSd = MAD_TO_SD * medianAbsoluteDeviation(values, n);
  const robust = robustSd * robustSd;
  return robust > 0 && plain > DOMINATED_RATIO * robust ? robust : plain;
}

function medianAbsoluteDeviation(values: Float64Array, n: number): number {
  const sorted = Float64Array.from(values.subarray(0, n)).sort();
  const centre = median(sorted);
  for (let i = 0; i < n; i++) sorted[i] = Math.abs(values[i] - centre);
  return median(sorted.sort());
}

function median(sorted: Float64Array): number {
  const n = sorted.length;
  const half = n >> 1;
  return n % 2 === 1 ? sorted[half] : 0.5 * (sorted[half - 1] + sorted[half]);
}
