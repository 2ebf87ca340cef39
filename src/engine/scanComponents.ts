import { SkeinError } from "./errors";
import { DEFAULT_KMAX } from "./options";
import { DISAGREEMENT_RELATIVE, fitMixture } from "./fitMixture";
import { DEFAULT_SEED } from "./options";
import { leastSquares } from "./leastSquares";
import type { MixtureComponent, MixtureFit, MixtureOptions, RegressionData, WarmStartReport } from "./mixtureTypes";
import type { ScanOptions, ScanResult, ScanRow } from "./trustTypes";
import { checkSeparation, degenerateComponentReason } from "./checkSeparation";
import { computeMemberships } from "./computeMemberships";
import { membershipsFromLogTerms } from "./logDensities";
import { createRandom, shuffleInPlace } from "./random";
import { regressionMatrix } from "./regressionMatrix";
import { gatherRows, selectRows } from "./rowSubset";
import { formatNumber } from "../report/formatNumber";

/**
 * Suggestion rule, in words (the README repeats it):
 *
 *   A K is eligible when its refinement converged and its best starts agree, no component is
 *   too small to be trusted (fewer rows than its coefficients + 2, or a noise SD under 1/20 of the
 *   others while holding few rows; see checkSeparation.ts) and every pair of components is at
 *   least MIN_SUGGESTED_GAP noise SDs apart. Among eligible K, take the smallest BIC; then
 *   step down to the smallest eligible K whose BIC is within BIC_TIE of that minimum.
 *   K = 1 is always eligible, so there is always a suggestion.
 *
 * BIC_TIE = 6: a BIC difference of 6 is "strong" evidence on the 2 ln(Bayes factor) scale of
 * Kass & Raftery (1995, JASA, section 3.2); below it the extra component is not clearly
 * supported, and the simpler model is preferred.
 *
 * With fewer than SMALL_SAMPLE_ROWS_PER_COEFFICIENT rows per coefficient per component, the
 *   suggested K must also predict held-out rows (cross-validated log-likelihood, Smyth 2000)
 *   at least as well as every smaller K: it is flagged, and the rule applied again, when for
 *   some smaller K the median over rows of the difference in held-out log-likelihood is
 *   negative (most rows are predicted better with fewer components).
 *
 * MIN_SUGGESTED_GAP = 1: two components whose regressions differ by less than one noise SD on
 * average misassign about Φ(−0.5) ≈ 31% of rows even with the true parameters (Bayes error
 * of two equal-weight normals); an extra component split off an existing group lands there,
 * and a likelihood gain from such a split is not evidence of a separate group.
 */
export const BIC_TIE = 6;

/**
 * Starts disagree when the two best differ by more than 1% of the coefficient scale at nearly
 * the same likelihood (fitMixture's own threshold): the K components are then not determined
 * by the data. A warm-start certificate that did not shrink while the starts agree is not a
 * reason on its own: on noisy data the narrowest residual scale stops at the noise level.
 */
export const STARTS_DISAGREE = DISAGREEMENT_RELATIVE;

/** "Starts agree": the two best starts reached the same components (within STARTS_DISAGREE). */
export function startsAgree(warmStart: Pick<WarmStartReport, "disagreement">): boolean {
  return !(warmStart.disagreement > STARTS_DISAGREE);
}

/**
 * Below this many rows per coefficient per component the suggestion is also checked by
 * cross-validation (see scanComponents). Measured on generated problems (bench/scanAccuracy):
 * with 100 rows, 5 predictors and one true component, plain BIC picked 6 or 7 components in
 * 2 of 6 problems; at 20 or more rows per coefficient per component BIC alone was right.
 */
export const SMALL_SAMPLE_ROWS_PER_COEFFICIENT = 20;
export const MIN_SUGGESTED_GAP = 1;

/**
 * kmax when none is given: DEFAULT_KMAX, or fewer when the rows cannot hold that many
 * components of `coefficients` coefficients with at least one spare row each.
 */
export function defaultKMax(rows: number, coefficients: number): number {
  return Math.max(1, Math.min(DEFAULT_KMAX, Math.floor(rows / (coefficients + 1))));
}

/**
 * Folds of the cross-validated log-likelihood (Smyth 2000, Statistics and Computing 10, uses
 * repeated v-fold and Monte Carlo splits; 5 folds is the common practice balance of bias and cost).
 */
