import { enoughRows, EXACT_RELATIVE } from "./mixture/exactComponents";
import { atVarianceRatioBound } from "./mixture/mixtureSettings";
import { invertPositiveDefinite } from "./cholesky";
import { componentPrediction } from "./predictRows";
import { mapFit, scaleData, scalesFor, unscaleStandardErrors } from "./internalScaling";
import { SkeinError } from "./errors";
import type { MixtureFit, MixtureOptions, RegressionData } from "./mixtureTypes";
import type { StandardErrorReport } from "./trustTypes";
import { observedInformation } from "./observedInformation";
import { alignToPrevious } from "./alignComponents";
import { createRandom } from "./random";
import { fitMixture } from "./fitMixture";
import { selectRows } from "./rowSubset";
import { isExactFit } from "./exactFit";
import { referenceSpread } from "./referenceVariance";
import { componentLogConstant } from "./logDensities";
import { formatNumber } from "../report/formatNumber";

export interface StandardErrorOptions {
  method?: "observed-information" | "bootstrap";
  /** Bootstrap replicates (default DEFAULT_REPLICATES). */
  replicates?: number;
  /** Seed of the bootstrap resampling (default: the fit's seed). */
  seed?: number;
  /** Bootstrap only: settings passed to each refit besides k, seed, intercept, model and previous. */
  fitOptions?: Partial<MixtureOptions>;
}

/**
 * 200 replicates put the Monte Carlo error of a bootstrap SD near 1/sqrt(2·200) = 5% of it
 * (the SD of a sample SD, normal theory), enough for a standard error; Efron & Tibshirani
 * (1993, An Introduction to the Bootstrap, ch. 6) suggest 25-200 for standard errors.
 */
export const DEFAULT_REPLICATES = 200;

/**
 * Standard errors of every coefficient, weight and noise SD.
 *
 * "observed-information" (default): the inverse of Louis's (1982) observed information
 * (observedInformation.ts), with the weights through K − 1 free logits and the noise through
 * σ²; SEs of π then follow by the delta method with ∂π_k/∂η_j = π_k(δ_kj − π_j), and of σ by
 * SE(σ) = SE(σ²) / (2σ). With K = 1 these are the maximum-likelihood SEs of least squares,
 * σ̂_ML sqrt(diag (XᵀX)⁻¹) with σ̂²_ML = RSS/n: the usual table's SEs times sqrt((n − q)/n).
 *
 * "bootstrap": rows are resampled with replacement, each resample refitted from the original
 * fit as warm start and its components matched to the original's by optimal assignment before
 * the spread is taken, since a refit may number them differently (Basford, Greenway,
 * McLachlan & Peel 1997, Computational Statistics).
 */
export function standardErrors(fullData: RegressionData, fit: MixtureFit, options: StandardErrorOptions = {}): StandardErrorReport & { warnings: string[] } {
  const data = options.method === "bootstrap" ? fullData : withoutBackgroundRows(fullData, fit);
  // Values far from 1 are handled in the fit's scaled space (internalScaling.ts).
  const scales = scalesFor(data);
  if (scales !== null) return unscaleStandardErrors(unscaledStandardErrors(scaleData(data, scales), mapFit(fit, scales, -1), options, data.y), scales);
  return unscaledStandardErrors(data, fit, options, data.y);
}

/**
 * The data without the rows whose membership in every component is 0 to double precision
 * next to the background's (a log-density lower by more than BACKGROUND_ONLY_GAP): such a row
 * adds exactly nothing to the observed information, since each of its terms carries its
 * membership as a factor. Taken out first, a typed-in 1e154 no longer sets the scale of the
 * computation or turns 0 times an overflowed square into NaN (its squared residual over σ²
 * is beyond the double range), and the rest are computed at their own scale.
 */
