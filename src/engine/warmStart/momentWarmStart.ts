import type { CancelSignal, RegressionData } from "../mixtureTypes";
import { checkSignal } from "../errors";
import { sampleIndices, type Random } from "../random";
import { alternatingLeastSquares, type AlternatingFit, type AssignmentRule } from "./alternatingLeastSquares";
import { bestRefinement, betterFit } from "./refinementRuns";
import { enoughRows, EXACT_RELATIVE } from "../mixture/exactComponents";
import { subspaceMixtureFit, randomPartition, type SubspaceMixture } from "./subspaceMixtureFit";
import { whitenPredictors, unwhitenCoefficients, whitenCoefficients, type WhitenedPredictors } from "./whitenPredictors";
import { responseMomentSubspace } from "./responseMomentSubspace";
import { selectRows } from "../rowSubset";
import { rowResidual } from "../rowResiduals";
import { rowProducts } from "../rowKernels";
import { shareableArray } from "../helperThread";

export interface MomentWarmStart {
  /** K coefficient vectors of length q (intercept first when the fit has one). */
  coefficients: Float64Array[];
  /** Narrowest residual scale reached, relative to the SD of y (worst over the components found). */
  certificate: number;
  /** Whether every component's narrowest scale shrank enough (exact fits in noiseless data). */
  converged: boolean;
}

/** Subspace dimension per component: the top K eigenvectors miss 10-50% of each component when designs differ per component, 2K capture more. */
const SUBSPACE_DIMENSION_PER_COMPONENT = 2;
const SUBSPACE_RESTARTS = 6;
/**
 * Rows the subspace EM runs on: SUBSPACE_ROWS_PER_PARAMETER per subspace coefficient (K·m),
 * at least SUBSPACE_MIN_ROWS. Its estimates only seed the full-dimension refinement, so they
 * need not be better than the part of each component the subspace misses (10-40%).
 */
const SUBSPACE_ROWS_PER_PARAMETER = 15;
const SUBSPACE_MIN_ROWS = 1000;
const SUBSPACE_EM_ITERATIONS = 25;
/**
 * Subspace EM iterations after which the restarts are ranked by likelihood and all but the
 * best LIFTED_CANDIDATES dropped: by then the runs that lead somewhere have pulled ahead.
 */
const SCREENING_ITERATIONS = 8;
/** Subspace fits (best likelihood first) lifted and refined in full dimension. */
const LIFTED_CANDIDATES = 3;
/** Hard-assignment iterations per lifted candidate. */
const ALS_ITERATIONS = 25;
/** The warm start counts as converged when every component's RMS residual is at most this fraction of the SD of y. */
const CONVERGED_CERTIFICATE = 0.25;

/**
 * Moment-based warm start for a K-component mixture of linear regressions (the moment
 * method of Yi, Caramanis & Sanghavi 2014):
 * 1. whiten x (centred on x̄ when there is an intercept);
 * 2. the top 2K eigenvectors of the response-weighted moment mean(y²(x̃x̃ᵀ − I)) span the
 *    components up to the part the per-component design covariances hide (Yi, Caramanis &
 *    Sanghavi 2014; Zhong, Jain & Dhillon 2016);
 * 3. EM restricted to that subspace from a few random partitions (cheap: O(n·K²) per step);
 * 4. the best few, lifted to full dimension, refined by hard assignment (classification EM's
 *    rule, Celeux & Govaert 1992, or the nearest-residual rule, Späth 1979: refineCandidates);
 *    in noiseless data the right start ends in exact fits of every row, which certifies it.
 * `certificate` is the widest per-component RMS residual of the winner relative to the SD of
 * y (rounding level when every component fits its rows exactly).
 *
 * Intercept: y is centred on ȳ and x̃ on x̄ for the moment (the identity needs centred
 * data); the subspace EM then carries one free offset per component, and the refinement uses
 * the whitened design with a column of 1s. Returns null when the start does not apply: fewer
 * than K(q + 1) rows, collinear predictors, a constant or non-finite response.
 * `noiseless`: the rows are known to lie exactly on the K regressions (a restart after
 * peeling), so the candidates are refined by the classification rule alone.
 */