export const CROSS_VALIDATION_FOLDS = 5;

/**
 * Fits K = 1..kMax and reports, for each K, the log-likelihood, BIC, ICL, an optional
 * cross-validated log-likelihood, convergence, the smallest separation and why the K may not
 * be suggested; then suggests a K by the rule above.
 *
 * BIC and ICL are the fit's own (fitMixture: BIC = −2 ln L + ν ln n, Schwarz 1978, with
 * ν = K(q + 2) − 1 for q coefficients per component, one noise variance each and K − 1 free
 * weights, plus K(p + p(p + 1)/2) in the joint model; ICL = BIC + 2 EN, Biernacki, Celeux &
 * Govaert 2000).
 *
 * Work is shared across K instead of spent afresh on each (see scanFitOptions):
 *  - K is also started from the K − 1 fit plus one component fitted to the rows that fit worst
 *    under it (an "add" start, in the spirit of greedy mixture learning, Vlassis & Likas 2002),
 *    so a larger K begins at least as well placed as the smaller one. That start does, across
 *    K, what the fit's own restructuring (split-and-merge, peeling by sub-fits) does within
 *    one K, so the scan's fits skip restructuring: it was most of a scan's time, spent on K
 *    beyond the true one, and left every suggestion of the bench's scan problems unchanged.
 *  - A K whose predecessor's BIC is above the lowest so far gets no random-partition restarts:
 *    the add start, the moment warm start and the seeded starts place them.
 *  - The cross-validation folds start from the full-data fit of the same K and only refine it.
 *  - Where the rule is BIC alone, a K whose fit cannot come within BIC_TIE of the lowest BIC so
 *    far stops early (bicThatMatters): it could not change the suggestion. Its row says so.
 */
export function scanComponents(data: RegressionData, options: ScanOptions): ScanResult {
  const kMax = options.kMax;
  if (!Number.isInteger(kMax) || kMax < 1) throw new SkeinError("bad-input", `The largest number of components (kMax) must be a whole number of at least 1, not ${kMax}.`);
  const seed = options.seed ?? DEFAULT_SEED;
  const intercept = options.intercept ?? true;
  const q = intercept ? data.p + 1 : data.p;
  const { rows, stoppedEarly } = fitEachK(data, options, seed, q);
  const chosenK = crossValidatedK(data, options, seed, q, rows);
  const rule = ruleText(rows);
  for (const row of rows) row.note = noteFor(row, rows, chosenK);
  return { rows, chosenK, rule, stoppedEarly };
}

/**
 * The scan's fits of K = 1 up to kMax, one row each, every K also started from the fit of
 * K − 1 (addComponentStart). The scan stops, saying why, before a K the rows cannot hold or
 * at a K > 1 whose fit fails: the smaller K already fitted are still worth reporting.
 */
function fitEachK(data: RegressionData, options: ScanOptions, seed: number, q: number): { rows: ScanRow[]; stoppedEarly: string | null } {
  const kMax = options.kMax;
  const rows: ScanRow[] = [];
  let previousFit: MixtureFit | null = null;
  let stoppedEarly: string | null = null;
  // Cross-validation may flag a K after the fits, changing which K are eligible; a fit stopped
  // because it could not matter (bicThatMatters) is safe only where it cannot.
  const mayNeedCrossValidation = options.crossValidate === true || data.n < SMALL_SAMPLE_ROWS_PER_COEFFICIENT * kMax * q;
  for (let k = 1; k <= kMax; k++) {
    if (options.signal?.aborted) throw new SkeinError("cancelled", "The scan was cancelled.");
    if (k * (q + 1) > data.n) {
      // Not even q + 1 rows per component: no fit of this K can be trusted, and larger K less.
      stoppedEarly = `Tried K = 1 to ${k - 1}, not up to ${kMax}: K = ${k} needs at least ${k * (q + 1)} usable rows (each component needs one more row than its ${q} coefficient${q === 1 ? "" : "s"}), and there are ${data.n}. Add rows or use fewer predictors to try more components.`;
      break;
    }
    const fitOptions = scanFitOptions(k, seed, options, rows);
    if (!mayNeedCrossValidation) fitOptions.mattersBelowBic = bicThatMatters(rows);
    if (previousFit !== null) {
      const start = addComponentStart(data, previousFit);
      if (start !== null) fitOptions.previous = start;
    }
    let fit: MixtureFit;
    try {
      fit = fitMixture(data, fitOptions);
    } catch (error) {
      if (error instanceof SkeinError && error.code !== "cancelled" && k > 1) {
        stoppedEarly = `Tried K = 1 to ${k - 1}, not up to ${kMax}: the fit with K = ${k} failed (${error.message})`;
        break;
      }
      throw error;
    }
    rows.push(scanRow(data, fit));
    previousFit = fit;
    options.onProgress?.(k, kMax);
  }
  return { rows, stoppedEarly };
}

