import type { MixtureFit, MixtureModel, MixtureOptions, RegressionData } from "../mixtureTypes";
import type { Random } from "../random";
import type { MixtureParameters } from "./mixtureParameters";
import type { MixtureWorkspace } from "./mixtureWorkspace";
import type { Guards } from "./mStep";
import { computeResiduals, eStep } from "./eStep";
import { parametersFromCoefficients } from "./starts";
import { selectRows } from "../rowSubset";

/**
 * Moves that restructure a converged fit by fitting part of it afresh on a subset of rows:
 * exact peeling, peeling of the best-determined component, and split-and-merge. Each returns a
 * proposed start; the driver refines it and keeps it only when the likelihood rises. The fit of
 * a subset comes in as `fitSubset` (the driver's own fit, one nesting level deeper), so this
 * module does not depend on the driver.
 */

/**
 * The driver's fit applied to a subset of rows, one nesting level deeper; `start` (k·q
 * coefficients, optional) is the parent's estimate of the components left to find, tried
 * before any other start.
 */
export type SubsetFit = (data: RegressionData, options: MixtureOptions, depth: number, start?: Float64Array) => MixtureFit;

/** The settings a subset fit inherits. */
export interface SubsetSettings {
  intercept: boolean;
  model: MixtureModel;
  restarts: number;
  tolerance: number;
  maxIterations: number;
}

/**
 * A row counts as fitted exactly by a noiseless component when its residual is below this
 * fraction of SD(y): a million times the noiseless SD limit's square root would be too loose,
 * so it sits between rounding (about 1e-14) and anything a real second component leaves.
 */
const EXACT_RESIDUAL_RELATIVE = 1e-7;

/**
 * When some components fit their rows to rounding level and others do not, the rows the exact
 * components explain are removed and the remaining components fitted afresh on the other rows
 * (a recursive call with K − e components and the same settings, seeded from the same
 * generator). This is the remove-and-repeat step of moment descent (METHODS.md) applied to
 * a partial EM fit: K-lines is much easier with fewer lines. Returns combined coefficients as
 * a start for EM on all rows, or null when there is nothing to peel.
 */
export function peelExactComponents(data: RegressionData, ws: MixtureWorkspace, params: MixtureParameters, guards: Guards, settings: SubsetSettings, random: Random, depth: number, rowMap: Int32Array | null, fitSubset: SubsetFit): MixtureParameters | null {
  const { n, q, k } = ws;
  // Rows a component fits within EXACT_RESIDUAL_RELATIVE · SD(y) are its exact rows; any q rows
  // can be fitted exactly, so a component counts as exact only with 2q of them or more.
  const threshold = EXACT_RESIDUAL_RELATIVE * Math.sqrt(ws.yVariance);
  computeResiduals(ws, params);
  const exactRows = new Int32Array(k);
  for (let i = 0; i < n; i++) for (let c = 0; c < k; c++) if (Math.abs(ws.residuals[i * k + c]) <= threshold) exactRows[c]++;
  const exact: number[] = [];
  for (let c = 0; c < k; c++) if (exactRows[c] >= 2 * q) exact.push(c);
  if (exact.length === 0 || exact.length === k) return null;
  const remaining: number[] = [];
  for (let i = 0; i < n; i++) {
    let fitted = false;
    for (const c of exact) if (Math.abs(ws.residuals[i * k + c]) <= threshold) fitted = true;
    if (!fitted) remaining.push(rowMap ? rowMap[i] : i);
  }
  const rest = k - exact.length;
  if (remaining.length < rest * guards.minimumSize) return null;
  // The components that are not exact yet are the sub-fit's first start: with the rows of the
  // exact components removed they are often next to an exact fit of the rest, which then ends
  // the sub-fit's search before its own warm start and restarts run.
  const inherited = new Float64Array(rest * q);
  let slot = 0;
  for (let c = 0; c < k; c++) if (!exact.includes(c)) inherited.set(params.coefficients.subarray(c * q, c * q + q), (slot++) * q);
  const sub = fitSubset(selectRows(data, remaining), {
    k: rest,
    seed: random.integer(2147483647),
    intercept: settings.intercept,
    model: settings.model,
    restarts: settings.restarts,
    tolerance: settings.tolerance,
    maxIterations: settings.maxIterations,
  }, depth + 1, inherited);
  const coefficients = new Float64Array(k * q);
  exact.forEach((c, j) => coefficients.set(params.coefficients.subarray(c * q, c * q + q), j * q));
  sub.components.forEach((component, j) => coefficients.set(component.coefficients.subarray(settings.intercept ? 0 : 1), (exact.length + j) * q));
  return parametersFromCoefficients(ws, coefficients, guards);
}

/**
 * One split-and-merge move (Ueda, Nakano, Ghahramani & Hinton 2000, Neural Computation 12):
 * component `split` (the driver tries those with the largest unexplained variance n_k σ_k²) is split by a two-component fit
 * of the rows it holds (a recursive fitMixture), and the component whose removal costs the
 * least likelihood is dropped to keep K. Returns the proposed start, or null when no split
 * applies; the caller refines it and keeps it only if the likelihood rises.
 */
