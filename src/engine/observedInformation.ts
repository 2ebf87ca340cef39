import type { MixtureFit, RegressionData } from "./mixtureTypes";
import { predictorLogDensity, predictorModels } from "./computeMemberships";
import { LOG_TWO_PI, membershipsFromLogTerms } from "./logDensities";

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
 *
 * With a background component (flat density, weight π₀; Banfield & Raftery 1993) the
 * components' weights are π_k = (1 − π₀) w_k with w = softmax(η), and π₀ is held at its
 * estimate like the x-model. The background term has no gradient in θ but takes its share of
 * each row's membership, so τ_ik are the full posteriors and T_i = Σ_k τ_ik ≤ 1; a row the
 * background owns adds nothing. The logit pieces then carry T_i (derived from the same sums):
 *   β_c η_j, σ²_c η_j: the factor (δ_cj − τ_j) becomes (δ_cj − τ_j − (1 − T) w_j);
 *   η_j η_l: T w_j δ_jl − τ_j δ_jl + τ_j τ_l + (1 − T)(τ_j w_l + w_j τ_l) − (2T − T²) w_j w_l.
 * Without a background T = 1 and w = π, and these are the pieces below.
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

/**
 * Accumulated in one pass over the rows with the structure of the gradient written out (a_ik
 * is non-zero on component k's β (r x / v), its σ² and the logits), so that
 * Σ_k τ B − (Σ_k τ a aᵀ − s sᵀ) becomes, per row, a few scalars times x xᵀ, x or 1:
 *   β_c β_d:  x xᵀ · [δ_cd τ_c (1/v_c − α_c²) + τ_c α_c τ_d α_d],   α = r / v;
 *   β_c σ²_d: x · [δ_cd τ_c α_c (1/v_c − γ_c) + τ_c α_c τ_d γ_d],     γ = (r²/v − 1)/(2v);
 *   β_c η_j:  x · [−τ_c α_c (δ_cj − τ_j)];
 *   σ²_c σ²_d: δ_cd τ_c (r²/v³ − 1/(2v²) − γ_c²) + τ_c γ_c τ_d γ_d;
 *   σ²_c η_j: −τ_c γ_c (δ_cj − τ_j);   η_j η_l: n(π_j δ_jl − π_j π_l) − Σ_i (τ_j δ_jl − τ_j τ_l).
 * Each β block is a weighted Gram matrix over flat arrays (upper triangle, mirrored at the
 * end): about K(K + 1)/2 · q(q + 1)/2 multiply-adds per row instead of the dense (Kq)² of
 * s sᵀ.
 */