function withoutBackgroundRows(data: RegressionData, fit: MixtureFit): RegressionData {
  const background = fit.background;
  if (!background || !(background.weight > 0)) return data;
  const { n, p } = data;
  const backgroundTerm = Math.log(background.weight) + background.logDensity;
  // Each component's ln π − ½ ln(2πσ²), once rather than once a row.
  const constants = fit.components.map((component) => componentLogConstant(component.weight, component.sigma * component.sigma));
  const kept: number[] = [];
  for (let i = 0; i < n; i++) {
    let nearest = -Infinity;
    for (let c = 0; c < fit.k; c++) {
      const component = fit.components[c];
      // The intercept slot holds 0 when the fit has none.
      const fitted = componentPrediction(component.coefficients, data.x, i * p, p);
      // (r / σ)² from r / σ, so a residual near 1e154 overflows only to +Infinity here.
      const z = (data.y[i] - fitted) / component.sigma;
      const term = constants[c] - 0.5 * z * z;
      if (term > nearest || Number.isNaN(term)) nearest = Number.isNaN(term) ? Infinity : term;
    }
    // The joint model adds each component's x density, which this leaves out: there only rows
    // whose squared residual overflowed (a term of −Infinity) are certain to have membership 0.
    const outside = fit.model === "joint" ? nearest === -Infinity : nearest < backgroundTerm - BACKGROUND_ONLY_GAP;
    if (!outside) kept.push(i);
  }
  if (kept.length === n || kept.length === 0) return data;
  return selectRows(data, Int32Array.from(kept));
}

/** e^-800 is 0 in double precision (the smallest subnormal is about e^-745). */
const BACKGROUND_ONLY_GAP = 800;

/** `outcome` is y as the user gave it, for messages (data may be scaled). */
function unscaledStandardErrors(data: RegressionData, fit: MixtureFit, options: StandardErrorOptions, outcome: Float64Array): StandardErrorReport & { warnings: string[] } {
  const method = options.method ?? "observed-information";
  if (method === "bootstrap") return bootstrapErrors(data, fit, options);
  if (method !== "observed-information") {
    throw new SkeinError("bad-input", `The standard error method must be "observed-information" or "bootstrap", not "${String(method)}".`);
  }
  return informationErrors(data, fit, outcome);
}

function emptyReport(fit: MixtureFit, method: StandardErrorReport["method"]): StandardErrorReport & { warnings: string[] } {
  const length = fit.components[0].coefficients.length;
  return {
    method,
    coefficients: fit.components.map(() => new Float64Array(length).fill(NaN)),
    weights: new Float64Array(fit.k).fill(NaN),
    sigmas: new Float64Array(fit.k).fill(NaN),
    warnings: [],
  };
}

/**
 * An exact fit (every component's noise about 0, exactFit.ts) has no curvature to invert: its
 * coefficients and noise SDs are known exactly given each component's rows, so their standard
 * errors are 0. Its memberships are 0 or 1, so the weights are sample shares of known
 * labels, with the binomial standard error sqrt(π(1 − π)/n).
 */
function exactFitErrors(fit: MixtureFit): StandardErrorReport & { warnings: string[] } {
  const report = emptyReport(fit, "exact-fit");
  for (let c = 0; c < fit.k; c++) {
    report.coefficients[c].fill(0);
    report.sigmas[c] = 0;
    const weight = fit.components[c].weight;
    report.weights[c] = fit.k === 1 ? 0 : Math.sqrt((weight * (1 - weight)) / fit.n);
  }
  return report;
}

function informationErrors(data: RegressionData, fit: MixtureFit, outcome: Float64Array): StandardErrorReport & { warnings: string[] } {
  if (isExactFit(fit, data.y)) return exactFitErrors(fit);
  const report = emptyReport(fit, "observed-information");
  const exact = exactComponent(data, fit);
  if (exact !== null) {
    report.warnings.push(
      `Standard errors are not available: component ${exact + 1} fits its rows exactly while the others do not, so the fit has no curvature to measure its uncertainty by. If that is not expected, check that the outcome is not one of the predictors, a copy of one or an exact combination of them.`,
    );
    return report;
  }
  const info = observedInformation(data, fit);
  const { size, q, k, varianceOffset, logitOffset } = info;
  if (!info.matrix.every(Number.isFinite)) {
    report.warnings.push(`Standard errors are not available: ${sizeReason(outcome, outcome.length)}`);
    return report;
  }
  const covariance = invertPositiveDefinite(info.matrix, size);
  if (covariance === null) {
    report.warnings.push(`Standard errors are not available: ${flatReason(fit)}`);
    return report;
  }
  const shift = fit.components[0].coefficients.length - q;
  for (let c = 0; c < k; c++) {
    const se = report.coefficients[c];
    // No intercept: its slot holds 0, and so does its standard error.
    if (shift > 0) se[0] = 0;
    for (let j = 0; j < q; j++) {
      const t = c * q + j;
      se[shift + j] = Math.sqrt(Math.max(0, covariance[t * size + t]));
    }
    const t = varianceOffset + c;
    // Delta method: σ = sqrt(σ²), dσ/dσ² = 1/(2σ).
    report.sigmas[c] = Math.sqrt(Math.max(0, covariance[t * size + t])) / (2 * fit.components[c].sigma);
  }
  if (k === 1) {
    report.weights[0] = 0;
    return withReason(report);
  }
  // Delta method for π = (1 − π₀) softmax(η), π₀ the background's weight (0 without one) held
  // at its estimate: J_kj = ∂π_k/∂η_j = π_k (δ_kj − w_j), j < K, w_j = π_j / (1 − π₀).
  const weights = fit.components.map((c) => c.weight);
  const share = 1 - (fit.background?.weight ?? 0);
  for (let c = 0; c < k; c++) {
    let variance = 0;
    for (let j = 0; j < k - 1; j++) {
      const jc = weights[c] * ((c === j ? 1 : 0) - weights[j] / share);
      for (let l = 0; l < k - 1; l++) {
        const lc = weights[c] * ((c === l ? 1 : 0) - weights[l] / share);
        variance += jc * covariance[(logitOffset + j) * size + logitOffset + l] * lc;
      }
    }
    report.weights[c] = Math.sqrt(Math.max(0, variance));
  }
  return withReason(report);
}

