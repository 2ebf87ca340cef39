import type { Random } from "../random";
import type { MixtureParameters } from "./mixtureParameters";
import type { MixtureWorkspace } from "./mixtureWorkspace";
import { scaledCholeskySolve } from "../cholesky";
import { factorPredictorCovariances, type Guards } from "./mStep";
import { rowResidual } from "../rowResiduals";
import { addNormalEquations } from "../weightedGram";

/**
 * Replaces a collapsed component (fewer than q + 1 rows' worth of membership, or a singular
 * weighted design) with a fresh one fitted to rows the mixture explains worst: a component
 * that the data no longer supports is better spent on rows no other component fits
 * (the re-seeding practice of split-and-merge and "empty cluster" repair in k-means;
 * Ueda, Nakano, Ghahramani & Hinton 2000, Neural Computation 12).
 *
 * The seed rows are drawn at random from the worst-fitted 2m rows (m = seed size) so that
 * repeated collapses do not re-seed the same way; the draw uses the fit's one generator.
 * Weights are renormalised; the variance is that of the seed fit.
 */
export function reseedComponent(ws: MixtureWorkspace, params: MixtureParameters, component: number, guards: Guards, random: Random): void {
  const { n, q, k, design, y, rowLogLikelihood } = ws;
  const { minimumSize, varianceFloor } = guards;
  const seedSize = Math.min(n, Math.max(3 * minimumSize, Math.floor(n / (2 * k))));
  const poolSize = Math.min(n, 2 * seedSize);
  // Indices of the poolSize rows with the lowest log mixture density.
  const order = Array.from({ length: n }, (_, i) => i);
  order.sort((a, b) => rowLogLikelihood[a] - rowLogLikelihood[b] || a - b);
  const pool = order.slice(0, poolSize);
  for (let i = pool.length - 1; i > 0; i--) {
    const j = random.integer(i + 1);
    const held = pool[i];
    pool[i] = pool[j];
    pool[j] = held;
  }
  const seedRows = pool.slice(0, seedSize);
  const gram = new Float64Array(q * q);
  const rhs = new Float64Array(q);
  addNormalEquations(design, q, y, seedRows, seedRows.length, gram, rhs);
  const solution = new Float64Array(q);
  if (scaledCholeskySolve(gram, rhs, q, solution, ws.choleskyScratch)) params.coefficients.set(solution, component * q);
  let rss = 0;
  for (const i of seedRows) {
    const r = rowResidual(design, i * q, q, params.coefficients, component * q, y[i]);
    rss += r * r;
  }
  params.variances[component] = Math.max(rss / seedRows.length, varianceFloor);
  params.weights[component] = seedRows.length / n;
  let total = 0;
  for (let c = 0; c < k; c++) total += params.weights[c];
  for (let c = 0; c < k; c++) params.weights[c] /= total;
  if (ws.joint) seedPredictorModel(ws, params, component, seedRows, guards.covarianceRidge);
}

/** Joint model: the re-seeded component's x mean and covariance (plus the ridge) from its seed rows. */
function seedPredictorModel(ws: MixtureWorkspace, params: MixtureParameters, component: number, seedRows: number[], ridge: number): void {
  const { p, predictors } = ws;
  const means = params.xMeans as Float64Array;
  const covariances = params.xCovariances as Float64Array;
  const meanOffset = component * p;
  const covarianceOffset = component * p * p;
  for (let j = 0; j < p; j++) {
    let sum = 0;
    for (const i of seedRows) sum += predictors[i * p + j];
    means[meanOffset + j] = sum / seedRows.length;
  }
  for (let j = 0; j < p; j++) {
    for (let l = 0; l <= j; l++) {
      let sum = 0;
      for (const i of seedRows) sum += (predictors[i * p + j] - means[meanOffset + j]) * (predictors[i * p + l] - means[meanOffset + l]);
      const value = sum / seedRows.length + (j === l ? ridge * (ws.predictorVariances[j] > 0 ? ws.predictorVariances[j] : 1) : 0);
      covariances[covarianceOffset + j * p + l] = value;
      covariances[covarianceOffset + l * p + j] = value;
    }
  }
  factorPredictorCovariances(params);
}
