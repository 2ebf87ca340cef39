import type { MixtureFit, RegressionData } from "./mixtureTypes";
import type { SeparationPair, SeparationReport } from "./trustTypes";
import { quadraticDifference, secondMoment } from "./secondMoment";
import { mapFit, scaleData, scalesFor } from "./internalScaling";
import { formatNumber } from "../report/formatNumber";

/**
 * Thresholds of the separation check, and why.
 *
 * OVERLAP_GAP = 2: for two normal groups of equal weight whose means lie Δ noise SDs apart,
 * the best possible rule still misassigns a share Φ(−Δ/2) of the rows (Bayes error of two
 * Gaussians; e.g. McLachlan 1992, Discriminant Analysis, ch. 1): Δ = 2 gives 16%, Δ = 3 7%,
 * Δ = 4 2%. Below 2 about one row in six is assigned to the wrong component even with the true
 * parameters, and the fitted regressions borrow rows from each other. The gap averages over x
 * (lines that cross overlap near the crossing however far apart they are elsewhere), so it
 * is a summary, not a guarantee for each row.
 *
 * MISCLASSIFICATION_WARNING = 0.1: the estimated share of rows labelled wrongly
 * (Basford & McLachlan 1985); above one in ten, per-row labels should not be reported as facts.
 *
 * Component size: a component must keep more rows than it has parameters. DEGENERATE_ROWS_EXTRA:
 * weight·n < q + 2 (q coefficients, one noise variance and at least one degree of freedom) is a
 * near-degenerate component: it can fit its rows (almost) exactly and its likelihood is
 * meaningless (Hathaway 1985; the unbounded likelihood of mixtures). SMALL_ROWS_PER_COEFFICIENT:
 * fewer than 5 rows per coefficient leaves its coefficients poorly determined (a common rule of
 * thumb for regression sample size).
 *
 * NARROW_NOISE_RATIO = 0.05: a component whose noise SD is below 1/20 of the median noise SD of
 * the others while holding few rows (under SMALL_ROWS_PER_COEFFICIENT per coefficient) is the
 * signature of a component fitted to a handful of rows exactly (variance ratio 1/400; the
 * constraint of Hathaway 1985 bounds exactly this ratio).
 */
export const OVERLAP_GAP = 2;
export const MISCLASSIFICATION_WARNING = 0.1;
export const DEGENERATE_ROWS_EXTRA = 2;
export const SMALL_ROWS_PER_COEFFICIENT = 5;
export const NARROW_NOISE_RATIO = 0.05;

/** Why a component is near-degenerate (too few rows, or a noise SD far below the others while small), or null. */
export function degenerateComponentReason(fit: MixtureFit, c: number): string | null {
  const n = fit.n;
  const q = fit.q;
  const component = fit.components[c];
  const rows = component.weight * n;
  if (rows < q + DEGENERATE_ROWS_EXTRA) {
    return `component ${c + 1} holds about ${formatNumber(rows)} rows, fewer than the ${q + DEGENERATE_ROWS_EXTRA} its ${q} coefficients need`;
  }
  if (fit.k > 1 && rows < SMALL_ROWS_PER_COEFFICIENT * q) {
    const others = fit.components.filter((_, j) => j !== c).map((o) => o.sigma).sort((a, b) => a - b);
    const median = others.length % 2 === 1 ? others[(others.length - 1) / 2] : 0.5 * (others[others.length / 2 - 1] + others[others.length / 2]);
    if (median > 0 && component.sigma < NARROW_NOISE_RATIO * median) {
      return `component ${c + 1} holds only about ${formatNumber(rows)} rows and its noise SD is ${formatNumber(component.sigma / median)} times that of the others: it may be fitting a few rows exactly`;
    }
  }
  return null;
}


/**
 * How well a fit's components are told apart.
 *
 * - Gap between the regressions of components a and b in noise units (trustTypes):
 *   sqrt((β_a − β_b)ᵀ Ê[xxᵀ] (β_a − β_b)) / sqrt((σ_a² + σ_b²)/2), Ê[xxᵀ] over the rows with
 *   the intercept column.
 * - Estimated misclassification 1 − mean_i max_k τ_ik (Basford & McLachlan 1985, JASA).
 * - Normalised entropy 1 − EN / (n ln K), EN = −Σ_i Σ_k τ_ik ln τ_ik (Ramaswamy, DeSarbo,
 *   Reibstein & Robinson 1993): 1 for crisp memberships, 0 for memberships all 1/K.
 */
