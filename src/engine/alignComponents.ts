import type { MixtureFit, RegressionData, MixtureOptions } from "./mixtureTypes";
import { SkeinError } from "./errors";
import { fitMixture } from "./fitMixture";
import { quadraticDifference, secondMoment } from "./secondMoment";
import { solveAssignment } from "./solveAssignment";

export { solveAssignment };

/**
 * Stable component numbering.
 *
 * Canonical order (used when there is no previous fit to follow): components by decreasing
 * weight, so component 1 is the largest group; weights within WEIGHT_TIE of each other are
 * ordered by their coefficients, intercept slot first, smallest first, so the order does not
 * depend on the order the fit happened to find them in.
 *
 * After the data change a little, the new fit is matched to the previous one by optimal
 * assignment on coefficient distance (Hungarian method: Kuhn 1955, Munkres 1957), which keeps
 * component 1 as component 1 unless the data truly change (label switching: Stephens 2000,
 * JRSS-B, matches to a reference the same way).
 */

/** Weights this close are treated as equal in the canonical order (far below any sampling difference, above rounding). */
const WEIGHT_TIE = 1e-9;

/** A copy of `fit` whose component c is the old component order[c]; memberships and labels follow. */
export function permuteComponents(fit: MixtureFit, order: readonly number[]): MixtureFit {
  const k = fit.k;
  if (order.length !== k || new Set(order).size !== k || order.some((c) => !(c >= 0 && c < k))) {
    throw new SkeinError("bad-input", `A component order must list each of the ${k} components once; received [${order.join(", ")}].`);
  }
  const newIndexOf = new Int32Array(k);
  order.forEach((old, c) => (newIndexOf[old] = c));
  const n = fit.labels.length;
  const memberships = new Float64Array(fit.memberships.length);
  for (let i = 0; i < n; i++) {
    const row = i * k;
    for (let c = 0; c < k; c++) memberships[row + c] = fit.memberships[row + order[c]];
  }
  const labels = new Int32Array(n);
  for (let i = 0; i < n; i++) labels[i] = newIndexOf[fit.labels[i]];
  return { ...fit, components: order.map((old) => fit.components[old]), memberships, labels };
}

/** The canonical order of a fit's components (see the module comment). */
export function canonicalOrder(fit: MixtureFit): number[] {
  const order = fit.components.map((_, c) => c);
  order.sort((a, b) => {
    const wa = fit.components[a].weight;
    const wb = fit.components[b].weight;
    if (Math.abs(wa - wb) > WEIGHT_TIE) return wb - wa;
    const ca = fit.components[a].coefficients;
    const cb = fit.components[b].coefficients;
    for (let j = 0; j < ca.length; j++) if (ca[j] !== cb[j]) return ca[j] - cb[j];
    return a - b;
  });
  return order;
}

/** The fit with its components in canonical order. */
export function toCanonicalOrder(fit: MixtureFit): MixtureFit {
  return permuteComponents(fit, canonicalOrder(fit));
}

/**
 * Squared distance between every pair (new component a, previous component b), k x k
 * row-major. With data: the mean squared difference of the two regressions' predictions over
 * the rows, (β_a − β_b)ᵀ Ê[xxᵀ] (β_a − β_b), which is in the units of y whatever the scale of
 * each predictor. Without data: the coefficient differences, each divided by that
 * coefficient's largest magnitude over both fits, so a predictor measured in millions does not
 * outweigh the others.
 */
export function coefficientDistances(fit: MixtureFit, previous: MixtureFit, data?: RegressionData): Float64Array {
  const k = fit.k;
  const length = fit.components[0].coefficients.length;
  const cost = new Float64Array(k * k);
  if (data) {
    const moment = secondMoment(data);
    for (let a = 0; a < k; a++) {
      for (let b = 0; b < k; b++) cost[a * k + b] = quadraticDifference(moment, fit.components[a].coefficients, previous.components[b].coefficients);
    }
    return cost;
  }
  const scale = new Float64Array(length);
  for (const source of [fit, previous]) {
    for (const component of source.components) {
      for (let j = 0; j < length; j++) scale[j] = Math.max(scale[j], Math.abs(component.coefficients[j]));
    }
  }
  for (let a = 0; a < k; a++) {
    for (let b = 0; b < k; b++) {
      let s = 0;
      for (let j = 0; j < length; j++) {
        if (scale[j] === 0) continue;
        const d = (fit.components[a].coefficients[j] - previous.components[b].coefficients[j]) / scale[j];
        s += d * d;
      }
      cost[a * k + b] = s;
    }
  }
  return cost;
}

/**
 * `fit` with its components renumbered to match `previous` (same K): new component c is the
 * one assigned to previous component c by the optimal assignment on coefficient distance.
 * A fit with a different K, or a different number of coefficients, is put in canonical order
 * instead, since there is no one-to-one match.
 */
export function alignToPrevious(fit: MixtureFit, previous: MixtureFit, data?: RegressionData): MixtureFit {
  if (previous.k !== fit.k || previous.components[0].coefficients.length !== fit.components[0].coefficients.length) {
    return toCanonicalOrder(fit);
  }
  const cost = coefficientDistances(fit, previous, data);
  // Cost rows are new components, columns previous ones: column c's row is the new component
  // that takes number c.
  const order = Array.from(solveAssignment(cost, fit.k));
  return permuteComponents(fit, order);
}

type Fitter = (data: RegressionData, options: MixtureOptions) => MixtureFit;

/**
 * Refits after a data change: `previous` goes to the fit as its warm start (options.previous)
 * and the result is renumbered to match it (fitMixture itself reports canonical order). The
 * fit defaults to the engine's fitMixture; a caller may pass another fitter first (a host
 * running the fit elsewhere, or a test).
 */
export function refitFrom(data: RegressionData, options: MixtureOptions, previous: MixtureFit): MixtureFit;
export function refitFrom(fitter: Fitter, data: RegressionData, options: MixtureOptions, previous: MixtureFit): MixtureFit;
export function refitFrom(...args: [RegressionData, MixtureOptions, MixtureFit] | [Fitter, RegressionData, MixtureOptions, MixtureFit]): MixtureFit {
  const [fitter, data, options, previous] = args.length === 4 ? args : [fitMixture, ...args];
  const fit = fitter(data, { ...options, previous });
  return alignToPrevious(fit, previous, data);
}
