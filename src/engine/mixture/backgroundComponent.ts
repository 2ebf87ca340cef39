import type { MixtureFit, RegressionData } from "../mixtureTypes";
import { findStrayRows } from "../strayRows";
import type { MixtureWorkspace } from "./mixtureWorkspace";
import { shareableArray } from "../helperThread";

/**
 * A background component: rows drawn from a flat density over the box the data span,
 * beside the K regressions (the uniform noise component of Banfield & Raftery 1993,
 * Biometrics 49, "Model-based Gaussian and non-Gaussian clustering"). A row far from
 * every regression, such as a typing slip, costs the background only log(π₀ / V) instead
 * of pulling a regression component onto itself. π₀ is estimated by EM like any weight;
 * V is fixed by the data, so it adds one free parameter to the BIC.
 */
export interface BackgroundComponent {
  /** ln(1 / V): V is the range of y (times the range of each predictor in the joint model). */
  logDensity: number;
  /** Background weight π₀; the K component weights sum to 1 − π₀ once EM has run. */
  weight: number;
  /** Per-row membership τ_i0 in the background, from the last E-step. */
  memberships: Float64Array;
}

/**
 * π₀ when EM starts: one row in a hundred, small enough not to take rows from a fitting
 * component at the first E-step, large enough that a far-off row moves to the background
 * at once (its regression density is then smaller by many orders of magnitude).
 */
export const BACKGROUND_START_WEIGHT = 0.01;
/** π₀ never falls below this, so ln π₀ stays finite when no row is far off. */
const BACKGROUND_MIN_WEIGHT = 1e-12;

/**
 * The background for a workspace's rows. `logDensity` can be passed in so that a subsample
 * or a sub-fit uses the flat density of all rows (one V for the whole fit).
 */
export function createBackground(ws: MixtureWorkspace, logDensity?: number, weight = BACKGROUND_START_WEIGHT): BackgroundComponent {
  return { logDensity: logDensity ?? backgroundLogDensity(ws.y, ws.n, ws.joint ? ws.predictors : null, ws.p), weight, memberships: shareableArray(ws.n) };
}

/** The workspace with a background attached when the fit asks for one, sharing `full`'s flat density (one V for the whole fit). */
export function withBackground(ws: MixtureWorkspace, background: boolean, full?: MixtureWorkspace): MixtureWorkspace {
  if (background) ws.background = createBackground(ws, full?.background?.logDensity);
  return ws;
}

/** −ln V for the box the rows span; a zero range counts as 1 (it cannot arise for y, which the data layer requires to vary). */
export function backgroundLogDensity(y: Float64Array, n: number, predictors: Float64Array | null, p: number): number {
  let logVolume = Math.log(range(y, n, 1, 0));
  if (predictors) for (let j = 0; j < p; j++) logVolume += Math.log(range(predictors, n, p, j));
  return -logVolume;
}

function range(values: Float64Array, n: number, stride: number, offset: number): number {
  let low = Infinity;
  let high = -Infinity;
  for (let i = 0, at = offset; i < n; i++, at += stride) {
    const v = values[at];
    if (v < low) low = v;
    if (v > high) high = v;
  }
  const width = high - low;
  return width > 0 && Number.isFinite(width) ? width : 1;
}

/** ln(π₀ / V): the background's term in each row's log-sum-exp. */
export function backgroundLogTerm(background: BackgroundComponent): number {
  return Math.log(background.weight) + background.logDensity;
}

/**
 * M-step for the background weight: π₀ = Σ_i τ_i0 / n (Banfield & Raftery 1993). The K
 * weights the M-step sets, n_k / n, then sum to 1 − π₀ with it.
 */
export function updateBackgroundWeight(background: BackgroundComponent, n: number): void {
  let total = 0;
  for (let i = 0; i < n; i++) total += background.memberships[i];
  background.weight = Math.max(BACKGROUND_MIN_WEIGHT, total / n);
}

/**
 * A component holding fewer rows than this many times its coefficients plus one looks like
 * one that far-off rows pulled onto themselves (a typing slip takes a component of about one
 * row); real groups that small cannot be estimated anyway.
 */
const SMALL_COMPONENT_FACTOR = 2;

/**
 * The "auto" setting: whether a fit without a background shows signs of rows far from every
 * regression: a stray row (strayRows.ts) or a component of fewer than 2(q + 1) rows. Only
 * then is a fit with the background tried, and the one with the smaller BIC kept, so clean
 * data keep exactly the fit they had (K = 1 stays ordinary least squares) at no extra cost.
 */
export function backgroundMayHelp(data: RegressionData, fit: MixtureFit): boolean {
  const smallest = SMALL_COMPONENT_FACTOR * (fit.q + 1);
  if (fit.k > 1 && fit.components.some((c) => c.weight * fit.n < smallest)) return true;
  return findStrayRows(data, fit).rows.length > 0;
}

/** Of a fit without and one with the background, the one with the smaller BIC (Schwarz 1978). */
export function chooseBackground(plain: MixtureFit, withBackground: MixtureFit): MixtureFit {
  return withBackground.bic < plain.bic ? withBackground : plain;
}