/** Coefficients and noise SDs that agree to this fraction of their size make two components one regression. */
const SAME_COMPONENT_RELATIVE = 1e-6;

/**
 * Why the likelihood has no clear peak to measure the uncertainty by, in the terms a user can
 * check: two components that are one regression, a component with no more rows than
 * coefficients, or else the general reason.
 */
function flatReason(fit: MixtureFit): string {
  const { components, k, n } = fit;
  for (let a = 0; a < k; a++) {
    for (let b = a + 1; b < k; b++) {
      const ca = components[a];
      const cb = components[b];
      let size = Math.max(ca.sigma, cb.sigma);
      for (let j = 0; j < ca.coefficients.length; j++) size = Math.max(size, Math.abs(ca.coefficients[j]), Math.abs(cb.coefficients[j]));
      let differ = Math.abs(ca.sigma - cb.sigma) > SAME_COMPONENT_RELATIVE * size;
      for (let j = 0; j < ca.coefficients.length && !differ; j++) differ = Math.abs(ca.coefficients[j] - cb.coefficients[j]) > SAME_COMPONENT_RELATIVE * size;
      if (!differ) {
        return `components ${a + 1} and ${b + 1} are the same regression (equal coefficients and noise SD), so the data cannot tell how their rows divide between them. Fit ${k - 1} component${k - 1 === 1 ? "" : "s"}.`;
      }
    }
  }
  const q = fit.q;
  const smallest = components.reduce((best, c, index) => (c.weight < components[best].weight ? index : best), 0);
  const rows = components[smallest].weight * n;
  if (rows <= q + 1) {
    return `component ${smallest + 1} holds about ${formatNumber(rows)} rows, too few for its ${q} coefficients and noise SD to have a measurable uncertainty. Try fewer components.`;
  }
  return "the fit does not sit at a clear peak of the likelihood (it may not have converged, or two components may be nearly the same). Try fewer components.";
}

/**
 * Why the curvature could not be computed when its sums left the range of double-precision
 * numbers: in words a user can act on, with the sizes of the outcome's values.
 */
function sizeReason(y: Float64Array, n: number): string {
  let smallest = Infinity;
  let largest = 0;
  for (let i = 0; i < n; i++) {
    const magnitude = Math.abs(y[i]);
    if (magnitude > 0 && magnitude < smallest) smallest = magnitude;
    if (magnitude > largest) largest = magnitude;
  }
  const span = smallest < Infinity && largest > 0 ? ` (from ${formatNumber(smallest)} to ${formatNumber(largest)} in size)` : "";
  return (
    `the outcome's values are too far apart in size${span} for the fit's curvature to be computed with the computer's numbers, ` +
    `even though the fit itself is finite. A row far from all the others is usually a typing slip: check the stray rows, fix or leave them out, and fit again.`
  );
}

/**
 * The first component exact by the fit's one tolerance, or null: a noise SD at most
 * EXACT_RELATIVE of the spread of y; or, when the smallest noise SD is held at the
 * variance-ratio bound, that component if it has enough rows to identify it (enoughRows)
 * within the tolerance of its regression: its noise SD then sits at the bound rather than at
 * about 0 while others do not fit theirs, and the likelihood has no peak there. (The rows are
 * counted only then, so a fit with no component at the bound costs no pass.)
 */
