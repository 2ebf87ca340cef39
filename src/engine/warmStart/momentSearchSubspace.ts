import { topEigenvectors, type EigenPairs } from "./topEigenvectors";

/**
 * Search directions for moment descent with per-component design covariances ("moment
 * descent for mixed linear regression with per-component design covariances", COLT 2018).
 *
 * For whitened rows of component k with covariance C_k and residual r = ⟨w_k, x⟩,
 * v_k = w_kᵀC_kw_k, Gaussian conditioning gives
 *   E[r^{2p} x xᵀ] / (2p−1)!! = v_k^p C_k + 2p v_k^{p−1} C_k w_k w_kᵀ C_k.
 * Combining p = 0..K with the coefficients c_p of P(z) = Π_j (z − v_j) cancels every
 * isotropic term C_k (P(v_k) = 0) and leaves
 *   Σ_p c_p E[r^{2p} x xᵀ]/(2p−1)!! = 2 Σ_k π_k P'(v_k) C_k w_k w_kᵀ C_k,
 * rank K, spanned by the descent directions C_k w_k (a step a ← a + t C_k w_k moves a
 * towards β_k since w_kᵀC_kw_k > 0).
 *
 * One weighted second moment suffices: the row weight Σ_p c_p r^{2p}/(2p−1)!! is computed
 * per row first, so the cost is one pass of n·p² whatever K.
 *
 * @param variances estimated residual variances v_j of the 1-D scale mixture
 * @param weightScratch length n
 * @param momentScratch length p·p
 */
export function momentSearchSubspace(
  x: Float64Array,
  residuals: Float64Array,
  n: number,
  p: number,
  variances: Float64Array,
  count: number,
  weightScratch: Float64Array,
  momentScratch: Float64Array,
): EigenPairs {
  const k = variances.length;
  // Work in units of the widest variance so that r^{2K} neither overflows nor underflows.
  let scale = 0;
  for (let j = 0; j < k; j++) scale = Math.max(scale, variances[j]);
  if (!(scale > 0)) scale = 1;
  // Coefficients of Π_j (z − v_j/scale), lowest degree first.
  const c = new Float64Array(k + 1);
  c[0] = 1;
  for (let j = 0; j < k; j++) {
    const root = variances[j] / scale;
    for (let m = j + 1; m >= 1; m--) c[m] = c[m - 1] - root * c[m];
    c[0] = -root * c[0];
  }
  // c_p / (2p−1)!!, with (−1)!! = 1: Gaussian even moments E[g^{2p}] = (2p−1)!!.
  let doubleFactorial = 1;
  for (let m = 1; m <= k; m++) {
    doubleFactorial *= 2 * m - 1;
    c[m] /= doubleFactorial;
  }
  for (let i = 0; i < n; i++) {
    const z = (residuals[i] * residuals[i]) / scale;
    // Horner's rule for Σ_p c_p z^p.
    let w = c[k];
    for (let m = k - 1; m >= 0; m--) w = w * z + c[m];
    weightScratch[i] = w;
  }
  momentScratch.fill(0);
  for (let i = 0; i < n; i++) {
    const w = weightScratch[i];
    const row = i * p;
    for (let a = 0; a < p; a++) {
      const wa = w * x[row + a];
      const out = a * p;
      for (let b = 0; b <= a; b++) momentScratch[out + b] += wa * x[row + b];
    }
  }
  for (let a = 0; a < p; a++) {
    for (let b = 0; b <= a; b++) momentScratch[b * p + a] = momentScratch[a * p + b];
  }
  return topEigenvectors(momentScratch, p, count, true);
}