/**
 * The K the rule suggests, checked on small samples. BIC's penalty does not count the freedom
 * of choosing which rows form a component, so with few rows per coefficient extra components
 * fitted to noise can win. There the cross-validated log-likelihood (Smyth 2000) decides
 * whether the suggestion predicts held-out rows at least as well as every smaller K; if not,
 * its row is flagged and the rule is applied again. Each K's held-out values are computed at
 * most once (folds are costly) and its row given their mean.
 */
function crossValidatedK(data: RegressionData, options: ScanOptions, seed: number, q: number, rows: ScanRow[]): number {
  let chosenK = suggestK(rows);
  const heldOut = new Map<number, Float64Array>();
  const heldOutOf = (row: ScanRow): Float64Array | null => {
    let values = heldOut.get(row.k);
    if (values === undefined) {
      const computed = heldOutLogLikelihoods(data, row.fit, options, seed);
      if (computed === null) return null;
      values = computed;
      heldOut.set(row.k, values);
      row.crossValidatedLogLikelihood = mean(values);
    }
    return values;
  };
  if (options.crossValidate) for (const row of rows) heldOutOf(row);
  while (chosenK > 1 && data.n < SMALL_SAMPLE_ROWS_PER_COEFFICIENT * chosenK * q) {
    const chosen = rows[chosenK - 1];
    const chosenValues = heldOutOf(chosen);
    if (chosenValues === null) break;
    let better: ScanRow | undefined;
    for (const row of rows.slice(0, chosenK - 1)) {
      const values = heldOutOf(row);
      if (values !== null && medianDifference(chosenValues, values) < 0) {
        better = row;
        break;
      }
    }
    if (better === undefined) break;
    const reason = `most rows left out of the fit are predicted better with K = ${better.k} (held-out log-likelihood per row ${formatNumber(chosen.crossValidatedLogLikelihood)} against ${formatNumber(better.crossValidatedLogLikelihood)}), so its extra components fit noise`;
    chosen.flag = chosen.flag === null ? `Not suggested: ${reason}.` : `${chosen.flag.slice(0, -1)}; ${reason}.`;
    chosenK = suggestK(rows);
  }
  return chosenK;
}

/** The suggestion rule in the scan's own words, with the early stop named only when a K was stopped. */
function ruleText(rows: readonly ScanRow[]): string {
  return (
    `Among the K whose fit converged, whose starts agree, whose components each hold enough rows, and whose components are all at least a gap of ${MIN_SUGGESTED_GAP} noise SD apart, ` +
    `take the lowest BIC, then the smallest K within ${BIC_TIE} BIC of it. With fewer than ${SMALL_SAMPLE_ROWS_PER_COEFFICIENT} rows per coefficient per component, ` +
    `a K must also predict most rows left out of the fit (${CROSS_VALIDATION_FOLDS}-fold cross-validation) at least as well as every smaller K.` +
    (rows.some((row) => row.stopped !== null) ? ` A K whose BIC could not come within ${BIC_TIE} of the lowest so far, even with the gain still to come, was stopped early: it could not change the suggestion.` : "")
  );
}

/**
 * The options of the scan's fit of K: the user's settings, without restructuring (the add
 * start carries the fit of K − 1 over instead), and without random-partition restarts for K
 * whose predecessor's BIC is above the lowest so far (`rows` are the K fitted before).
 */