function exactComponent(data: RegressionData, fit: MixtureFit): number | null {
  const spread = referenceSpread(data.y, data.n);
  const tolerance = EXACT_RELATIVE * spread;
  const index = fit.components.findIndex((c) => !(c.sigma > tolerance));
  if (index >= 0) return index;
  let smallest = 0;
  let largestSigma = 0;
  fit.components.forEach((c, j) => {
    if (c.sigma < fit.components[smallest].sigma) smallest = j;
    largestSigma = Math.max(largestSigma, c.sigma);
  });
  if (!atVarianceRatioBound(fit.components[smallest].sigma ** 2, largestSigma ** 2)) return null;
  const { n, p, x, y } = data;
  const coefficients = fit.components[smallest].coefficients;
  let rows = 0;
  for (let i = 0; i < n; i++) if (Math.abs(y[i] - componentPrediction(coefficients, x, i * p, p)) <= tolerance) rows++;
  return rows >= enoughRows(fit.q) ? smallest : null;
}

/** Standard errors that still came out as no number get a warning saying so, never a bare NaN. */
function withReason(report: StandardErrorReport & { warnings: string[] }): StandardErrorReport & { warnings: string[] } {
  const missing = report.coefficients.some((errors) => errors.some(Number.isNaN)) || report.sigmas.some(Number.isNaN) || report.weights.some(Number.isNaN);
  if (missing && report.warnings.length === 0) {
    report.warnings.push("Some standard errors could not be computed: the fit does not sit at a clear peak of the likelihood in every direction (a component with too few rows, or two components that coincide). Use fewer components.");
  }
  return report;
}

function bootstrapErrors(data: RegressionData, fit: MixtureFit, options: StandardErrorOptions): StandardErrorReport & { warnings: string[] } {
  const replicates = options.replicates ?? DEFAULT_REPLICATES;
  if (!Number.isInteger(replicates) || replicates < 2) {
    throw new SkeinError("bad-input", `The number of bootstrap replicates must be a whole number of at least 2, not ${replicates}.`);
  }
  const random = createRandom(options.seed ?? fit.seed);
  const { n } = data;
  const k = fit.k;
  const length = fit.components[0].coefficients.length;
  // Running sums for the SD of each parameter over usable replicates.
  const sum = new Float64Array(k * (length + 2));
  const sumSquares = new Float64Array(k * (length + 2));
  let usable = 0;
  const drawn = new Int32Array(n);
  for (let b = 0; b < replicates; b++) {
    for (let i = 0; i < n; i++) drawn[i] = random.integer(n);
    const resample = selectRows(data, drawn);
    const replicateSeed = random.integer(2147483647);
    let refit: MixtureFit;
    try {
      refit = fitMixture(resample, { ...options.fitOptions, k, seed: replicateSeed, intercept: fit.intercept, model: fit.model, previous: fit });
    } catch (error) {
      if (error instanceof SkeinError && error.code === "cancelled") throw error;
      continue;
    }
    if (refit.k !== k) continue;
    const aligned = alignToPrevious(refit, fit, resample);
    usable++;
    for (let c = 0; c < k; c++) {
      const component = aligned.components[c];
      const base = c * (length + 2);
      for (let j = 0; j < length; j++) {
        sum[base + j] += component.coefficients[j];
        sumSquares[base + j] += component.coefficients[j] ** 2;
      }
      sum[base + length] += component.weight;
      sumSquares[base + length] += component.weight ** 2;
      sum[base + length + 1] += component.sigma;
      sumSquares[base + length + 1] += component.sigma ** 2;
    }
  }
  const report = emptyReport(fit, "bootstrap");
  report.replicates = usable;
  if (usable < 2) {
    report.warnings.push(`Only ${usable} of ${replicates} bootstrap refits succeeded; standard errors are not available. Try fewer components.`);
    return report;
  }
  // Sample SD with divisor B − 1 (Efron & Tibshirani 1993, eq. 6.6).
  const sd = (t: number): number => Math.sqrt(Math.max(0, (sumSquares[t] - (sum[t] * sum[t]) / usable) / (usable - 1)));
  for (let c = 0; c < k; c++) {
    const base = c * (length + 2);
    for (let j = 0; j < length; j++) report.coefficients[c][j] = sd(base + j);
    if (!fit.intercept) report.coefficients[c][0] = 0;
    report.weights[c] = sd(base + length);
    report.sigmas[c] = sd(base + length + 1);
  }
  if (usable < replicates) report.warnings.push(`${replicates - usable} of ${replicates} bootstrap refits failed and were left out.`);
  return report;
}