export function momentWarmStart(data: RegressionData, k: number, intercept: boolean, random: Random, signal?: CancelSignal, noiseless = false): MomentWarmStart | null {
  const { n, p, x, y } = data;
  const q = intercept ? p + 1 : p;
  if (!(k >= 1) || !Number.isInteger(k) || p < 1 || n < k * (q + 1)) return null;
  let mean = 0;
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(y[i])) return null;
    mean += y[i];
  }
  mean /= n;
  let variance = 0;
  for (let i = 0; i < n; i++) variance += (y[i] - mean) ** 2;
  const sdY = Math.sqrt(variance / n);
  if (!(sdY > 0)) return null;
  for (let t = 0; t < n * p; t++) if (!Number.isFinite(x[t])) return null;

  const whitened = whitenPredictors(x, n, p, intercept);
  if (!whitened) return null;
  // The search and the hard-assignment refinement run on the whitened design (a column of 1s
  // first when there is an intercept): well conditioned, so normal equations are accurate.
  const design = shareableArray(n * q);
  const offset = intercept ? 1 : 0;
  for (let i = 0; i < n; i++) {
    if (intercept) design[i * q] = 1;
    design.set(whitened.x.subarray(i * p, i * p + p), i * q + offset);
  }
  const exactTolerance = EXACT_RELATIVE * sdY;
  const candidates = subspaceCandidates(whitened, y, k, intercept, random, signal);
  let best = refineCandidates(design, n, q, y, candidates, exactTolerance, signal, noiseless);
  if (!best) return null;
  best = peelAndRestart(data, whitened, design, q, k, intercept, best, exactTolerance, random, signal);
  let worstScale = 0;
  for (let c = 0; c < k; c++) worstScale = Math.max(worstScale, best.scales[c]);
  const certificate = worstScale / sdY;
  const coefficients = best.coefficients.map((c) => toOriginal(whitened, c.subarray(offset), 0, intercept ? c[0] : 0, intercept));
  return { coefficients, certificate, converged: certificate <= CONVERGED_CERTIFICATE };
}

/**
 * The best hard-assignment refinement of the lifted candidates (betterFit). By the
 * classification rule first, which lands the components a candidate has nearly found
 * (alternatingLeastSquares.ts); when no candidate then fits enough rows exactly to identify a
 * component (enoughRows: noisy data, or candidates far from every component), by the
 * nearest-residual rule, whose refinement EM then continues from: on noisy data the rule that
 * gave the better EM starts (on the bench's noisy grid the classification rule's starts led
 * EM to a lower likelihood on some d = 20, K = 5 problems). On rows known to be noiseless the
 * classification rule's result is kept either way (measured on d = 50, K = 7, fits
 * interleaved with the code before: 18% less time at 6 rows per predictor per component, 14%
 * less at 10, 8% more at 14, the same recoveries).
 */
function refineCandidates(design: Float64Array, n: number, q: number, y: Float64Array, candidates: Float64Array[][], exactTolerance: number, signal: CancelSignal | undefined, noiseless: boolean): AlternatingFit | null {
  const settings = (rule: AssignmentRule) => ({ maxIterations: ALS_ITERATIONS, exactTolerance, minimumRows: q + 1, rule });
  const classified = bestRefinement(design, n, q, y, candidates, settings("classification"), signal);
  if (noiseless || (classified && classified.exactRows >= enoughRows(q))) return classified;
  return bestRefinement(design, n, q, y, candidates, settings("nearest"), signal);
}

/**
 * Peeling (remove the rows a found component fits and repeat for the rest): the
 * components of the best fit that fit clearly more than q rows exactly are kept, their rows
 * removed, and the start is searched again on the remaining rows with the remaining K'
 * components, where the response moment has fewer components to separate. Repeats while it
 * gains exactly fitted rows: a combined fit better only by its scales is kept but ends the
 * repeats (on d = 100 problem 0 the next round's restart took 1.2 s and found nothing). The
 * combined fit is refined by the classification rule, under
 * which the kept components hold their rows.
 */
function peelAndRestart(
  data: RegressionData, whitened: WhitenedPredictors, design: Float64Array, q: number, k: number,
  intercept: boolean, start: AlternatingFit, exactTolerance: number, random: Random, signal: CancelSignal | undefined,
): AlternatingFit {
  const { n, y } = data;
  const offset = intercept ? 1 : 0;
  let best = start;
  for (let round = 0; round < k && best.exactRows < n; round++) {
    // Rows fitted exactly per component.
    const exactCount = new Int32Array(k);
    const residualOf = (i: number, c: Float64Array): number => Math.abs(rowResidual(design, i * q, q, c, 0, y[i]));
    for (let i = 0; i < n; i++) if (residualOf(i, best.coefficients[best.labels[i]]) <= exactTolerance) exactCount[best.labels[i]]++;
    const found: Float64Array[] = [];
    for (let c = 0; c < k; c++) if (exactCount[c] >= enoughRows(q)) found.push(best.coefficients[c]);
    const missing = k - found.length;
    if (found.length === 0 || missing === 0) break;
    const rest: number[] = [];
    for (let i = 0; i < n; i++) {
      let fitted = false;
      for (const c of found) if (residualOf(i, c) <= exactTolerance) fitted = true;
      if (!fitted) rest.push(i);
    }
    if (rest.length < missing * (q + 1)) break;
    const restart = momentWarmStart(selectRows(data, rest), missing, intercept, random, signal, true);
    if (!restart) break;
    const combined = found.concat(restart.coefficients.map((c) => toWhitened(whitened, c, intercept, offset)));
    const fit = alternatingLeastSquares(design, n, q, y, combined, ALS_ITERATIONS, exactTolerance, q + 1, signal, "classification");
    if (!betterFit(fit, best)) break;
    const gained = fit.exactRows > best.exactRows;
    best = fit;
    if (!gained) break;
  }
  return best;
}