function scanFitOptions(k: number, seed: number, options: ScanOptions, rows: readonly ScanRow[]): MixtureOptions {
  const lowest = Math.min(...rows.map((row) => row.bic));
  const beyondLowest = rows.length > 0 && rows[rows.length - 1].bic > lowest;
  return {
    k,
    seed,
    intercept: options.intercept ?? true,
    model: options.model ?? "plain",
    restarts: beyondLowest ? 0 : options.restarts,
    tolerance: options.tolerance,
    maxIterations: options.maxIterations,
    background: options.background,
    restructure: false,
    signal: options.signal,
  };
}

/**
 * The BIC below which the next K's fit could change the suggestion, with the reason a fit
 * that cannot reach it is stopped (MixtureOptions.mattersBelowBic); undefined before any K.
 * A K whose BIC ends more than BIC_TIE above the lowest eligible BIC so far is never within
 * the tie of the final lowest (which can only fall) and never the lowest, so neither it nor
 * its eligibility changes the suggestion. Its fit still reports the ln L and BIC it reached.
 */
function bicThatMatters(rows: readonly ScanRow[]): MixtureOptions["mattersBelowBic"] {
  const eligible = eligibleRows(rows);
  if (eligible.length === 0) return undefined;
  const best = eligible.reduce((a, b) => (b.bic < a.bic ? b : a));
  return { bic: best.bic + BIC_TIE, reason: `even with the gain in log-likelihood still to come its BIC could not come within ${BIC_TIE} of that of K = ${best.k}, so it could not change the suggestion` };
}

/**
 * Why a K is not suggested, for every K but the suggested one: the reasons it could not be
 * suggested (flag), or else how it lost on BIC to the suggested K. Null for the suggested K.
 */
function noteFor(row: ScanRow, rows: readonly ScanRow[], chosenK: number): string | null {
  if (row.k === chosenK) return null;
  if (row.flag !== null && row.k !== 1) return row.flag;
  const chosen = rows[chosenK - 1];
  const eligible = rows.filter((r) => r.flag === null || r.k === 1);
  const best = Math.min(...eligible.map((r) => r.bic));
  const bestK = eligible.find((r) => r.bic === best)?.k ?? chosenK;
  const behind = row.bic - best;
  if (behind > BIC_TIE) {
    return `Not suggested: lost on BIC, ${formatBicDifference(behind)} higher than that of K = ${bestK}.`;
  }
  if (row.k > chosenK) {
    return `Not suggested: its BIC is not more than ${BIC_TIE} below that of K = ${chosen.k}, so the smaller K is preferred.`;
  }
  return row.flag;
}

/** A K's "converged" in words, for the scan tables: yes, no, or "stopped" when its fit stopped early because it could not change the suggestion (its note says why). */
export function convergedWord(row: Pick<ScanRow, "converged" | "stopped">): string {
  return row.converged ? "yes" : row.stopped !== null ? "stopped" : "no";
}

function scanRow(data: RegressionData, fit: MixtureFit): ScanRow {
  const k = fit.k;
  // BIC and ICL are the fit's own (computed once, when the fit is assembled).
  const separation = checkSeparation(data, fit);
  const agree = startsAgree(fit.warmStart);
  const reasons: string[] = [];
  if (fit.refinement.stopped !== undefined) reasons.push(`stopped early, not converged (after ${fit.refinement.iterations} iterations): ${fit.refinement.stopped}`);
  else if (!fit.refinement.converged) reasons.push(`did not converge (stopped after ${fit.refinement.iterations} iterations)`);
  if (!agree) reasons.push("starts disagree: different starts reached nearly the same log-likelihood with different components");
  for (let c = 0; c < k; c++) {
    const reason = degenerateComponentReason(fit, c);
    if (reason !== null) reasons.push(`too few rows: ${reason}`);
  }
  if (k > 1 && separation.minGap < MIN_SUGGESTED_GAP) {
    const pair = separation.pairs.reduce((a, b) => (b.gap < a.gap ? b : a));
    reasons.push(`components too close: ${pair.a + 1} and ${pair.b + 1} are a gap of only ${Number(pair.gap.toPrecision(2))} noise SDs apart`);
  }
  return {
    k,
    logLikelihood: fit.logLikelihood,
    bic: fit.bic,
    icl: fit.icl,
    crossValidatedLogLikelihood: NaN,
    startsAgree: agree,
    converged: fit.refinement.converged,
    stopped: fit.refinement.stopped ?? null,
    minSeparation: separation.minGap,
    flag: reasons.length > 0 ? `Not suggested: ${reasons.join("; ")}.` : null,
    note: null,
    fit,
  };
}

