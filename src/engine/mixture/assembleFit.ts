import type { MixtureComponent, MixtureFit, RefinementReport, WarmStartReport } from "../mixtureTypes";
import { leastSquares } from "../leastSquares";
import type { Settings } from "./fitContext";
import type { MixtureWorkspace } from "./mixtureWorkspace";
import { createParameters, permuteParameters, type MixtureParameters } from "./mixtureParameters";
import { computeResiduals, eStep } from "./eStep";
import { mStepPredictorModel, type Guards } from "./mStep";
import { canonicalOrder } from "./canonicalOrder";
import { runEm } from "./runEm";
import { createRandom } from "../random";

/**
 * K = 1 is ordinary least squares: the QR core gives the coefficients, σ = sqrt(RSS/n) and
 * ln L = −n/2 (ln(2π σ²) + 1), exactly the single-regression values.
 */
export function fitSingleComponent(ws: MixtureWorkspace, settings: Settings, guards: Guards): MixtureFit {
  const fit = leastSquares(ws.design, ws.n, ws.q, ws.y, { intercept: settings.intercept });
  const params = createParameters(1, ws.q, ws.p, ws.joint);
  params.weights[0] = 1;
  params.coefficients.set(fit.coefficients);
  params.variances[0] = fit.mlSigma * fit.mlSigma;
  if (ws.background) {
    // With a background the one regression is a weighted fit: EM from least squares.
    const run = runEm(ws, params, { guards, tolerance: settings.tolerance, random: createRandom(settings.seed) }, settings.maxIterations);
    const warmStart: WarmStartReport = { converged: true, method: "single-component", certificate: NaN, startsTried: 1, disagreement: 0 };
    const refinement: RefinementReport = { converged: run.converged, iterations: run.iterations, logLikelihoodPath: [run.logLikelihood], reseeds: run.reseeds };
    // Worded like the K > 1 warning (reportFit), naming no control: each host adds the control it has.
    const warnings = run.converged ? [] : [`Not converged: the fit stopped after ${run.iterations} iteration${run.iterations === 1 ? "" : "s"} while the log-likelihood was still changing, so it may not be at its best. Try another seed.`];
    return assembleFit(ws, params, run.logLikelihood, settings, warmStart, refinement, warnings, undefined, true);
  }
  ws.memberships.fill(1);
  ws.sizes[0] = ws.n;
  let logLikelihood = fit.logLikelihood;
  if (ws.joint) {
    mStepPredictorModel(ws, params, guards);
    // Add the x part of the likelihood; the y part stays the exact least-squares value.
    const yOnly = createParameters(1, ws.q, ws.p, false);
    computeResiduals(ws, params);
    const both = eStep(ws, params);
    ws.joint = false;
    yOnly.variances[0] = params.variances[0];
    yOnly.coefficients.set(params.coefficients);
    const yPart = eStep(ws, yOnly);
    ws.joint = true;
    logLikelihood += both - yPart;
  }
  ws.memberships.fill(1);
  const warmStart: WarmStartReport = { converged: true, method: "single-component", certificate: NaN, startsTried: 0, disagreement: 0 };
  const refinement: RefinementReport = { converged: true, iterations: 0, logLikelihoodPath: [logLikelihood] };
  return assembleFit(ws, params, logLikelihood, settings, warmStart, refinement, [], fit.mlSigma);
}

