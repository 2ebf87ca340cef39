import type { MixtureFit, RegressionData } from "./mixtureTypes";
import { predictorLogDensity, predictorModels } from "./computeMemberships";
import { componentLogConstant, normaliseLogDensities } from "./logDensities";
import { addBlockDots, addBlockGram, blockRowsFor, gatherRows, rowBlock, stageRows, weighBlock, type RowBlock } from "./weightedGram";
import { NEGLIGIBLE_MEMBERSHIP } from "./mixture/mStep";
import { paddedCoefficients, rowResiduals } from "./rowResiduals";

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
 * Accumulated in one pass over the rows, a block at a time, with the structure of the gradient
 * written out (a_ik is non-zero on component k's β (r x / v), its σ² and the logits), so that
 * Σ_k τ B − (Σ_k τ a aᵀ − s sᵀ) becomes, per row, a few scalars times x xᵀ, x or 1
 * (α = r / v, γ = (r²/v − 1)/(2v), u = τ α, g = τ γ, O = 1 − T):
 *   β_c β_d:  x xᵀ · [δ_cd τ_c (1/v_c − α_c²) + u_c u_d];
 *   β_c σ²_d: x · [δ_cd u_c (1/v_c − γ_c) + u_c g_d];
 *   β_c η_j:  x · [−u_c (δ_cj − τ_j − O w_j)];
 *   σ²_c σ²_d: δ_cd τ_c (r²/v³ − 1/(2v²) − γ_c²) + g_c g_d;
 *   σ²_c η_j: −g_c (δ_cj − τ_j − O w_j);   η_j η_l: the expression above, from sums of τ, τ τ, O τ, T.
 * Every term carries a membership as a factor, and one below NEGLIGIBLE_MEMBERSHIP leaves it
 * below rounding (τ α stays under about 7.4e-12 / σ however far the row lies). So each
 * component's terms are sums over the rows it holds, and each cross term (c ≠ d) over the rows
 * both hold: on separated components most rows belong to one component alone and add to its own
 * sums only. Per block: each row's residuals, memberships and scalars, then per component and
 * per pair of components the rows they hold gathered into the weighted-Gram kernel's row block
 * (weightedGram.ts) and summed there, the Gram for the β blocks and dot products for the
 * q-vectors. No n-sized array is made.
 */
export function observedInformation(data: RegressionData, fit: MixtureFit): ObservedInformation {
  const st = informationState(data, fit);
  const { n, k, q, blockRows, varianceOffset, logitOffset, logits, size, weights, grams, ownVariance, ownLogit, ownOutside, crossVariance, crossLogit, shares } = st;
  const { tauSum, outsideTau, gSum, gOutside, curvatureSum, tauTau, gTau, gg } = st;
  // A block at a time, in small functions: each is compiled once and stays fast.
  // Each block's rows staged once; each component and pair gathers the rows it holds from there.
  const block = rowBlock(q, blockRows, VECTORS_PER_ROW, st.p);
  for (let start = 0; start < n; start += blockRows) {
    const end = Math.min(n, start + blockRows);
    addBlockRows(st, start, end - start);
    stageRows(block, st.x, start, end);
    for (let c = 0; c < k; c++) addHeldRows(st, block, c);
  }
  const totalShare = shares[0];
  const squareShare = shares[1];

  const info = new Float64Array(size * size);
  const set = (a: number, b: number, value: number): void => {
    info[a * size + b] = value;
    info[b * size + a] = value;
  };
  for (let c = 0; c < k; c++) {
    for (let d = c; d < k; d++) {
      const gram = pairIndex(c, d, k) * q * q;
      for (let a = 0; a < q; a++) {
        for (let b = 0; b < q; b++) set(c * q + a, d * q + b, grams[gram + (a <= b ? a * q + b : b * q + a)]);
      }
    }
  }
  for (let c = 0; c < k; c++) {
    for (let d = 0; d < k; d++) {
      for (let a = 0; a < q; a++) set(c * q + a, varianceOffset + d, c === d ? ownVariance[c * q + a] : crossVariance[(c * k + d) * q + a]);
      info[(varianceOffset + c) * size + varianceOffset + d] = (c === d ? curvatureSum[c] : 0) + gg[c * k + d];
    }
    for (let j = 0; j < logits; j++) {
      for (let a = 0; a < q; a++) {
        const value = c === j ? ownLogit[c * q + a] : crossLogit[(c * k + j) * q + a] + weights[j] * ownOutside[c * q + a];
        set(c * q + a, logitOffset + j, value);
      }
      set(varianceOffset + c, logitOffset + j, (c === j ? -gSum[c] : 0) + gTau[c * k + j] + weights[j] * gOutside[c]);
    }
  }
  for (let j = 0; j < logits; j++) {
    for (let l = 0; l < logits; l++) {
      info[(logitOffset + j) * size + logitOffset + l] =
        (j === l ? weights[j] * totalShare - tauSum[j] : 0) + tauTau[j * k + l] + weights[l] * outsideTau[j] + weights[j] * outsideTau[l] - squareShare * weights[j] * weights[l];
    }
  }
  return { matrix: info, size, q, k, varianceOffset, logitOffset };
}

/** The constants, sums and block buffers of one observed-information computation. */
function informationState(data: RegressionData, fit: MixtureFit) {
  const k = fit.k;
  const p = data.p;
  const q = fit.intercept ? p + 1 : p;
  const ones = q - p;
  const { n, y, x } = data;
  const models = fit.model === "joint" ? predictorModels(fit) : null;
  const predictorScratch = new Float64Array(p);
  const background = fit.background ?? null;
  // One more log term for the background, when the fit has one.
  const terms = background ? k + 1 : k;
  const posterior = new Float64Array(terms * blockRowsFor(q));
  const backgroundTerm = background ? Math.log(background.weight) + background.logDensity : 0;
  const varianceOffset = k * q;
  const logitOffset = varianceOffset + k;
  const logits = k - 1;
  const size = logitOffset + logits;
  // The softmax weights w (the components' share of 1 − π₀).
  const componentShare = background ? 1 - background.weight : 1;
  const weights = Float64Array.from(fit.components, (c) => c.weight / componentShare);
  const variances = Float64Array.from(fit.components, (c) => c.sigma * c.sigma);
  const inverseVariances = variances.map((v) => 1 / v);
  const shift = fit.components[0].coefficients.length - q;
  const constant = Float64Array.from(variances, (variance, c) => componentLogConstant(fit.components[c].weight, variance));
  const coefficients = new Float64Array(k * q);
  fit.components.forEach((c, index) => coefficients.set(c.coefficients.subarray(shift, shift + q), index * q));
  const padded = paddedCoefficients(coefficients, k, q);

  // β blocks: one q x q Gram (upper triangle) per pair c ≤ d, pair index pairIndex(c, d, k).
  const pairs = (k * (k + 1)) / 2;
  const grams = new Float64Array(pairs * q * q);
  // q-vectors: per component Σ x u(1/v − γ + g) (its own σ²), Σ x · (−u(1 − τ − O w)) (its own
  // logit), Σ x u O (the background's share); per ordered pair c ≠ d Σ x u_c g_d and Σ x u_c τ_d.
  const ownVariance = new Float64Array(k * q);
  const ownLogit = new Float64Array(k * q);
  const ownOutside = new Float64Array(k * q);
  const crossVariance = new Float64Array(k * k * q);
  const crossLogit = new Float64Array(k * k * q);
  // Scalars: Σ T, Σ T(2 − T), and per component or pair Σ τ, Σ O τ, Σ g, Σ g O,
  // Σ τ (r²/v³ − 1/(2v²) − γ²), Σ τ_c τ_d, Σ g_c τ_d, Σ g_c g_d.
  const shares = new Float64Array(2);
  const tauSum = new Float64Array(k);
  const outsideTau = new Float64Array(k);
  const gSum = new Float64Array(k);
  const gOutside = new Float64Array(k);
  const curvatureSum = new Float64Array(k);
  const tauTau = new Float64Array(k * k);
  const gTau = new Float64Array(k * k);
  const gg = new Float64Array(k * k);

  // Block buffers, with stride blockRows: per-row values, the rows each component holds.
  const blockRows = blockRowsFor(q);
  // Residuals row by row, k to a row (rowResiduals writes them so).
  const residuals = new Float64Array(k * blockRows);
  const tau = new Float64Array(k * blockRows);
  const u = new Float64Array(k * blockRows);
  const g = new Float64Array(k * blockRows);
  const gramWeight = new Float64Array(k * blockRows);
  const varianceWeight = new Float64Array(k * blockRows);
  const logitWeight = new Float64Array(k * blockRows);
  const outside = new Float64Array(blockRows);
  const held = new Int32Array(k * blockRows);
  const heldCount = new Int32Array(k);
  const active = new Int32Array(k);
  return { n, x, y, p, q, k, ones, models, predictorScratch, background, terms, backgroundTerm, posterior, varianceOffset, logitOffset, logits, size, weights, variances, inverseVariances, constant, padded, grams, ownVariance, ownLogit, ownOutside, crossVariance, crossLogit, shares, tauSum, outsideTau, gSum, gOutside, curvatureSum, tauTau, gTau, gg, blockRows, residuals, tau, u, g, gramWeight, varianceWeight, logitWeight, outside, held, heldCount, active };
}

type InformationState = ReturnType<typeof informationState>;

/** One block's rows: residuals, memberships, per-row weights and scalar sums; the rows each component holds. */
function addBlockRows(st: InformationState, start: number, m: number): void {
  const { x, y, p, q, k, ones, background, terms, posterior, padded, shares, residuals, outside, heldCount } = st;
  let totalShare = 0;
  let squareShare = 0;
  for (let r = 0; r < m; r++) rowResiduals(x, (start + r) * p - ones, ones, q, padded, k, y[start + r], residuals, r * k);
  // Every row's log terms, then their memberships through the E-step kernel in one call.
  for (let r = 0; r < m; r++) rowLogTerms(st, start, r);
  normaliseLogDensities(posterior, m, terms);
  heldCount.fill(0);
  for (let r = 0; r < m; r++) {
    let total = 0;
    for (let c = 0; c < k; c++) total += posterior[r * terms + c];
    // Without a background the memberships sum to 1: the share outside is exactly 0.
    const rowOutside = background ? 1 - total : 0;
    outside[r] = rowOutside;
    totalShare += total;
    squareShare += total * (2 - total);
    addRowTerms(st, r, rowOutside);
  }
  shares[0] += totalShare;
  shares[1] += squareShare;
}

/** Row r of the block's log terms (the background's last, when the fit has one) into its slots of st.posterior. */
function rowLogTerms(st: InformationState, start: number, r: number): void {
  const { x, p, k, models, predictorScratch, background, terms, backgroundTerm, posterior, variances, constant, residuals } = st;
  const at = r * terms;
  for (let c = 0; c < k; c++) {
    const rc = residuals[r * k + c];
    let value = constant[c] - (0.5 * rc * rc) / variances[c];
    if (models) value += predictorLogDensity(models[c], x, (start + r) * p, p, predictorScratch);
    posterior[at + c] = value;
  }
  if (background) posterior[at + k] = backgroundTerm;
}

/**
 * Row r's scalars per component it holds (u, g and the weights of its Gram and q-vectors),
 * their sums, and the sums over the pairs of components it holds; the row joins each such
 * component's held rows.
 */
function addRowTerms(st: InformationState, r: number, rowOutside: number): void {
  const { k, terms, posterior, weights, inverseVariances, residuals, blockRows, tau, u, g, gramWeight, varianceWeight, logitWeight, held, heldCount, active } = st;
  const { tauSum, outsideTau, gSum, gOutside, curvatureSum, tauTau, gTau, gg } = st;
  let activeCount = 0;
  for (let c = 0; c < k; c++) {
    const t = posterior[r * terms + c];
    const at = c * blockRows + r;
    tau[at] = t;
    if (t < NEGLIGIBLE_MEMBERSHIP) continue;
    const rc = residuals[r * k + c];
    const w = inverseVariances[c];
    const alpha = rc * w;
    const gamma = 0.5 * (rc * rc * w - 1) * w;
    const curvature = (rc * rc * w - 0.5) * w * w;
    const ta = t * alpha;
    const tg = t * gamma;
    u[at] = ta;
    g[at] = tg;
    gramWeight[at] = t * (w - alpha * alpha) + ta * ta;
    varianceWeight[at] = ta * (w - gamma) + ta * tg;
    logitWeight[at] = -ta * (1 - t - rowOutside * weights[c]);
    tauSum[c] += t;
    outsideTau[c] += rowOutside * t;
    gSum[c] += tg;
    gOutside[c] += tg * rowOutside;
    curvatureSum[c] += t * (curvature - gamma * gamma);
    held[c * blockRows + heldCount[c]++] = r;
    active[activeCount++] = c;
  }
  for (let a = 0; a < activeCount; a++) {
    const c = active[a];
    const tc = tau[c * blockRows + r];
    const gc = g[c * blockRows + r];
    for (let b = 0; b < activeCount; b++) {
      const d = active[b];
      const td = tau[d * blockRows + r];
      tauTau[c * k + d] += tc * td;
      gTau[c * k + d] += gc * td;
      gg[c * k + d] += gc * g[d * blockRows + r];
    }
  }
}

/**
 * The rows component c holds in the block starting at row `start`: its own β block and
 * q-vectors, and the cross terms with each later component. The rows go into the kernel's row
 * block with the per-row values their q-vectors need beside them.
 */
function addHeldRows(st: InformationState, block: RowBlock, c: number): void {
  const { q, k, ones, background, blockRows, tau, u, g, gramWeight, varianceWeight, logitWeight, outside, held, heldCount } = st;
  const { grams, ownVariance, ownLogit, ownOutside, crossVariance, crossLogit } = st;
  const count = heldCount[c];
  if (count === 0) return;
  const { vectors, indices } = block;
  const offset = c * blockRows;
  for (let s = 0; s < count; s++) {
    const r = held[offset + s];
    indices[s] = r;
    vectors[s * VECTORS_PER_ROW] = varianceWeight[offset + r];
    vectors[s * VECTORS_PER_ROW + 1] = logitWeight[offset + r];
    vectors[s * VECTORS_PER_ROW + 2] = u[offset + r] * outside[r];
    vectors[s * VECTORS_PER_ROW + GRAM_WEIGHT] = gramWeight[offset + r];
  }
  gatherRows(block, count, ones);
  weighBlock(block, count, GRAM_WEIGHT);
  addBlockGram(block, count, grams, pairIndex(c, c, k) * q * q);
  addBlockDots(block, count, "plain", 0, ownVariance, c * q);
  addBlockDots(block, count, "plain", 1, ownLogit, c * q);
  if (background) addBlockDots(block, count, "plain", 2, ownOutside, c * q);
  // The rows held by c and a later component d: the cross terms.
  for (let d = c + 1; d < k; d++) {
    const other = d * blockRows;
    let rows = 0;
    for (let s = 0; s < count; s++) {
      const r = held[offset + s];
      if (tau[other + r] < NEGLIGIBLE_MEMBERSHIP) continue;
      const uc = u[offset + r];
      const ud = u[other + r];
      indices[rows] = r;
      vectors[rows * VECTORS_PER_ROW] = uc * g[other + r];
      vectors[rows * VECTORS_PER_ROW + 1] = ud * g[offset + r];
      vectors[rows * VECTORS_PER_ROW + 2] = uc * tau[other + r];
      vectors[rows * VECTORS_PER_ROW + 3] = ud * tau[offset + r];
      vectors[rows * VECTORS_PER_ROW + GRAM_WEIGHT] = uc * ud;
      rows++;
    }
    if (rows === 0) continue;
    gatherRows(block, rows, ones);
    weighBlock(block, rows, GRAM_WEIGHT);
    addBlockGram(block, rows, grams, pairIndex(c, d, k) * q * q);
    addBlockDots(block, rows, "plain", 0, crossVariance, (c * k + d) * q);
    addBlockDots(block, rows, "plain", 1, crossVariance, (d * k + c) * q);
    addBlockDots(block, rows, "plain", 2, crossLogit, (c * k + d) * q);
    addBlockDots(block, rows, "plain", 3, crossLogit, (d * k + c) * q);
  }
}

/**
 * Per-row values beside each gathered row: up to four q-vectors' weights (the cross terms use
 * all four), then the weight of its Gram.
 */
const VECTORS_PER_ROW = 5;
const GRAM_WEIGHT = 4;

/** Index of the pair c ≤ d among the k(k + 1)/2 pairs of components. */
function pairIndex(c: number, d: number, k: number): number {
  return c * k - (c * (c - 1)) / 2 + (d - c);
}
