import type { Random } from "../random";
import type { MixtureParameters } from "./mixtureParameters";
import type { MixtureWorkspace } from "./mixtureWorkspace";
import { createParameters } from "./mixtureParameters";
import { computeResiduals } from "./eStep";
import { mStepPredictorModel, mStepVariances, type Guards } from "./mStep";
import { scaledCholeskySolve } from "../cholesky";
import { rowResidual } from "../rowResiduals";
import { addNormalEquations } from "../weightedGram";

/**
 * Cheap starting points for EM. Each returns hard labels or coefficients; the driver turns
 * them into parameters (parametersFromLabels / parametersFromCoefficients) and refines each
 * briefly, keeping the best likelihood (many short runs before a long one: Biernacki, Celeux
 * & Govaert 2003, Computational Statistics & Data Analysis 41).
 */

/** Every row to a uniformly random component (the classical random-partition start). */
export function randomPartitionLabels(n: number, k: number, random: Random): Int32Array {
  const labels = new Int32Array(n);
  for (let i = 0; i < n; i++) labels[i] = random.integer(k);
  return labels;
}

/**
 * Rows grouped by the residuals of one pooled least-squares fit: components with different
 * intercepts or slopes leave residuals in different ranges. Centres are seeded by
 * k-means++ (Arthur & Vassilvitskii 2007, SODA: each next centre drawn with probability
 * proportional to the squared distance to the nearest centre so far) and polished by a few
 * Lloyd (1982) iterations in one dimension.
 */
export function residualSeedingLabels(ws: MixtureWorkspace, random: Random): Int32Array {
  const { n, q, design, y } = ws;
  const gram = new Float64Array(q * q);
  const rhs = new Float64Array(q);
  addNormalEquations(design, q, y, null, n, gram, rhs);
  const pooled = new Float64Array(q);
  scaledCholeskySolve(gram, rhs, q, pooled, ws.choleskyScratch);
  const points = new Float64Array(n);
  for (let i = 0; i < n; i++) points[i] = rowResidual(design, i * q, q, pooled, 0, y[i]);
  return kMeansLabels(points, n, 1, ws.k, random);
}

/**
 * Rows grouped by where they lie in (x, y) jointly, each coordinate standardised: the natural
 * start when groups differ in the location of their x (the joint model's case).
 */
export function locationSeedingLabels(ws: MixtureWorkspace, random: Random): Int32Array {
  const { n, p, predictors, y } = ws;
  const dimension = p + 1;
  const points = new Float64Array(n * dimension);
  const ySd = Math.sqrt(ws.yVariance) || 1;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < p; j++) points[i * dimension + j] = predictors[i * p + j] / (Math.sqrt(ws.predictorVariances[j]) || 1);
    points[i * dimension + p] = y[i] / ySd;
  }
  return kMeansLabels(points, n, dimension, ws.k, random);
}

/**
 * Lloyd iterations after k-means++ seeding on n points of the given dimension (row-major), at
 * most; they end early once no point changes centre (the centres, and so every later
 * assignment, would then stay as they are).
 */
const LLOYD_ITERATIONS = 10;

function kMeansLabels(points: Float64Array, n: number, dimension: number, k: number, random: Random): Int32Array {
  const centres = new Float64Array(k * dimension);
  const nearest = new Float64Array(n).fill(Infinity);
  let chosen = random.integer(n);
  for (let c = 0; c < k; c++) {
    centres.set(points.subarray(chosen * dimension, chosen * dimension + dimension), c * dimension);
    let total = 0;
    for (let i = 0; i < n; i++) {
      const d = squaredDistance(points, i, centres, c, dimension);
      if (d < nearest[i]) nearest[i] = d;
      total += nearest[i];
    }
    if (c + 1 === k) break;
    // Draw the next centre with probability ∝ squared distance (k-means++).
    let target = random.next() * total;
    chosen = n - 1;
    for (let i = 0; i < n; i++) {
      target -= nearest[i];
      if (target < 0) {
        chosen = i;
        break;
      }
    }
  }
  const labels = new Int32Array(n);
  const counts = new Float64Array(k);
  for (let iteration = 0; iteration <= LLOYD_ITERATIONS; iteration++) {
    let moved = 0;
    for (let i = 0; i < n; i++) {
      let best = 0;
      let bestDistance = Infinity;
      for (let c = 0; c < k; c++) {
        const d = squaredDistance(points, i, centres, c, dimension);
        if (d < bestDistance) {
          bestDistance = d;
          best = c;
        }
      }
      if (iteration === 0 || labels[i] !== best) moved++;
      labels[i] = best;
    }
    if (iteration === LLOYD_ITERATIONS || moved === 0) break;
    counts.fill(0);
    const sums = new Float64Array(k * dimension);
    for (let i = 0; i < n; i++) {
      counts[labels[i]]++;
      for (let j = 0; j < dimension; j++) sums[labels[i] * dimension + j] += points[i * dimension + j];
    }
    for (let c = 0; c < k; c++) {
      if (counts[c] === 0) continue;
      for (let j = 0; j < dimension; j++) centres[c * dimension + j] = sums[c * dimension + j] / counts[c];
    }
  }
  return labels;
}

function squaredDistance(points: Float64Array, row: number, centres: Float64Array, centre: number, dimension: number): number {
  let total = 0;
  for (let j = 0; j < dimension; j++) {
    const d = points[row * dimension + j] - centres[centre * dimension + j];
    total += d * d;
  }
  return total;
}

/** Hard memberships (0/1) from labels, written into ws.memberships. */
export function setHardMemberships(ws: MixtureWorkspace, labels: Int32Array): void {
  const { n, k, memberships } = ws;
  memberships.fill(0);
  for (let i = 0; i < n; i++) memberships[i * k + labels[i]] = 1;
}

/**
 * Parameters from given coefficients: each row goes to the component with the smallest
 * absolute residual, and weights, variances (and the x model) follow from that partition.
 * Used for coefficient-only starts (the moment warm start, a previous fit's coefficients).
 */
export function parametersFromCoefficients(ws: MixtureWorkspace, coefficients: Float64Array, guards: Guards): MixtureParameters {
  const { n, q, p, k } = ws;
  const params = createParameters(k, q, p, ws.joint);
  params.coefficients.set(coefficients);
  computeResiduals(ws, params);
  const labels = new Int32Array(n);
  for (let i = 0; i < n; i++) {
    let best = 0;
    for (let c = 1; c < k; c++) if (Math.abs(ws.residuals[i * k + c]) < Math.abs(ws.residuals[i * k + best])) best = c;
    labels[i] = best;
  }
  setHardMemberships(ws, labels);
  ws.sizes.fill(0);
  for (let i = 0; i < n; i++) ws.sizes[labels[i]]++;
  let total = 0;
  for (let c = 0; c < k; c++) total += Math.max(ws.sizes[c], 1);
  for (let c = 0; c < k; c++) params.weights[c] = Math.max(ws.sizes[c], 1) / total;
  mStepVariances(ws, params, guards);
  // An empty component has no residuals of its own: give it the pooled variance.
  let pooled = 0;
  for (let c = 0; c < k; c++) pooled += params.variances[c] * ws.sizes[c];
  pooled /= n;
  for (let c = 0; c < k; c++) if (ws.sizes[c] === 0) params.variances[c] = Math.max(pooled, guards.varianceFloor);
  if (ws.joint) mStepPredictorModel(ws, params, guards);
  return params;
}
