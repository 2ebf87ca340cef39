import type { FitContext } from "./fitContext";
import type { CancelSignal } from "../mixtureTypes";
import type { MixtureWorkspace } from "./mixtureWorkspace";
import { enoughRows, exactTolerance } from "./exactComponents";
import { ConcentrationSteps } from "./concentrationSteps";
import { whitenRows } from "../rowKernels";
import { mostLikelyComponent, normaliseLogDensities } from "../logDensities";
import { whitenPredictors } from "../warmStart/whitenPredictors";
import { meanOuterProduct } from "../secondMoment";
import { choleskyScratchLength, scaledCholeskyLower, scaledCholeskySolve } from "../cholesky";
import { addNormalEquations } from "../weightedGram";
import { gatherRows } from "../rowSubset";
import { checkSignal } from "../errors";
import { createRandom } from "../random";

/**
 * Design clusters: when the components' predictors are drawn from different distributions
 * (a design covariance of their own), the predictors alone can tell the rows apart, even at a
 * few rows per coefficient. A Gaussian mixture on the predictors (the predictor part of the
 * cluster-weighted model, Gershenfeld 1997; Ingrassia, Minotti & Vittadini 2012), fitted by
 * deterministic annealing EM (Ueda & Nakano 1998, Neural Networks 11), groups the rows; least
 * trimmed squares concentration steps inside each group (concentrationSteps.ts) then shed the
 * rows of other components it took in and reach the exact fit of the component it mostly holds.
 *
 * Measured on invented noiseless problems fitted with an intercept, d = 50, K = 7, zero
 * predictor means, each component's predictors a random rotation of singular values uniform
 * in 0.3-3 (three problems each, as `skein fit` processes): at 4 rows per predictor per
 * component 3 of 3 recovered in 1.6-1.8 s, against 0 of 3 without (3.3-6.6 s); at 5 rows 3 of
 * 3 in 1.7-1.9 s against 1 of 3 (3.2-5.9 s); at 3 rows 1 of 2 against 0. A grouping costs
 * 0.5-0.8 s there. With the same design in
 * every component the groups are arbitrary and nothing lands; so too with eigenvalues drawn
 * uniform in 0.5-2 (the bench's grid) or 0.09-9: the densities then overlap too much for
 * about four rows per predictor to tell them apart (DEVELOPERS.md).
 *
 * Returns K starts, the largest group's first: each group's coefficients after its
 * concentration steps (exact when they landed); or null when the predictors look like one
 * normal sample (predictorsMayTell), which no grouping can split by component.
 */
export function designClusterStarts(ctx: FitContext): Float64Array[] | null {
  const { data, full } = ctx;
  if (!predictorsMayTell(data.x, data.n, data.p)) return null;
  // A generator of its own, so the annealings after a try that did not land draw as they would without it.
  const groups = designGroups(data.x, data.n, data.p, full.k, ctx.settings.seed + DESIGN_SEED_OFFSET, ctx.signal);
  return concentrateGroups(full, groups, exactTolerance(full));
}

/**
 * Whether the predictors may differ in distribution between components: false when they look
 * like one normal sample, by Mardia's multivariate kurtosis (Mardia 1970, "Measures of
 * multivariate skewness and kurtosis with applications", Biometrika 57): b₂, the mean of
 * ((x − x̄)ᵀ S⁻¹ (x − x̄))², is about p(p + 2)(n − 1)/(n + 1) for normal rows, with standard
 * deviation about √(8p(p + 2)/n). A mixture of normal predictors of one mean and different
 * covariances has a larger b₂ (Σ π_c C_c = S makes the mean of the squared distance convex
 * in the C_c). Measured on the problems above (NumPy): 18.7-23.1 standard deviations above
 * at d = 50, 6.4-12.2 at d = 20, 5.7-7.4 for the bench's eigenvalues in 0.5-2, and 0.1-1.6
 * with the same standard normal predictors in every component (d = 20-100), whose grouping
 * then costs nothing.
 */
export function predictorsMayTell(predictors: Float64Array, n: number, p: number): boolean {
  if (n <= p + 1) return false;
  const normal = (p * (p + 2) * (n - 1)) / (n + 1);
  return mardiaKurtosis(predictors, n, p) - normal > KURTOSIS_Z * Math.sqrt((8 * p * (p + 2)) / n);
}

/** Standard deviations of b₂ above its normal value that count as more than one normal sample. */
const KURTOSIS_Z = 4;

