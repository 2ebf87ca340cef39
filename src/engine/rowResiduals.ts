/**
 * The residual kernel: y − xᵀβ for one row, Σ x·β summed in column order and then subtracted
 * from y. rowResiduals gives a row's residuals under every component (the E-step, the observed
 * information, the warm start's subspace EM), rowResidual one component's (starts, exact
 * peeling in the fit and in the warm start, concentration steps, reseeding, memberships, least
 * squares). The SIMD module's residuals (wasm/weightedGram.wat, run by the E-step) sum in the
 * same order, so each gives the same bits. Hard assignment's predictions are a kernel of their
 * own (rowPredictions in weightedGram.ts: xᵀβ in dot's association, compared with y there).
 */

/** Components whose residuals are summed together, each value of a row loaded once for all of them. */
const RESIDUAL_GROUP = 4;

/** The length of k components of q coefficients padded with zero components up to a whole RESIDUAL_GROUP. */
export function paddedLength(k: number, q: number): number {
  return Math.ceil(k / RESIDUAL_GROUP) * RESIDUAL_GROUP * q;
}

/** k·q coefficients followed by zero components up to a multiple of RESIDUAL_GROUP (rowResiduals reads whole groups). */
export function paddedCoefficients(coefficients: Float64Array, k: number, q: number): Float64Array {
  const padded = new Float64Array(paddedLength(k, q));
  padded.set(coefficients.subarray(0, k * q));
  return padded;
}

/**
 * One row's residuals y − xᵀβ_c for every component c into out[outOffset + c]. Column j of the
 * row is 1 for j < implicitOnes, else values[rowOffset + j]; `padded` comes from
 * paddedCoefficients. Components go RESIDUAL_GROUP at a time, so each value of the row is loaded
 * once per group rather than once per component (about twice as fast at k = 3); each sum runs
 * in the same order as one component's alone, so the residuals are the same to the bit.
 */
export function rowResiduals(values: Float64Array, rowOffset: number, implicitOnes: number, q: number, padded: Float64Array, k: number, yi: number, out: Float64Array, outOffset: number): void {
  for (let c = 0; c < k; c += RESIDUAL_GROUP) {
    const b0 = c * q;
    const b1 = b0 + q;
    const b2 = b1 + q;
    const b3 = b2 + q;
    let s0 = 0;
    let s1 = 0;
    let s2 = 0;
    let s3 = 0;
    for (let j = 0; j < implicitOnes; j++) {
      s0 += padded[b0 + j];
      s1 += padded[b1 + j];
      s2 += padded[b2 + j];
      s3 += padded[b3 + j];
    }
    for (let j = implicitOnes; j < q; j++) {
      const value = values[rowOffset + j];
      s0 += value * padded[b0 + j];
      s1 += value * padded[b1 + j];
      s2 += value * padded[b2 + j];
      s3 += value * padded[b3 + j];
    }
    out[outOffset + c] = yi - s0;
    if (c + 1 < k) out[outOffset + c + 1] = yi - s1;
    if (c + 2 < k) out[outOffset + c + 2] = yi - s2;
    if (c + 3 < k) out[outOffset + c + 3] = yi - s3;
  }
}

/**
 * One row's residual y − xᵀβ under one component: design[rowOffset + j]·beta[betaOffset + j]
 * summed over j < q in order (each of rowResiduals' sums is the same), then subtracted from yi.
 */
export function rowResidual(design: Float64Array, rowOffset: number, q: number, beta: Float64Array, betaOffset: number, yi: number): number {
  let fitted = 0;
  for (let j = 0; j < q; j++) fitted += design[rowOffset + j] * beta[betaOffset + j];
  return yi - fitted;
}
