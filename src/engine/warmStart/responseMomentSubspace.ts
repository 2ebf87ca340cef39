import { topEigenvectors, type EigenPairs } from "./topEigenvectors";
import { meanOuterProduct } from "../secondMoment";

/**
 * The response-weighted second moment M = mean(y² x̃x̃ᵀ) − mean(y²) I of whitened predictors
 * and its top-K eigenvectors. For standard Gaussian x̃ and y = ⟨w_k, x̃⟩ + ε in component k,
 * E[y²(x̃x̃ᵀ − I)] = 2 Σ_k π_k w_k w_kᵀ (Stein's identity; Yi, Caramanis & Sanghavi 2014, ICML;
 * Zhong, Jain & Dhillon 2016, NeurIPS): rank K, the noise cancels, and the top-K eigenvectors
 * span the component vectors.
 *
 * @param x n x p whitened predictors (row-major)
 * @param y responses (centred by the caller when the fit has an intercept)
 */
export function responseMomentSubspace(x: Float64Array, y: Float64Array, n: number, p: number, k: number): EigenPairs {
  const squares = new Float64Array(n);
  let meanSquare = 0;
  for (let i = 0; i < n; i++) {
    squares[i] = y[i] * y[i];
    meanSquare += squares[i];
  }
  meanSquare /= n;
  const moment = meanOuterProduct(x, n, p, squares, false);
  for (let a = 0; a < p; a++) moment[a * p + a] -= meanSquare;
  return topEigenvectors(moment, p, k, false);
}