/** Coefficients of the original predictors (intercept first when there is one) in whitened coordinates: γ = Lᵀβ, c₀ = b + ⟨β, x̄⟩. */
function toWhitened(whitened: WhitenedPredictors, c: Float64Array, intercept: boolean, offset: number): Float64Array {
  const beta = c.subarray(offset);
  const out = new Float64Array(c.length);
  out.set(whitenCoefficients(whitened, beta), offset);
  if (intercept) {
    let shift = 0;
    for (let j = 0; j < beta.length; j++) shift += beta[j] * whitened.mean[j];
    out[0] = c[0] + shift;
  }
  return out;
}

/**
 * Starts from the response-moment subspace: EM restricted to the subspace from random
 * partitions, the best few by likelihood lifted back to coefficients of the original
 * predictors (intercept first when there is one).
 */
function subspaceCandidates(whitened: WhitenedPredictors, y: Float64Array, k: number, intercept: boolean, random: Random, signal: CancelSignal | undefined): Float64Array[][] {
  const { n, p } = whitened;
  let yMean = 0;
  if (intercept) {
    for (let i = 0; i < n; i++) yMean += y[i];
    yMean /= n;
  }
  const responses = new Float64Array(n);
  for (let i = 0; i < n; i++) responses[i] = y[i] - yMean;
  const dimension = Math.min(p, SUBSPACE_DIMENSION_PER_COMPONENT * k);
  const basis = responseMomentSubspace(whitened.x, responses, n, p, dimension).vectors;
  // Projected rows, with a leading 1 when each component has its own offset. The moment needs
  // every row, the subspace EM only enough for its K·m parameters: on more rows a seeded
  // subsample (the lifted candidates are refined on every row afterwards).
  const offset = intercept ? 1 : 0;
  const m = basis.length + offset;
  const wanted = Math.max(SUBSPACE_MIN_ROWS, SUBSPACE_ROWS_PER_PARAMETER * k * m);
  const rows = n > wanted ? sampleIndices(n, wanted, random) : null;
  const used = rows ? rows.length : n;
  const projected = new Float64Array(used * m);
  const usedResponses = rows ? new Float64Array(used) : responses;
  if (rows) for (let t = 0; t < used; t++) usedResponses[t] = responses[rows[t]];
  // z = Uᵀx̃ row by row (the row kernels' products), then a leading 1 when there is an offset.
  const z = offset ? new Float64Array(used * basis.length) : projected;
  rowProducts(whitened.x, n, p, rows, basis, z);
  if (offset) {
    for (let t = 0; t < used; t++) {
      projected[t * m] = 1;
      projected.set(z.subarray(t * basis.length, (t + 1) * basis.length), t * m + 1);
    }
  }
  // Every restart runs SCREENING_ITERATIONS; only the best LIFTED_CANDIDATES go on to
  // SUBSPACE_EM_ITERATIONS in all (EM resumes from its memberships, so a screened run that goes
  // on is the same as one run of the full length).
  let fits: SubspaceMixture[] = [];
  for (let restart = 0; restart < SUBSPACE_RESTARTS; restart++) {
    checkSignal(signal);
    const memberships = randomPartition(used, k, random, new Float64Array(used * k));
    fits.push(subspaceMixtureFit(projected, usedResponses, used, m, k, memberships, SCREENING_ITERATIONS));
  }
  fits.sort((a, b) => b.logLikelihood - a.logLikelihood);
  fits = fits.slice(0, LIFTED_CANDIDATES).map((fit) => {
    checkSignal(signal);
    return subspaceMixtureFit(projected, usedResponses, used, m, k, fit.memberships, SUBSPACE_EM_ITERATIONS - SCREENING_ITERATIONS);
  });
  fits.sort((a, b) => b.logLikelihood - a.logLikelihood);
  // Whitened coefficients, intercept (in y's own units) first when there is one.
  return fits.map((fit) => fit.coefficients.map((g) => {
    const c = new Float64Array(p + offset);
    if (intercept) c[0] = yMean + g[0];
    for (let b = 0; b < basis.length; b++) {
      const weight = g[offset + b];
      for (let j = 0; j < p; j++) c[offset + j] += weight * basis[b][j];
    }
    return c;
  }));
}

/** Original-scale coefficients (intercept first when there is one) from whitened slopes γ. */
function toOriginal(whitened: WhitenedPredictors, gamma: Float64Array, yMean: number, offset: number, intercept: boolean): Float64Array {
  const beta = unwhitenCoefficients(whitened, gamma);
  if (!intercept) return beta;
  const c = new Float64Array(beta.length + 1);
  let shift = 0;
  for (let j = 0; j < beta.length; j++) shift += beta[j] * whitened.mean[j];
  c[0] = yMean + offset - shift;
  c.set(beta, 1);
  return c;
}
