import type { RegressionData } from "../mixtureTypes";
import type { Random } from "../random";
import { leastSquares } from "../leastSquares";
import { whitenPredictors, unwhitenCoefficients, type WhitenedPredictors } from "./whitenPredictors";
import { responseMomentSubspace } from "./responseMomentSubspace";
import { momentSearchSubspace } from "./momentSearchSubspace";
import { fitScaleMixture } from "./fitScaleMixture";
import { selectSmallest } from "./selectSmallest";
import {
  absoluteResiduals, concentrateComponent, createConcentrationScratch, refitOnRows,
  type ConcentrationScratch,
} from "./concentrateComponent";

export interface MomentWarmStart {
  /** K coefficient vectors of length q (intercept first when the fit has one). */
  coefficients: Float64Array[];
  /** Narrowest residual scale reached, relative to the SD of y (worst over the components found). */
  certificate: number;
  /** Whether every component's narrowest scale shrank enough (exact fits in noiseless data). */
  converged: boolean;
}

/**
 * Absolute residual, relative to the SD of y, that counts as an exact fit: rounding in a
 * least-squares fit of tens of coefficients leaves relative residuals near 1e-14, while a row
 * of another component misses by the component separation (0.1 or more of the SD in any
 * problem worth fitting).
 */
const EXACT_FIT_RELATIVE = 1e-9;
/** Moment-descent steps per component before giving up on an exact fit. */
const MAX_DESCENT_STEPS = 40;
/** A step is accepted when the narrowest scale shrinks to at most this fraction. */
const SHRINK_FACTOR = 0.92;
/** Random combinations of the search directions tried per step, besides the basis vectors. */
const RANDOM_DIRECTIONS = 8;
/** Step lengths tried along each direction, in units of the narrowest residual scale. */
const STEP_LENGTHS = [-1.5, -0.75, -0.35, 0.35, 0.75, 1.5];
/** Concentration steps per try. */
const CONCENTRATION_STEPS = 10;
/** A component found without an exact fit counts as converged when its scale shrank this much. */
const CONVERGED_SHRINK = 0.25;
/** Noisy data: rows within this many narrowest SDs of a found component are peeled with it. */
const PEEL_WIDTH = 2.5;

/**
 * Rows, beyond the coefficient count q, that a component must fit exactly to be accepted:
 * any q rows are fitted exactly by some vector (a spurious fit, METHODS.md), so only clearly
 * more rows certify a component.
 */
function exactRowsNeeded(q: number): number {
  return q + Math.max(3, Math.ceil(0.1 * q));
}

interface FoundComponent {
  coefficients: Float64Array;
  exact: boolean;
  /** Narrowest residual scale reached (absolute units). */
  scale: number;
  /** Narrowest residual scale at the start of the search (absolute units). */
  startScale: number;
}

/**
 * Moment-based warm start for a K-component mixture of linear regressions: peel components
 * one at a time by moment descent (see METHODS.md, "Moment-based warm starts") with
 * concentration steps near each component, remove the rows it fits, and finish with the
 * least-squares fit of what remains. Returns null when it does not apply (too few rows,
 * collinear predictors, constant response).
 *
 * Intercept: y is centred on ȳ and x on x̄ for the moment stage (slopes in whitened
 * coordinates; each component's remaining offset is the mean of its 1-D residual mixture
 * component); concentration and exact fits then use the full design with its column of 1s.
 */