export function splitAndMerge(data: RegressionData, ws: MixtureWorkspace, params: MixtureParameters, split: number, guards: Guards, settings: SubsetSettings, random: Random, rowMap: Int32Array | null, depth: number, fitSubset: SubsetFit): MixtureParameters | null {
  const { n, q, k } = ws;
  computeResiduals(ws, params);
  eStep(ws, params);
  const rows: number[] = [];
  for (let i = 0; i < n; i++) {
    let best = 0;
    for (let c = 1; c < k; c++) if (ws.memberships[i * k + c] > ws.memberships[i * k + best]) best = c;
    if (best === split) rows.push(rowMap ? rowMap[i] : i);
  }
  if (rows.length < 2 * guards.minimumSize) return null;
  let halves: MixtureFit;
  try {
    halves = fitSubset(selectRows(data, rows), { k: 2, seed: random.integer(2147483647), intercept: settings.intercept, model: settings.model, restarts: Math.min(settings.restarts, SPLIT_RESTARTS), tolerance: settings.tolerance, maxIterations: settings.maxIterations }, depth + 1);
  } catch {
    return null;
  }
  // Drop the component (other than the split one) whose loss hurts the likelihood least.
  let bestStart: MixtureParameters | null = null;
  let bestLogLikelihood = -Infinity;
  for (let drop = 0; drop < k; drop++) {
    if (drop === split) continue;
    const coefficients = new Float64Array(k * q);
    let slot = 0;
    for (let c = 0; c < k; c++) {
      if (c === split || c === drop) continue;
      coefficients.set(params.coefficients.subarray(c * q, c * q + q), slot * q);
      slot++;
    }
    for (const half of halves.components) coefficients.set(half.coefficients.subarray(settings.intercept ? 0 : 1), (slot++) * q);
    const start = parametersFromCoefficients(ws, coefficients, guards);
    computeResiduals(ws, start);
    const logLikelihood = eStep(ws, start);
    if (logLikelihood > bestLogLikelihood) {
      bestLogLikelihood = logLikelihood;
      bestStart = start;
    }
  }
  return bestStart;
}

/**
 * Keeps component `keep`, removes the rows within PEEL_WIDTH noise SDs of it and fits K − 1
 * components to the other rows (a recursive fitMixture): the remove-and-repeat idea of moment
 * descent (METHODS.md) applied to a noisy EM fit. The fit's other K − 1 components are the
 * sub-fit's first start (as in exact peeling), so with four or more of them the sub-fit skips
 * its random partitions. Returns the combined start or null.
 */
export function peelComponent(data: RegressionData, ws: MixtureWorkspace, params: MixtureParameters, keep: number, guards: Guards, settings: SubsetSettings, random: Random, rowMap: Int32Array | null, depth: number, fitSubset: SubsetFit): MixtureParameters | null {
  const { n, q, k } = ws;
  computeResiduals(ws, params);
  const width = PEEL_WIDTH * Math.sqrt(params.variances[keep]);
  const remaining: number[] = [];
  for (let i = 0; i < n; i++) if (Math.abs(ws.residuals[i * k + keep]) > width) remaining.push(rowMap ? rowMap[i] : i);
  if (n - remaining.length < 2 * q || remaining.length < (k - 1) * guards.minimumSize) return null;
  let rest: MixtureFit;
  try {
    const others = new Float64Array((k - 1) * q);
    let slot = 0;
    for (let c = 0; c < k; c++) if (c !== keep) others.set(params.coefficients.subarray(c * q, c * q + q), (slot++) * q);
    rest = fitSubset(selectRows(data, remaining), { k: k - 1, seed: random.integer(2147483647), intercept: settings.intercept, model: settings.model, restarts: settings.restarts, tolerance: settings.tolerance, maxIterations: settings.maxIterations }, depth + 1, others);
  } catch {
    return null;
  }
  const coefficients = new Float64Array(k * q);
  coefficients.set(params.coefficients.subarray(keep * q, keep * q + q), 0);
  rest.components.forEach((component, j) => coefficients.set(component.coefficients.subarray(settings.intercept ? 0 : 1), (j + 1) * q));
  return parametersFromCoefficients(ws, coefficients, guards);
}

/** Rows within this many noise SDs of a kept component are set aside with it (2.5 SDs hold 98.8% of its rows). */
const PEEL_WIDTH = 2.5;
/** Components tried as the kept one, smallest noise SD first. */
export const PEEL_CANDIDATES = 2;
/** Nesting depth below which noisy peeling may run (the top fit and one level of sub-fits). */
export const MAX_PEELING_DEPTH = 2;

/** Random-partition restarts inside a split's two-component fit (two components rarely need more). */
const SPLIT_RESTARTS = 3;