/**
 * The K the rule may suggest: unflagged, or K = 1. A BIC that is no number cannot win (with it,
 * the least of the BICs would be NaN and no K would be within the tie of it).
 */
function eligibleRows<R extends Pick<ScanRow, "k" | "bic" | "flag">>(rows: readonly R[]): R[] {
  return rows.filter((row) => (row.flag === null || row.k === 1) && !Number.isNaN(row.bic));
}

/** The suggestion rule of the module comment. */
export function suggestK(rows: readonly Pick<ScanRow, "k" | "bic" | "flag">[]): number {
  const eligible = eligibleRows(rows);
  if (eligible.length === 0) return 1;
  const best = Math.min(...eligible.map((row) => row.bic));
  const within = eligible.filter((row) => row.bic <= best + BIC_TIE);
  return Math.min(...within.map((row) => row.k));
}

/**
 * The new component of an add start is fitted to at most this many of the rows fitted worst
 * (evenly spread through them): it is only a start, refined on all rows, and on a million rows
 * a least-squares fit to a third of them cost more than the start saves.
 */
const ADD_START_MAX_ROWS = 5000;

/**
 * A K-component start from a (K − 1)-component fit: its components unchanged, plus one fitted
 * by least squares to the rows with the lowest log-likelihood under it (the rows it explains
 * worst), max(2(q + 1), n/K) of them (at most ADD_START_MAX_ROWS of those). Weights are scaled
 * to make room for the new one.
 */
function addComponentStart(data: RegressionData, fit: MixtureFit): MixtureFit | null {
  const { n, p } = data;
  const { matrix, q } = regressionMatrix(data.x, n, p, fit.intercept);
  const k = fit.k + 1;
  const rowLogLikelihood = new Float64Array(n);
  computeMemberships(fit, matrix, q, data.y, data.x, n, rowLogLikelihood);
  const worst = lowestRows(rowLogLikelihood, Math.min(n, Math.max(2 * (q + 1), Math.round(n / k))));
  const stride = Math.ceil(worst.length / ADD_START_MAX_ROWS);
  const chosen: number[] = [];
  for (let t = 0; t < worst.length; t += stride) chosen.push(worst[t]);
  const take = chosen.length;
  const { matrix: subX, y: subY } = gatherRows(matrix, q, data.y, chosen);
  let least;
  try {
    least = leastSquares(subX, take, q, subY, { intercept: fit.intercept });
  } catch {
    return null;
  }
  const coefficients = new Float64Array(p + 1);
  coefficients.set(least.coefficients, fit.intercept ? 0 : 1);
  const sigma = Math.max(least.mlSigma, Math.min(...fit.components.map((c) => c.sigma)));
  const added: MixtureComponent = { weight: 1 / k, sigma, coefficients };
  if (fit.model === "joint") {
    const mean = new Float64Array(p);
    for (const row of chosen) for (let j = 0; j < p; j++) mean[j] += data.x[row * p + j] / take;
    const covariance = new Float64Array(p * p);
    for (const row of chosen) {
      for (let a = 0; a < p; a++) for (let b = 0; b < p; b++) covariance[a * p + b] += ((data.x[row * p + a] - mean[a]) * (data.x[row * p + b] - mean[b])) / take;
    }
    added.xMean = mean;
    added.xCovariance = covariance;
  }
  const components = fit.components.map((c) => ({ ...c, weight: (c.weight * (k - 1)) / k }));
  components.push(added);
  return {
    ...fit,
    k,
    components,
    memberships: new Float64Array(n * k),
    labels: new Int32Array(n),
  };
}

/**
 * The `count` rows with the lowest values, in row order (ties at the cut go to the earlier
 * rows): the cut found by sorting a typed copy, not an index array with a comparator (seconds
 * on a million rows).
 */
