/**
 * Reference point for accuracy (ii): EM (Dempster, Laird & Rubin 1977) started from the true
 * parameters of a generated problem and run to convergence, with the product's own E- and
 * M-steps. It reaches the local maximum of the likelihood nearest the truth, so its error is
 * what the maximum-likelihood estimator itself costs at that sample size; a fit whose error is
 * close to it has found that maximum, and the rest of the gap to the labelled oracle is the
 * estimator's, not the search's.
 */
import { createWorkspace } from "../src/engine/mixture/mixtureWorkspace";
import { createParameters } from "../src/engine/mixture/mixtureParameters";
import { computeResiduals, eStep } from "../src/engine/mixture/eStep";
import { mStepCoefficients, mStepVariances, type Guards } from "../src/engine/mixture/mStep";
import type { GeneratedProblem } from "./generateProblems";

const MAX_ITERATIONS = 2000;
/** Same stopping rule as the product's refinement: |ΔL| ≤ 1e-10 · max(|L|, n). */
const TOLERANCE = 1e-10;

/** Coefficients (intercept first) of EM started at the truth. */
export function emFromTruth(problem: GeneratedProblem): Float64Array[] {
  const { k, intercept } = problem;
  const ws = createWorkspace(problem.data, k, intercept, false);
  const params = createParameters(k, ws.q, ws.p, false);
  problem.coefficients.forEach((c, j) => params.coefficients.set(c, j * ws.q));
  problem.weights.forEach((w, j) => (params.weights[j] = w));
  problem.sigmas.forEach((s, j) => (params.variances[j] = s * s));
  // The product's guards (fitMixture): q + 1 rows per component, variance floor 1e-20·var(y),
  // Hathaway ratio bound 1e-6.
  const guards: Guards = { minimumSize: ws.q + 1, varianceFloor: 1e-20 * ws.yVariance, varianceRatioBound: 1e-6, covarianceRidge: 1e-6 };
  computeResiduals(ws, params);
  let logLikelihood = eStep(ws, params);
  for (let iteration = 0; iteration < MAX_ITERATIONS; iteration++) {
    mStepCoefficients(ws, params, guards);
    computeResiduals(ws, params);
    mStepVariances(ws, params, guards);
    const next = eStep(ws, params);
    const change = Math.abs(next - logLikelihood);
    logLikelihood = next;
    if (change <= TOLERANCE * Math.max(Math.abs(next), ws.n)) break;
  }
  return Array.from({ length: k }, (_, j) => params.coefficients.slice(j * ws.q, (j + 1) * ws.q));
}