export function assembleFit(
  ws: MixtureWorkspace,
  unordered: MixtureParameters,
  logLikelihood: number,
  settings: Settings,
  warmStart: WarmStartReport,
  refinement: RefinementReport,
  warnings: string[],
  exactSigma?: number,
  membershipsCurrent = false,
): MixtureFit {
  const { n, p, q, k } = ws;
  // Memberships from the reported parameters themselves, in one more E-step pass, unless the
  // driver knows the workspace holds exactly those: it may still hold the memberships of a
  // rejected proposal or of the same components in another order (restructuring moves and
  // sub-fits reorder components).
  if (!membershipsCurrent) {
    computeResiduals(ws, unordered);
    eStep(ws, unordered);
  }
  const order = canonicalOrder(unordered);
  const params = permuteParameters(unordered, order);
  // The workspace's memberships, put in the reported order in place, become the fit's: the
  // workspace ends with the fit, and a fresh n x k array on large inputs costs more than the
  // pass that fills it (the operating system zeroes every new page on first touch).
  const memberships = ws.memberships;
  const row = ws.rowScratch;
  const labels = new Int32Array(n);
  let entropy = 0;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < k; j++) row[j] = memberships[i * k + order[j]];
    let best = 0;
    for (let j = 0; j < k; j++) {
      const tau = row[j];
      memberships[i * k + j] = tau;
      if (tau > row[best]) best = j;
      // EN = −Σ τ ln τ (Biernacki, Celeux & Govaert 2000), with 0 ln 0 = 0 (and 1 ln 1 = 0 skipped).
      if (tau > 0 && tau < 1) entropy -= tau * Math.log(tau);
    }
    labels[i] = best;
  }
  const components = reportedComponents(params, p, q, settings.intercept, exactSigma);
  const { parameterCount, bic, icl } = informationCriteria(ws, settings, logLikelihood, entropy);
  // Small components are named by the separation check (checkSeparation), which every surface
  // runs beside the fit; warning here too would say the same thing twice in other words.
  if (k > 1 && n < 5 * k * q) {
    warnings.push(`There are only ${(n / (k * q)).toFixed(1)} rows per coefficient per component; components need several times more to be found reliably. Add rows or use fewer components or predictors.`);
  }
  return {
    k,
    n,
    p,
    q,
    intercept: settings.intercept,
    model: settings.model,
    components,
    memberships,
    labels,
    logLikelihood,
    parameterCount,
    bic,
    icl,
    warmStart,
    refinement,
    warnings,
    seed: settings.seed,
    ...(ws.background ? { background: { weight: ws.background.weight, logDensity: ws.background.logDensity, memberships: ws.background.memberships.slice() } } : {}),
  };
}

/** The components as reported: coefficients with the intercept slot first (0 without one), weight, noise SD, x model. */
function reportedComponents(params: MixtureParameters, p: number, q: number, intercept: boolean, exactSigma?: number): MixtureComponent[] {
  const components: MixtureComponent[] = [];
  for (let j = 0; j < params.k; j++) {
    const coefficients = new Float64Array(p + 1);
    coefficients.set(params.coefficients.subarray(j * q, j * q + q), intercept ? 0 : 1);
    const component: MixtureComponent = {
      weight: params.weights[j],
      sigma: exactSigma !== undefined ? exactSigma : Math.sqrt(params.variances[j]),
      coefficients,
    };
    if (params.xMeans && params.xCovariances) {
      component.xMean = params.xMeans.slice(j * p, j * p + p);
      component.xCovariance = params.xCovariances.slice(j * p * p, (j + 1) * p * p);
    }
    components.push(component);
  }
  return components;
}

/**
 * BIC and ICL, computed once here for every surface (the scan reads them off the fit).
 * ν = K(q + 2) − 1: q coefficients and one variance per component, K − 1 free weights; the
 * joint model adds a mean (p) and a covariance (p(p + 1)/2) per component; the background adds
 * its weight π₀ (its flat density is fixed by the data's range). BIC = −2 ln L + ν ln n
 * (Schwarz 1978); ICL = BIC + 2 EN with EN = −Σ τ ln τ (Biernacki, Celeux & Govaert 2000).
 */
function informationCriteria(ws: MixtureWorkspace, settings: Settings, logLikelihood: number, entropy: number): { parameterCount: number; bic: number; icl: number } {
  const parameterCount = countParameters(ws, settings);
  const bic = -2 * logLikelihood + parameterCount * Math.log(ws.n);
  return { parameterCount, bic, icl: bic + 2 * entropy };
}

/** ν of the BIC (informationCriteria). */
export function countParameters(ws: MixtureWorkspace, settings: Settings): number {
  const { p, q, k } = ws;
  let parameterCount = regressionParameterCount(k, q);
  if (settings.model === "joint") parameterCount += k * (p + (p * (p + 1)) / 2);
  if (ws.background) parameterCount += 1;
  return parameterCount;
}

/** The free parameters of K regressions on q design columns: k·q coefficients, k variances, k − 1 weights. */
export function regressionParameterCount(k: number, q: number): number {
  return k * (q + 2) - 1;
}
