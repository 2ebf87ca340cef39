/**
 * Plain EM (Dempster, Laird & Rubin 1977) built from the product's own E- and M-steps, with
 * none of the product's search (no warm start, seeding, concentration, peeling or split and
 * merge). Two reference points for the accuracy bench use it:
 *  - EM started at the true parameters: its error is the likelihood maximum's own, so the gap
 *    between it and a labelled oracle belongs to the estimator, not to the search;
 *  - a careful EM with random-partition restarts, each run to convergence, the best likelihood
 *    kept and finished by hard assignment on noiseless data: the usual practice the product is
 *    compared with (recovery and time, measured here in the same process).
 */
import { createWorkspace, type MixtureWorkspace } from "../src/engine/mixture/mixtureWorkspace";
import { createParameters, type MixtureParameters } from "../src/engine/mixture/mixtureParameters";
import { computeResiduals, eStep } from "../src/engine/mixture/eStep";
import { mStepCoefficients, mStepVariances, type Guards } from "../src/engine/mixture/mStep";
import { reseedComponent } from "../src/engine/mixture/reseedComponent";
import { hardAssignmentPolish } from "../src/engine/mixture/hardAssignmentPolish";
import { randomPartitionLabels, setHardMemberships } from "../src/engine/mixture/starts";
import type { Random } from "../src/engine/random";
import type { GeneratedProblem } from "../src/synthetic/generateProblems";

const MAX_ITERATIONS = 500;
/** The product's stopping rule and default: |ΔL| ≤ 1e-8 · max(|L|, n). */
const TOLERANCE = 1e-8;

/** The product's guards (fitMixture): q + 1 rows per component, variance floor 1e-20·var(y), Hathaway ratio bound 1e-6. */
function productGuards(ws: MixtureWorkspace): Guards {
  return { minimumSize: ws.q + 1, varianceFloor: 1e-20 * ws.yVariance, varianceRatioBound: 1e-6, covarianceRidge: 1e-6 };
}

/** EM from `params` (updated in place) to convergence; returns the final log-likelihood. */
function runPlainEm(ws: MixtureWorkspace, params: MixtureParameters, guards: Guards, random: Random | null, tolerance = TOLERANCE): number {
  computeResiduals(ws, params);
  let logLikelihood = eStep(ws, params);
  for (let iteration = 0; iteration < MAX_ITERATIONS; iteration++) {
    const report = mStepCoefficients(ws, params, guards);
    if (random) for (const c of report.collapsed) reseedComponent(ws, params, c, guards, random);
    computeResiduals(ws, params);
    mStepVariances(ws, params, guards, random ? report.collapsed : []);
    const next = eStep(ws, params);
    const change = Math.abs(next - logLikelihood);
    logLikelihood = next;
    if (change <= tolerance * Math.max(Math.abs(next), ws.n)) break;
  }
  return logLikelihood;
}

function coefficientsOf(params: MixtureParameters, q: number): Float64Array[] {
  return Array.from({ length: params.k }, (_, j) => params.coefficients.slice(j * q, (j + 1) * q));
}

/** Coefficients (intercept first) of EM started at the true parameters. */
export function emFromTruth(problem: GeneratedProblem): Float64Array[] {
  const { k, intercept } = problem;
  const ws = createWorkspace(problem.data, k, intercept, false);
  const params = createParameters(k, ws.q, ws.p, false);
  problem.coefficients.forEach((c, j) => params.coefficients.set(c, j * ws.q));
  problem.weights.forEach((w, j) => (params.weights[j] = w));
  problem.sigmas.forEach((s, j) => (params.variances[j] = s * s));
  runPlainEm(ws, params, productGuards(ws), null, 1e-10);
  return coefficientsOf(params, ws.q);
}

/**
 * Careful EM: `restarts` random partitions, each refined to convergence, the best likelihood
 * kept, then hard-assignment polish by QR when it is noiseless. Coefficients (intercept first
 * when the problem has one).
 */
export function carefulEm(problem: GeneratedProblem, restarts: number, random: Random): Float64Array[] {
  return carefulEmFit(problem, restarts, random).coefficients;
}

/** Careful EM's coefficients and the log-likelihood of its best restart (after the polish when one applies). */
export function carefulEmFit(problem: GeneratedProblem, restarts: number, random: Random): { coefficients: Float64Array[]; logLikelihood: number } {
  const { k, intercept } = problem;
  const ws = createWorkspace(problem.data, k, intercept, false);
  const guards = productGuards(ws);
  let best: MixtureParameters | null = null;
  let bestLogLikelihood = -Infinity;
  for (let r = 0; r < restarts; r++) {
    const params = createParameters(k, ws.q, ws.p, false);
    setHardMemberships(ws, randomPartitionLabels(ws.n, k, random));
    const report = mStepCoefficients(ws, params, guards);
    for (const c of report.collapsed) reseedComponent(ws, params, c, guards, random);
    computeResiduals(ws, params);
    mStepVariances(ws, params, guards, report.collapsed);
    const logLikelihood = runPlainEm(ws, params, guards, random);
    if (logLikelihood > bestLogLikelihood) {
      bestLogLikelihood = logLikelihood;
      best = params;
    }
  }
  const polished = best ? hardAssignmentPolish(ws, best, guards) : null;
  const final = polished ?? best!;
  computeResiduals(ws, final);
  const logLikelihood = eStep(ws, final);
  return { coefficients: coefficientsOf(final, ws.q), logLikelihood: polished && logLikelihood < bestLogLikelihood ? bestLogLikelihood : logLikelihood };
}
