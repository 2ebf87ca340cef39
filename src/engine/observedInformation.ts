import type { MixtureFit, RegressionData } from "./mixtureTypes";
import { computeMemberships } from "./computeMemberships";
import { dataMatrix } from "./regressionMatrix";

/**
 * The observed information matrix of a mixture of regressions at a fit's parameters, by
 * Louis's (1982, JRSS-B) identity applied row by row. Parameters θ, in this order:
 * β_1..β_K (q each, q = design columns), σ_1²..σ_K², then K − 1 free logits η_1..η_{K−1} of the
 * weights (π_k = e^{η_k} / Σ_j e^{η_j}, η_K = 0 for the last component as reference, so the
 * constraint Σ π = 1 needs no multiplier).
 *
 * With a_ik the gradient and B_ik the negative Hessian of ln(π_k φ(y_i; x_iᵀβ_k, σ_k²)), τ_ik
 * the memberships and s_i = Σ_k τ_ik a_ik:
 *   I_obs = Σ_i [ Σ_k τ_ik B_ik − Σ_k τ_ik a_ik a_ikᵀ + s_i s_iᵀ ].
 * Pieces (r = y_i − x_iᵀβ_k, v = σ_k²):
 *   ∂/∂β_k = r x / v;   ∂/∂v = (r²/v − 1)/(2v);   ∂ ln π_k/∂η_j = δ_kj − π_j;
 *   −∂²/∂β∂βᵀ = x xᵀ / v;   −∂²/∂β∂v = r x / v²;   −∂²/∂v² = r²/v³ − 1/(2v²);
 *   −∂² ln π_k/∂η_j∂η_l = π_j δ_jl − π_j π_l.
 *
 * In the joint model the memberships include the x densities, but the x-model parameters
 * (μ_k, Σ_k) are held at their estimates: this is the information about (β, σ², η) given
 * them, which leaves out the (usually small) share of uncertainty they pass on.
 */
export interface ObservedInformation {
  /** P x P row-major, P = K·q + K + (K − 1). */
  matrix: Float64Array;
  size: number;
  /** Design columns per component (p + 1 with an intercept, p without). */
  q: number;
  k: number;
  /** Offsets of the blocks in θ. */
  varianceOffset: number;
  logitOffset: number;
}

export function observedInformation(data: RegressionData, fit: MixtureFit): ObservedInformation {
  const k = fit.k;
  const { matrix: design, q } = dataMatrix(data, fit.intercept);
  const n = data.n;
  const { memberships } = computeMemberships(fit, design, q, data.y, data.x, n);
  const varianceOffset = k * q;
  const logitOffset = varianceOffset + k;
  const size = logitOffset + (k - 1);
  const info = new Float64Array(size * size);
  const weights = fit.components.map((c) => c.weight);
  const variances = fit.components.map((c) => c.sigma * c.sigma);
  const shift = fit.components[0].coefficients.length - q;

  // Scratch allocated once: the gradient of each component's term for the current row, and s_i.
  const gradients = new Float64Array(k * size);
  const score = new Float64Array(size);
  // Positions of each component's non-zero gradient entries: its β block, its σ², all logits.
  const support: Int32Array[] = [];
  for (let c = 0; c < k; c++) {
    const positions: number[] = [];
    for (let j = 0; j < q; j++) positions.push(c * q + j);
    positions.push(varianceOffset + c);
    for (let j = 0; j < k - 1; j++) positions.push(logitOffset + j);
    support.push(Int32Array.from(positions));
  }
  const add = (a: number, b: number, value: number): void => {
    info[a * size + b] += value;
  };

  // The logit block of B_ik is the same for every k and every row; Σ_k τ_ik = 1, so it adds n times.
  for (let j = 0; j < k - 1; j++) {
    for (let l = 0; l < k - 1; l++) add(logitOffset + j, logitOffset + l, n * ((j === l ? weights[j] : 0) - weights[j] * weights[l]));
  }

  for (let i = 0; i < n; i++) {
    const row = i * q;
    score.fill(0);
    for (let c = 0; c < k; c++) {
      const tau = memberships[i * k + c];
      const beta = fit.components[c].coefficients;
      const v = variances[c];
      let fitted = 0;
      for (let j = 0; j < q; j++) fitted += design[row + j] * beta[shift + j];
      const r = data.y[i] - fitted;
      const g = gradients.subarray(c * size, (c + 1) * size);
      for (let j = 0; j < q; j++) g[c * q + j] = (r * design[row + j]) / v;
      g[varianceOffset + c] = (r * r / v - 1) / (2 * v);
      for (let j = 0; j < k - 1; j++) g[logitOffset + j] = (j === c ? 1 : 0) - weights[j];

      if (tau === 0) continue;
      // τ B_ik for the β and σ² blocks.
      for (let a = 0; a < q; a++) {
        const xa = design[row + a];
        for (let b = 0; b < q; b++) add(c * q + a, c * q + b, (tau * xa * design[row + b]) / v);
        const cross = (tau * r * xa) / (v * v);
        add(c * q + a, varianceOffset + c, cross);
        add(varianceOffset + c, c * q + a, cross);
      }
      add(varianceOffset + c, varianceOffset + c, tau * ((r * r) / (v * v * v) - 1 / (2 * v * v)));
      // − τ a aᵀ over the component's support, and s_i += τ a.
      const positions = support[c];
      for (let u = 0; u < positions.length; u++) {
        const pu = positions[u];
        const gu = tau * g[pu];
        score[pu] += gu;
        for (let w = 0; w < positions.length; w++) add(pu, positions[w], -gu * g[positions[w]]);
      }
    }
    // + s_i s_iᵀ (s_i is dense: every component's β, σ² and the logits).
    for (let a = 0; a < size; a++) {
      const sa = score[a];
      if (sa === 0) continue;
      const offset = a * size;
      for (let b = 0; b < size; b++) info[offset + b] += sa * score[b];
    }
  }
  return { matrix: info, size, q, k, varianceOffset, logitOffset };
}