export function observedInformation(data: RegressionData, fit: MixtureFit): ObservedInformation {
  const k = fit.k;
  const p = data.p;
  const q = fit.intercept ? p + 1 : p;
  const n = data.n;
  const y = data.y;
  const x = data.x;
  // Memberships come from the E-step kernel in the same pass (no n x k array, no design copy:
  // each row's design values go to a q-long scratch).
  const models = fit.model === "joint" ? predictorModels(fit) : null;
  const predictorScratch = new Float64Array(p);
  const design = new Float64Array(q);
  const background = fit.background ?? null;
  // One more log term for the background, when the fit has one.
  const terms = background ? k + 1 : k;
  const logTerm = new Float64Array(terms);
  const posterior = new Float64Array(terms);
  if (background) logTerm[k] = Math.log(background.weight) + background.logDensity;
  const residual = new Float64Array(k);
  const varianceOffset = k * q;
  const logitOffset = varianceOffset + k;
  const logits = k - 1;
  const size = logitOffset + logits;
  // The softmax weights w (the components' share of 1 − π₀).
  const componentShare = background ? 1 - background.weight : 1;
  const weights = Float64Array.from(fit.components, (c) => c.weight / componentShare);
  const variances = Float64Array.from(fit.components, (c) => c.sigma * c.sigma);
  const shift = fit.components[0].coefficients.length - q;
  const constant = Float64Array.from(fit.components, (c) => Math.log(c.weight) - 0.5 * (LOG_TWO_PI + Math.log(c.sigma * c.sigma)));
  const coefficients = new Float64Array(k * q);
  fit.components.forEach((c, index) => coefficients.set(c.coefficients.subarray(shift, shift + q), index * q));

  // Accumulators: one q x q Gram per component pair c ≤ d (upper triangle), q-vectors for the
  // β-σ² and β-logit blocks, and the small σ²/logit blocks.
  const pairs = (k * (k + 1)) / 2;
  const grams = new Float64Array(pairs * q * q);
  const betaVariance = new Float64Array(k * k * q);
  const betaLogit = new Float64Array(k * logits * q);
  const varianceVariance = new Float64Array(k * k);
  const varianceLogit = new Float64Array(k * logits);
  const logitLogit = new Float64Array(logits * logits);
  // Per-row scalars, allocated once.
  const tau = new Float64Array(k);
  const alpha = new Float64Array(k);
  const gamma = new Float64Array(k);
  const curvature = new Float64Array(k);
  const pairWeight = new Float64Array(pairs);
  const vectorWeight = new Float64Array(k * k + k * logits);

  for (let i = 0; i < n; i++) {
    if (fit.intercept) design[0] = 1;
    for (let j = 0; j < p; j++) design[q - p + j] = x[i * p + j];
    for (let c = 0; c < k; c++) {
      let fitted = 0;
      for (let j = 0; j < q; j++) fitted += design[j] * coefficients[c * q + j];
      const r = y[i] - fitted;
      residual[c] = r;
      let value = constant[c] - (0.5 * r * r) / variances[c];
      if (models) value += predictorLogDensity(models[c], x, i * p, p, predictorScratch);
      logTerm[c] = value;
    }
    membershipsFromLogTerms(logTerm, 0, terms, posterior, 0);
    let total = 0;
    for (let c = 0; c < k; c++) {
      tau[c] = posterior[c];
      total += posterior[c];
    }
    const outside = 1 - total;
    for (let c = 0; c < k; c++) {
      const r = residual[c];
      const v = variances[c];
      alpha[c] = r / v;
      gamma[c] = (r * r / v - 1) / (2 * v);
      curvature[c] = r * r / (v * v * v) - 1 / (2 * v * v);
    }
    let t = 0;
    for (let c = 0; c < k; c++) {
      const ta = tau[c] * alpha[c];
      for (let d = c; d < k; d++) pairWeight[t++] = (c === d ? tau[c] * (1 / variances[c] - alpha[c] * alpha[c]) : 0) + ta * tau[d] * alpha[d];
    }
    // Σ w_cd x xᵀ over the upper triangle, one contiguous row segment at a time.
    for (let pair = 0; pair < pairs; pair++) {
      const w = pairWeight[pair];
      if (w === 0) continue;
      const base = pair * q * q;
      for (let a = 0; a < q; a++) {
        const wa = w * design[a];
        const out = base + a * q;
        for (let b = a; b < q; b++) grams[out + b] += wa * design[b];
      }
    }
    for (let c = 0; c < k; c++) {
      const ta = tau[c] * alpha[c];
      const tg = tau[c] * gamma[c];
      for (let d = 0; d < k; d++) {
        vectorWeight[c * k + d] = (c === d ? ta * (1 / variances[c] - gamma[c]) : 0) + ta * tau[d] * gamma[d];
        varianceVariance[c * k + d] += (c === d ? tau[c] * (curvature[c] - gamma[c] * gamma[c]) : 0) + tg * tau[d] * gamma[d];
      }
      for (let j = 0; j < logits; j++) {
        const indicator = (c === j ? 1 : 0) - tau[j] - outside * weights[j];
        vectorWeight[k * k + c * logits + j] = -ta * indicator;
        varianceLogit[c * logits + j] -= tg * indicator;
      }
    }
    for (let j = 0; j < logits; j++) {
      for (let l = 0; l < logits; l++) {
        logitLogit[j * logits + l] +=
          (j === l ? (total * weights[j] - tau[j]) : 0) + tau[j] * tau[l] + outside * (tau[j] * weights[l] + weights[j] * tau[l]) - (2 * total - total * total) * weights[j] * weights[l];
      }
    }
    for (let a = 0; a < q; a++) {
      const xa = design[a];
      for (let e = 0; e < k * k; e++) betaVariance[e * q + a] += vectorWeight[e] * xa;
      for (let e = 0; e < k * logits; e++) betaLogit[e * q + a] += vectorWeight[k * k + e] * xa;
    }
  }

  const info = new Float64Array(size * size);
  const set = (a: number, b: number, value: number): void => {
    info[a * size + b] = value;
    info[b * size + a] = value;
  };
  let pair = 0;
  for (let c = 0; c < k; c++) {
    for (let d = c; d < k; d++, pair++) {
      for (let a = 0; a < q; a++) {
        for (let b = 0; b < q; b++) {
          const value = grams[pair * q * q + (a <= b ? a * q + b : b * q + a)];
          info[(c * q + a) * size + d * q + b] = value;
          info[(d * q + b) * size + c * q + a] = value;
        }
      }
    }
  }
  for (let c = 0; c < k; c++) {
    for (let d = 0; d < k; d++) {
      for (let a = 0; a < q; a++) set(c * q + a, varianceOffset + d, betaVariance[(c * k + d) * q + a]);
      info[(varianceOffset + c) * size + varianceOffset + d] = varianceVariance[c * k + d];
    }
    for (let j = 0; j < logits; j++) {
      for (let a = 0; a < q; a++) set(c * q + a, logitOffset + j, betaLogit[(c * logits + j) * q + a]);
      set(varianceOffset + c, logitOffset + j, varianceLogit[c * logits + j]);
    }
  }
  for (let j = 0; j < logits; j++) {
    for (let l = 0; l < logits; l++) info[(logitOffset + j) * size + logitOffset + l] = logitLogit[j * logits + l];
  }
  return { matrix: info, size, q, k, varianceOffset, logitOffset };
}