/**
 * Mardia's b₂ of n rows of p predictors (S the covariance with divisor n), from the rows
 * whitened as the moment warm start whitens them (whitenPredictors); Infinity when S is
 * singular (predictors in a lower-dimensional set, a dummy's levels or a constant, are not
 * one normal sample).
 */
export function mardiaKurtosis(predictors: Float64Array, n: number, p: number): number {
  const whitened = whitenPredictors(predictors, n, p, true);
  if (!whitened) return Infinity;
  let kurtosis = 0;
  for (let i = 0; i < n; i++) {
    let squared = 0;
    for (let j = 0; j < p; j++) squared += whitened.x[i * p + j] * whitened.x[i * p + j];
    kurtosis += squared * squared;
  }
  return kurtosis / n;
}

/**
 * The rows (n x p predictors, row-major) in k groups by an annealed Gaussian mixture on the
 * predictors alone, from random soft memberships drawn from `seed`: each row in its most
 * likely group.
 */
export function designGroups(predictors: Float64Array, n: number, p: number, k: number, seed: number, signal?: CancelSignal): number[][] {
  const x = centredPredictors(predictors, n, p);
  const model = predictorMixture(x, n, p, k);
  const memberships = new Float64Array(n * k);
  const random = createRandom(seed);
  randomMemberships(memberships, n, k, () => random.next());
  for (let level = 0; level < DESIGN_LEVELS + DESIGN_FINAL_LEVELS; level++) {
    checkSignal(signal);
    const inverseTemperature = level >= DESIGN_LEVELS ? 1 : DESIGN_START * Math.pow(1 / DESIGN_START, level / (DESIGN_LEVELS - 1));
    for (let iteration = 0; iteration < DESIGN_ITERATIONS; iteration++) predictorEmStep(model, memberships, inverseTemperature);
  }
  return hardGroups(memberships, n, k);
}

/** The design clusters' generator's seed: the fit's own plus this (the trial generator's is plus 1). */
const DESIGN_SEED_OFFSET = 2;

/**
 * Ridge of each group's predictor covariance, times the predictor's overall variance: a group
 * of about four rows per predictor estimates its covariance poorly. In the prototype,
 * shrinking each covariance by 0.05-0.3 toward a multiple of the identity grouped about as
 * purely, and this ridge landed as many components as a shrinkage of 0.1.
 */
const DESIGN_RIDGE = 0.1;
/**
 * The schedule: the log densities scaled by an inverse temperature rising geometrically from
 * DESIGN_START to 1 over DESIGN_LEVELS levels, then DESIGN_FINAL_LEVELS at 1, DESIGN_ITERATIONS
 * EM iterations each. In the prototype 40 levels of 3 iterations landed a little more often,
 * at 2.5 times the cost; plain EM (no annealing) grouped the rows far less purely.
 */
const DESIGN_START = 0.05;
const DESIGN_LEVELS = 20;
const DESIGN_FINAL_LEVELS = 10;
const DESIGN_ITERATIONS = 2;
/** Rows a group keeps in its concentration steps (at least enoughRows): in the prototype's groupings 0.6-0.99 of the rows were in their group's main component. */
const GROUP_SHARE = 0.6;
const GROUP_STEPS = 30;

/** Random soft memberships: each row's shares drawn exponential and normalised (a uniform draw on the simplex). */
export function randomMemberships(memberships: Float64Array, n: number, k: number, uniform: () => number): void {
  for (let i = 0; i < n; i++) {
    let total = 0;
    for (let c = 0; c < k; c++) total += memberships[i * k + c] = -Math.log(1 - uniform());
    for (let c = 0; c < k; c++) memberships[i * k + c] /= total;
  }
}

/** The predictors less their overall means (each group's covariance then comes from moments about a nearby point). */
function centredPredictors(x: Float64Array, n: number, p: number): Float64Array {
  const mean = new Float64Array(p);
  for (let i = 0; i < n; i++) for (let j = 0; j < p; j++) mean[j] += x[i * p + j];
  for (let j = 0; j < p; j++) mean[j] /= n;
  const out = new Float64Array(n * p);
  for (let i = 0; i < n; i++) for (let j = 0; j < p; j++) out[i * p + j] = x[i * p + j] - mean[j];
  return out;
}

type PredictorMixture = ReturnType<typeof predictorMixture>;