export function momentWarmStart(data: RegressionData, k: number, intercept: boolean, random: Random): MomentWarmStart | null {
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

  const design = new Float64Array(n * q);
  for (let i = 0; i < n; i++) {
    if (intercept) design[i * q] = 1;
    design.set(x.subarray(i * p, i * p + p), i * q + (intercept ? 1 : 0));
  }
  const exactTolerance = EXACT_FIT_RELATIVE * sdY;
  const enough = exactRowsNeeded(q);
  const scratch = createConcentrationScratch(n, q);
  let active = Int32Array.from({ length: n }, (_, i) => i);
  let count = n;
  const coefficients: Float64Array[] = [];
  let certificate = 0;
  let converged = true;

  for (let component = 0; component < k - 1; component++) {
    const remaining = k - component;
    if (count < remaining * (q + 1)) break;
    const found = findComponent(data, design, q, intercept, active, count, remaining, exactTolerance, enough, scratch, random);
    if (!found) break;
    coefficients.push(found.coefficients);
    certificate = Math.max(certificate, found.scale / sdY);
    if (!found.exact && !(found.scale <= CONVERGED_SHRINK * found.startScale)) converged = false;
    // Peel the rows the component fits.
    absoluteResiduals(design, q, y, active, count, found.coefficients, scratch.absolute);
    const width = found.exact ? exactTolerance : PEEL_WIDTH * found.scale;
    const kept = new Int32Array(count);
    let keptCount = 0;
    for (let t = 0; t < count; t++) if (scratch.absolute[t] > width) kept[keptCount++] = active[t];
    // Never peel so much that the remaining components cannot be fitted.
    if (keptCount < (remaining - 1) * (q + 1)) break;
    active = kept;
    count = keptCount;
  }
  // The last component (or every one not found) from what remains.
  while (coefficients.length < k) {
    const rest = refitAll(design, q, y, active, count, scratch);
    if (!rest) return null;
    if (coefficients.length < k - 1) {
      converged = false;
      // Unfound components: the remaining fit jittered, for the driver's refinement to sort out.
      for (let j = 0; j < q; j++) rest[j] += 0.1 * sdY * random.normal() / Math.sqrt(q);
    }
    coefficients.push(rest);
  }
  return { coefficients, certificate, converged };
}

function refitAll(design: Float64Array, q: number, y: Float64Array, active: Int32Array, count: number, scratch: ConcentrationScratch): Float64Array | null {
  scratch.absolute.fill(0, 0, count);
  return refitOnRows(design, q, y, active, count, 0, scratch);
}