function lowestRows(values: Float64Array, count: number): Int32Array {
  const rows = new Int32Array(count);
  if (count === 0) return rows;
  const cut = values.slice().sort()[count - 1];
  let taken = 0;
  for (let i = 0; i < values.length && taken < count; i++) if (values[i] < cut) rows[taken++] = i;
  for (let i = 0; i < values.length && taken < count; i++) if (values[i] === cut) rows[taken++] = i;
  // NaN sorts last: reached only when fewer than `count` rows hold numbers.
  for (let i = 0; i < values.length && taken < count; i++) if (Number.isNaN(values[i])) rows[taken++] = i;
  return rows.sort();
}

/**
 * Held-out log-likelihood of every row (Smyth 2000): rows split at random into
 * CROSS_VALIDATION_FOLDS folds (the same folds for every K, so rows can be compared across K);
 * each fold's rows scored by ln Σ_k π_k f_k under a fit to the other folds, warm-started from
 * the full-data fit. Unlike the training likelihood it does not rise with every extra
 * component. Null when a fold's fit fails.
 */
function heldOutLogLikelihoods(data: RegressionData, fit: MixtureFit, options: ScanOptions, seed: number): Float64Array | null {
  const { n, p } = data;
  const folds = Math.min(CROSS_VALIDATION_FOLDS, n);
  const random = createRandom(seed);
  const order = shuffleInPlace(Int32Array.from({ length: n }, (_, i) => i), random);
  const values = new Float64Array(n);
  for (let f = 0; f < folds; f++) {
    if (options.signal?.aborted) throw new SkeinError("cancelled", "The scan was cancelled.");
    const held: number[] = [];
    const kept: number[] = [];
    for (let t = 0; t < n; t++) (t % folds === f ? held : kept).push(order[t]);
    const training = selectRows(data, kept);
    let trained: MixtureFit;
    try {
      // Started from the full-data fit, which holds 1 − 1/folds of the fold's rows: only refined.
      // The same model as the K's own fit, background included or not: with "auto", a fold
      // that holds out the one slip would otherwise be fitted without it, and the slip then
      // scored under the regressions alone.
      trained = fitMixture(training, { k: fit.k, seed: seed + f, intercept: fit.intercept, model: fit.model, restarts: 0, restructure: false, tolerance: options.tolerance, maxIterations: options.maxIterations, background: Boolean(fit.background), previous: fit, signal: options.signal });
    } catch (error) {
      if (error instanceof SkeinError && error.code === "cancelled") throw error;
      return null;
    }
    const test = selectRows(data, held);
    const { matrix, q } = regressionMatrix(test.x, test.n, p, fit.intercept);
    const rowValues = new Float64Array(test.n);
    computeMemberships(trained, matrix, q, test.y, test.x, test.n, rowValues);
    if (trained.background) {
      // A held-out row's density includes the background's share π₀ / V (Banfield & Raftery
      // 1993), with V the range of the whole data, as in the K's own fit.
      const term = Math.log(trained.background.weight) + (fit.background?.logDensity ?? trained.background.logDensity);
      // ln(e^row + e^term) by the E-step kernel's log-sum-exp (its memberships are not needed).
      const terms = new Float64Array(2);
      const shares = new Float64Array(2);
      for (let t = 0; t < test.n; t++) {
        terms[0] = rowValues[t];
        terms[1] = term;
        rowValues[t] = membershipsFromLogTerms(terms, 0, 2, shares, 0);
      }
    }
    held.forEach((row, t) => (values[row] = rowValues[t]));
  }
  return values;
}

function mean(values: Float64Array): number {
  let total = 0;
  for (let i = 0; i < values.length; i++) total += values[i];
  return total / values.length;
}

/**
 * Median over rows of a[i] − b[i]. The mean held-out log-likelihood is ruled by a few rows
 * that land far from every line of a narrow component; the median asks whether most rows are
 * predicted better, which small samples answer more steadily.
 */
function medianDifference(a: Float64Array, b: Float64Array): number {
  const d = Float64Array.from(a, (value, i) => value - b[i]).sort();
  const m = d.length;
  return m % 2 === 1 ? d[(m - 1) / 2] : 0.5 * (d[m / 2 - 1] + d[m / 2]);
}

/** A BIC difference: whole units from 100 up (35912, not 3.591e4), four significant digits below. */
function formatBicDifference(value: number): string {
  return Math.abs(value) >= 100 ? Math.round(value).toString() : formatNumber(value);
}