/** The buffers of an EM of k groups on the n x p centred predictors `x`, and each predictor's ridge. */
function predictorMixture(x: Float64Array, n: number, p: number, k: number) {
  // DESIGN_RIDGE times each predictor's overall variance (or 1 for a constant one).
  const ridge = new Float64Array(p);
  for (let j = 0; j < p; j++) {
    let squares = 0;
    for (let i = 0; i < n; i++) squares += x[i * p + j] * x[i * p + j];
    ridge[j] = DESIGN_RIDGE * (squares > 0 ? squares / n : 1);
  }
  const [weights, logTerms, whitened] = [n, n * k, n * p].map((length) => new Float64Array(length));
  const [covariance, lower, mean] = [p * p, p * p, p].map((length) => new Float64Array(length));
  return { x, n, p, k, ridge, weights, logTerms, whitened, covariance, lower, mean, scratch: new Float64Array(choleskyScratchLength(p)) };
}

/**
 * One EM iteration of the Gaussian mixture on the predictors, through the kernels: the M-step
 * from `memberships` (each group's weighted moments by the weighted-Gram kernel,
 * meanOuterProduct; its covariance ridged and factored by the Cholesky kernel), then the
 * E-step into them (the rows whitened by the row kernels' whitenRows, the log terms times
 * `inverseTemperature` normalised by the E-step kernel's normaliseLogDensities).
 */
function predictorEmStep(model: PredictorMixture, memberships: Float64Array, inverseTemperature: number): void {
  const { x, n, p, k, ridge, weights, logTerms, whitened, covariance, lower, mean, scratch } = model;
  for (let c = 0; c < k; c++) {
    for (let i = 0; i < n; i++) weights[i] = memberships[i * k + c];
    // (1/n) Σ w (1, x)(1, x)ᵀ: the share, the weighted mean and second moment of group c.
    const moment = meanOuterProduct(x, n, p, weights, true);
    const share = moment[0];
    const logShare = Math.log(share);
    for (let j = 0; j < p; j++) mean[j] = share > 0 ? moment[j + 1] / share : 0;
    for (let j = 0; j < p; j++) {
      for (let l = 0; l < p; l++) covariance[j * p + l] = (share > 0 ? moment[(j + 1) * (p + 1) + l + 1] / share : 0) - mean[j] * mean[l];
      covariance[j * p + j] += ridge[j];
    }
    const logDeterminant = share > 0 ? scaledCholeskyLower(covariance, p, lower, scratch) : NaN;
    if (Number.isNaN(logDeterminant)) {
      for (let i = 0; i < n; i++) logTerms[i * k + c] = -Infinity;
      continue;
    }
    whitenRows(x, n, p, mean, lower, whitened);
    for (let i = 0; i < n; i++) {
      let squared = 0;
      for (let j = 0; j < p; j++) squared += whitened[i * p + j] * whitened[i * p + j];
      logTerms[i * k + c] = inverseTemperature * (logShare - 0.5 * (logDeterminant + squared));
    }
  }
  normaliseLogDensities(logTerms, n, k);
  memberships.set(logTerms);
}

/** The rows of each group: each row in its most likely one. */
function hardGroups(memberships: Float64Array, n: number, k: number): number[][] {
  const groups: number[][] = Array.from({ length: k }, () => []);
  for (let i = 0; i < n; i++) groups[mostLikelyComponent(memberships, i, k)].push(i);
  return groups;
}

/**
 * Each group's least-squares coefficients, concentrated on its own rows (a group too small
 * for that keeps its least-squares fit, or zeros); the largest group's first.
 */
function concentrateGroups(ws: MixtureWorkspace, groups: number[][], tolerance: number): Float64Array[] {
  const { q } = ws;
  const needed = enoughRows(q);
  const gram = new Float64Array(q * q);
  const right = new Float64Array(q);
  const scratch = new Float64Array(choleskyScratchLength(q));
  return [...groups].sort((a, b) => b.length - a.length).map((rows) => {
    const start = new Float64Array(q);
    if (rows.length <= q) return start;
    gram.fill(0);
    right.fill(0);
    addNormalEquations(ws.design, q, ws.y, rows, rows.length, gram, right);
    scaledCholeskySolve(gram, right, q, start, scratch);
    if (rows.length <= needed) return start;
    const group = gatherRows(ws.design, q, ws.y, rows);
    const steps = new ConcentrationSteps(group.matrix, rows.length, q, group.y);
    return steps.run(start, Math.max(needed, Math.floor(GROUP_SHARE * rows.length)), GROUP_STEPS, tolerance).coefficients;
  });
}