/** Moment descent on the active rows towards the narrowest component, finished by concentration. */
function findComponent(
  data: RegressionData, design: Float64Array, q: number, intercept: boolean,
  active: Int32Array, count: number, remaining: number,
  exactTolerance: number, enough: number, scratch: ConcentrationScratch, random: Random,
): FoundComponent | null {
  const { p, x, y } = data;
  const rows = new Float64Array(count * p);
  const responses = new Float64Array(count);
  let yMean = 0;
  for (let t = 0; t < count; t++) {
    const i = active[t];
    rows.set(x.subarray(i * p, i * p + p), t * p);
    responses[t] = y[i];
    yMean += y[i];
  }
  yMean /= count;
  if (intercept) for (let t = 0; t < count; t++) responses[t] -= yMean;
  const whitened = whitenPredictors(rows, count, p, intercept);
  if (!whitened) return null;
  const xw = whitened.x;
  const subspace = responseMomentSubspace(xw, responses, count, p, remaining);

  // Scratch for the descent, allocated once per component.
  const residuals = Float64Array.from(responses);
  const trial = new Float64Array(count);
  const deviation = new Float64Array(count);
  const selectScratch = new Float64Array(count);
  const weightScratch = new Float64Array(count);
  const momentScratch = new Float64Array(p * p);
  const responsibilities = new Float64Array(count * remaining);
  const gamma = new Float64Array(p);
  const keep = Math.min(Math.ceil(1.5 * q) + 2, Math.max(q + 2, Math.floor((0.6 * count) / remaining)));
  // The screening statistic: a low quantile of |r − offset|, cheap (O(n)) and monotone in the
  // narrowest scale when one component is much narrower than the rest.
  const quantileRank = Math.max(q, Math.floor(count / (4 * remaining))) - 1;
  const narrowProxy = (values: Float64Array, offset: number): number => {
    for (let t = 0; t < count; t++) deviation[t] = Math.abs(values[t] - offset);
    return selectSmallest(deviation, count, Math.min(count - 1, quantileRank), selectScratch);
  };

  let mixture = fitScaleMixture(residuals, count, remaining, !intercept, responsibilities);
  const startScale = Math.sqrt(mixture.variances[0]);
  let proxy = narrowProxy(residuals, mixture.means[0]);
  let best: FoundComponent | null = null;
  const basisCount = 2 * remaining;
  const projected = new Float64Array(count * basisCount);
  const direction = new Float64Array(p);
  const combination = new Float64Array(basisCount);

  for (let step = 0; step < MAX_DESCENT_STEPS; step++) {
    // Try to finish from the current point.
    const start = toOriginal(whitened, gamma, yMean, mixture.means[0], intercept);
    const concentrated = concentrateComponent(design, q, y, active, count, start, keep, CONCENTRATION_STEPS, exactTolerance, enough, scratch);
    if (concentrated.exactRows >= enough) {
      return { coefficients: concentrated.coefficients, exact: true, scale: exactTolerance, startScale };
    }
    const scale = Math.sqrt(mixture.variances[0]);
    if (!best || scale < best.scale) best = { coefficients: concentrated.coefficients, exact: false, scale, startScale };

    // Search directions: the moment combination at the current point and the response subspace.
    const search = momentSearchSubspace(xw, residuals, count, p, mixture.variances, remaining, weightScratch, momentScratch);
    const basis = search.vectors.concat(subspace.vectors);
    projectRows(xw, count, p, basis, projected);
    let bestProxy = proxy;
    let bestStep = 0;
    const bestCombination = new Float64Array(basisCount);
    const tries = basis.length + RANDOM_DIRECTIONS;
    for (let attempt = 0; attempt < tries; attempt++) {
      combination.fill(0);
      if (attempt < basis.length) combination[attempt] = 1;
      else for (let b = 0; b < basis.length; b++) combination[b] = random.normal();
      // Unit length in whitened coordinates.
      direction.fill(0);
      for (let b = 0; b < basis.length; b++) for (let j = 0; j < p; j++) direction[j] += combination[b] * basis[b][j];
      let norm = 0;
      for (let j = 0; j < p; j++) norm += direction[j] * direction[j];
      norm = Math.sqrt(norm);
      if (!(norm > 0)) continue;
      for (let b = 0; b < basis.length; b++) combination[b] /= norm;
      for (const length of STEP_LENGTHS) {
        const t = length * scale;
        for (let r = 0; r < count; r++) {
          let z = 0;
          const row = r * basisCount;
          for (let b = 0; b < basis.length; b++) z += projected[row + b] * combination[b];
          trial[r] = residuals[r] - t * z;
        }
        const value = narrowProxy(trial, mixture.means[0]);
        if (value < bestProxy) {
          bestProxy = value;
          bestStep = t;
          bestCombination.set(combination);
        }
      }
    }
    if (!(bestProxy < SHRINK_FACTOR * proxy)) break;
    // Accept: a ← a + t·u.
    for (let b = 0; b < basis.length; b++) {
      const move = bestStep * bestCombination[b];
      for (let j = 0; j < p; j++) gamma[j] += move * basis[b][j];
    }
    for (let r = 0; r < count; r++) {
      let z = 0;
      for (let j = 0; j < p; j++) z += xw[r * p + j] * gamma[j];
      residuals[r] = responses[r] - z;
    }
    proxy = bestProxy;
    mixture = fitScaleMixture(residuals, count, remaining, !intercept, responsibilities);
  }
  return best;
}

/** Z = X B for the basis vectors, row-major n x |B| (one pass over the rows). */
function projectRows(xw: Float64Array, n: number, p: number, basis: Float64Array[], out: Float64Array): void {
  const m = basis.length;
  for (let r = 0; r < n; r++) {
    const row = r * p;
    for (let b = 0; b < m; b++) {
      const v = basis[b];
      let z = 0;
      for (let j = 0; j < p; j++) z += xw[row + j] * v[j];
      out[r * m + b] = z;
    }
  }
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
