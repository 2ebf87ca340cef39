import type { Random } from "../random";
import type { MixtureParameters } from "./mixtureParameters";
import type { MixtureWorkspace } from "./mixtureWorkspace";
import { createParameters } from "./mixtureParameters";
import { computeResiduals } from "./eStep";
import { mStepPredictorModel, mStepVariances, type Guards } from "./mStep";
import { scaledCholeskySolve } from "../cholesky";
import { rowResidual } from "../rowResiduals";
import { addNormalEquations } from "../weightedGram";
import { reserveDoubles, rowKernels, type RowKernels } from "../rowKernels";

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
  const space = kMeansSpace(points, n, dimension, k);
  const { centres, nearest, labels } = space;
  nearest.fill(Infinity);
  let chosen = random.integer(n);
  for (let c = 0; c < k; c++) {
    centres.set(space.points.subarray(chosen * dimension, chosen * dimension + dimension), c * dimension);
    const total = lowerNearest(space, c);
    if (c + 1 === k) break;
    // Draw the next centre with probability ∝ squared distance (k-means++).
    chosen = drawPoint(space, random.next() * total);
  }
  for (let iteration = 0; iteration <= LLOYD_ITERATIONS; iteration++) {
    const moved = assignNearest(space, iteration === 0);
    if (iteration === LLOYD_ITERATIONS || moved === 0) break;
    const { sums, counts } = space;
    centreSums(space);
    for (let c = 0; c < k; c++) {
      if (counts[c] === 0) continue;
      for (let j = 0; j < dimension; j++) centres[c * dimension + j] = sums[c * dimension + j] / counts[c];
    }
  }
  return labels.slice();
}

/**
 * The k-means arrays: in the row kernels' module memory where it runs (the points copied in
 * once, rowKernels.ts), plain arrays otherwise; both paths give the same labels to the bit.
 */
interface KMeansSpace {
  kernels: RowKernels | null;
  n: number;
  dimension: number;
  k: number;
  points: Float64Array;
  centres: Float64Array;
  nearest: Float64Array;
  labels: Int32Array;
  sums: Float64Array;
  counts: Float64Array;
}

function kMeansSpace(points: Float64Array, n: number, dimension: number, k: number): KMeansSpace {
  const kernels = rowKernels();
  if (!kernels) {
    return { kernels, n, dimension, k, points, centres: new Float64Array(k * dimension), nearest: new Float64Array(n), labels: new Int32Array(n), sums: new Float64Array(k * dimension), counts: new Float64Array(k) };
  }
  // In doubles: the points, centres, nearest distances, labels (32-bit, two to a double), sums, counts.
  const centresAt = n * dimension;
  const nearestAt = centresAt + k * dimension;
  const labelsAt = nearestAt + n;
  const sumsAt = labelsAt + Math.ceil(n / 2);
  const countsAt = sumsAt + k * dimension;
  reserveDoubles(kernels, countsAt + k);
  const buffer = kernels.memory.buffer;
  const space: KMeansSpace = {
    kernels, n, dimension, k,
    points: new Float64Array(buffer, 0, n * dimension),
    centres: new Float64Array(buffer, centresAt * 8, k * dimension),
    nearest: new Float64Array(buffer, nearestAt * 8, n),
    labels: new Int32Array(buffer, labelsAt * 8, n),
    sums: new Float64Array(buffer, sumsAt * 8, k * dimension),
    counts: new Float64Array(buffer, countsAt * 8, k),
  };
  space.points.set(points.subarray(0, n * dimension));
  return space;
}

/** Each point's squared distance to its nearest centre so far lowered to centre c's where smaller; returns their sum in row order. */
function lowerNearest(space: KMeansSpace, c: number): number {
  const { kernels, n, dimension, points, centres, nearest } = space;
  if (kernels) return kernels.nearestUpdate(points.byteOffset, n, dimension, centres.byteOffset + c * dimension * 8, nearest.byteOffset);
  let total = 0;
  for (let i = 0; i < n; i++) {
    const d = squaredDistance(points, i, centres, c, dimension);
    if (d < nearest[i]) nearest[i] = d;
    total += nearest[i];
  }
  return total;
}

/** The first point at which `target` less the nearest distances so far falls below 0, or the last point. */
function drawPoint(space: KMeansSpace, target: number): number {
  const { kernels, n, nearest } = space;
  if (kernels) return kernels.draw(nearest.byteOffset, n, target);
  for (let i = 0; i < n; i++) {
    target -= nearest[i];
    if (target < 0) return i;
  }
  return n - 1;
}

/** Each point to its nearest centre (the first of equals); returns how many labels changed (all on the first pass). */
function assignNearest(space: KMeansSpace, first: boolean): number {
  const { kernels, n, dimension, k, points, centres, labels } = space;
  if (kernels) return kernels.assignNearest(points.byteOffset, n, dimension, centres.byteOffset, k, labels.byteOffset, first ? 1 : 0);
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
    if (first || labels[i] !== best) moved++;
    labels[i] = best;
  }
  return moved;
}

/** Per centre the count of its points and the sums of their coordinates, in row order (set afresh). */
function centreSums(space: KMeansSpace): void {
  const { kernels, n, dimension, k, points, labels, sums, counts } = space;
  if (kernels) {
    kernels.centreSums(points.byteOffset, n, dimension, labels.byteOffset, k, sums.byteOffset, counts.byteOffset);
    return;
  }
  sums.fill(0);
  counts.fill(0);
  for (let i = 0; i < n; i++) {
    counts[labels[i]]++;
    for (let j = 0; j < dimension; j++) sums[labels[i] * dimension + j] += points[i * dimension + j];
  }
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