export function checkSeparation(data: RegressionData, fit: MixtureFit): SeparationReport {
  // Gaps, misclassification and entropy do not depend on units: values far from 1 are measured in the fit's scaled space.
  const scales = scalesFor(data);
  if (scales !== null) return separationOf(scaleData(data, scales), mapFit(fit, scales, -1));
  return separationOf(data, fit);
}

function separationOf(data: RegressionData, fit: MixtureFit): SeparationReport {
  const pairs = componentGaps(data, fit);
  const minGap = pairs.reduce((least, pair) => (pair.gap < least ? pair.gap : least), Infinity);
  const { misclassification, normalisedEntropy } = membershipSharpness(fit);
  const smallestWeight = Math.min(...fit.components.map((c) => c.weight));
  const warnings = separationWarnings(fit, pairs, misclassification);
  return { pairs, minGap, misclassification, normalisedEntropy, smallestWeight, warnings };
}

/** The gap of every pair of components a < b, in noise SDs, in the order a, then b. */
function componentGaps(data: RegressionData, fit: MixtureFit): SeparationPair[] {
  const k = fit.k;
  const moment = secondMoment(data);
  const pairs: SeparationPair[] = [];
  for (let a = 0; a < k; a++) {
    for (let b = a + 1; b < k; b++) {
      const ca = fit.components[a];
      const cb = fit.components[b];
      const distance = Math.sqrt(quadraticDifference(moment, ca.coefficients, cb.coefficients));
      const noise = Math.sqrt((ca.sigma * ca.sigma + cb.sigma * cb.sigma) / 2);
      // Noiseless components: any difference is infinitely many noise units; identical ones 0.
      const gap = noise > 0 ? distance / noise : distance > 0 ? Infinity : 0;
      pairs.push({ a, b, gap });
    }
  }
  return pairs;
}

/**
 * How crisp the memberships are: the estimated share of rows misassigned and the normalised
 * entropy (both measures of the comment on checkSeparation), in one pass over the rows.
 */
function membershipSharpness(fit: MixtureFit): { misclassification: number; normalisedEntropy: number } {
  const k = fit.k;
  const n = fit.memberships.length / k;
  let sumOfMax = 0;
  let entropy = 0;
  for (let i = 0; i < n; i++) {
    let largest = 0;
    for (let c = 0; c < k; c++) {
      const t = fit.memberships[i * k + c];
      if (t > largest) largest = t;
      // 0 ln 0 = 0 and 1 ln 1 = 0: only memberships strictly between take a logarithm.
      if (t > 0 && t < 1) entropy -= t * Math.log(t);
    }
    sumOfMax += largest;
  }
  const misclassification = n > 0 ? Math.max(0, 1 - sumOfMax / n) : 0;
  const normalisedEntropy = k === 1 || n === 0 ? 1 : 1 - entropy / (n * Math.log(k));
  return { misclassification, normalisedEntropy };
}

/** The warnings of the report, by the thresholds at the top of this module: overlapping pairs, then misassigned rows, then each component too small. */
function separationWarnings(fit: MixtureFit, pairs: readonly SeparationPair[], misclassification: number): string[] {
  const k = fit.k;
  const warnings: string[] = [];
  for (const pair of pairs) {
    if (pair.gap < OVERLAP_GAP) {
      warnings.push(
        `Components ${pair.a + 1} and ${pair.b + 1} overlap: the gap between them is only ${formatNumber(pair.gap)} noise SDs (below ${OVERLAP_GAP}), so many rows could belong to either. Try fewer components, or add a predictor that tells them apart.`,
      );
    }
  }
  if (k > 1 && misclassification > MISCLASSIFICATION_WARNING) {
    warnings.push(
      `Misassigned rows are estimated at ${(100 * misclassification).toFixed(1)}% (above ${100 * MISCLASSIFICATION_WARNING}%): treat each row's component as uncertain and look at the memberships instead.`,
    );
  }
  for (let c = 0; c < k; c++) {
    const reason = degenerateComponentReason(fit, c);
    if (reason !== null) {
      warnings.push(`Too few rows: ${reason}. Try fewer components.`);
      continue;
    }
    const rows = fit.components[c].weight * fit.n;
    if (k > 1 && rows < SMALL_ROWS_PER_COEFFICIENT * fit.q) {
      warnings.push(
        `Small component: component ${c + 1} holds about ${formatNumber(rows)} rows for ${fit.q} coefficients (fewer than ${SMALL_ROWS_PER_COEFFICIENT} per coefficient), so its coefficients are poorly pinned down. Add rows or use fewer components.`,
      );
    }
  }
  return warnings;
}
