import { checkSignal } from "../errors";
import type { EmContext, EmRun, EmStop } from "./fitContext";
import { copyParameters, type MixtureParameters } from "./mixtureParameters";
import type { MixtureWorkspace } from "./mixtureWorkspace";
import { computeResiduals, eStep } from "./eStep";
import { mStepCoefficients, mStepVariances, mStepVariancesFromGram } from "./mStep";
import { reseedComponent } from "./reseedComponent";
import { updateBackgroundWeight } from "./backgroundComponent";

/** Re-seedings allowed per run; beyond this the data does not support K components. */
const MAX_RESEEDS = 10;

/**
 * Runs whose iteration limit is above this run to convergence and may be accelerated
 * (SQUAREM, below); the brief runs that rank and confirm starts (15-60 iterations) stay plain
 * EM, so that their fixed budgets compare starts as before.
 */
const BRIEF_RUN_LIMIT = 60;
/**
 * A run switches to SQUAREM cycles once a change of ln L is at least this fraction of the one
 * before: EM is then converging slowly, as where components overlap. Runs whose changes
 * shrink faster stay plain EM to the end, iteration for iteration as before.
 */
const SLOW_RATIO = 0.5;

/**
 * EM (Dempster, Laird & Rubin 1977) from `params` (updated in place) until the relative
 * change of ln L, |ΔL| / max(|L|, n), drops below the tolerance, or the gain still to come does
 * (below), or `maxIterations` pass. The log-likelihood after each iteration kept goes to `path`
 * when one is given. A caller may also let it stop once the gain still to come is below
 * `ends.enoughGain` nats, an absolute bound (finishOnAllRows.ts), and may end it before it
 * converges through `ends.stop` or the context's `runStop` (the run then reports `stopped`).
 *
 * Gain still to come: EM converges linearly, each change about a times the one before, so
 * what is left after a change Δ is about Δ·a/(1 − a) (Aitken's acceleration applied to the
 * likelihood: Böhning, Dietz, Schaub, Schlattmann & Lindsay 1994; McNicholas, Murphy, McDaid
 * & Frost 2010). When the changes shrink fast (a ≤ 1/2) that is below the last change, and
 * the run stops an iteration or two earlier, with ln L within the same tolerance of its limit;
 * on large inputs each of those iterations is a full pass of the E- and M-steps.
 *
 * Slow runs are accelerated: a run to convergence (limit above BRIEF_RUN_LIMIT) of the plain
 * model whose changes shrink by SLOW_RATIO or less per iteration goes on in SQUAREM cycles
 * (squaremCycle), each tested for convergence as one step. Runs of the joint model, with a
 * background, watched by the context's runStop, or asked to (`ends.plain`: the runs that land
 * components exactly after exact peeling) stay plain EM.
 */
export function runEm(ws: MixtureWorkspace, params: MixtureParameters, em: EmContext, maxIterations: number, path: number[] | null = null, ends: EmEnds = {}): EmRun {
  const { enoughGain = 0 } = ends;
  const stop = eitherStop(ends.stop ?? null, em.runStop?.(ws, params, maxIterations) ?? null);
  const mayAccelerate = !ends.plain && maxIterations > BRIEF_RUN_LIMIT && !ws.joint && ws.background === null && !em.runStop;
  const state: RunState = { reseeds: 0, varianceBoundActive: false };
  let logLikelihood = eStep(ws, params, true);
  let converged = false;
  let iterations = 0;
  let accelerating = false;
  let previousChange = NaN;
  while (iterations < maxIterations) {
    checkSignal(em.signal);
    const left = maxIterations - iterations;
    const step = accelerating && left >= CYCLE_ITERATIONS ? squaremCycle(ws, params, em, state, path, left) : emIteration(ws, params, em, state, path);
    iterations += step.iterations;
    const change = step.logLikelihood - logLikelihood;
    logLikelihood = step.logLikelihood;
    // n as the floor of the scale, so that a log-likelihood near 0 does not make the test
    // impossibly strict.
    const allowed = em.tolerance * Math.max(Math.abs(logLikelihood), ws.n);
    // The gain still to come at whatever ratio the changes shrink by (below 1), for the
    // caller's absolute bound and its stop.
    const toCome = gainToCome(previousChange, change, 1);
    if (!step.reseeded && (Math.abs(change) <= allowed || gainToCome(previousChange, change) <= allowed || toCome <= enoughGain)) {
      converged = true;
      break;
    }
    if (stop !== null && !step.reseeded && stop(logLikelihood, toCome, iterations)) return { logLikelihood, iterations, converged, reseeds: state.reseeds, varianceBoundActive: state.varianceBoundActive, stopped: true };
    const slow = !step.reseeded && previousChange > 0 && change >= SLOW_RATIO * previousChange;
    previousChange = step.reseeded ? NaN : change;
    if (mayAccelerate && !accelerating && slow) {
      accelerating = true;
      // A cycle's change spans several iterations: the ratios start again from the first.
      previousChange = NaN;
    }
  }
  return { logLikelihood, iterations, converged, reseeds: state.reseeds, varianceBoundActive: state.varianceBoundActive };
}

/** What a run carries from step to step besides the parameters. */
interface RunState {
  reseeds: number;
  /** The last variance M-step met the variance bound (constrainedVariances). */
  varianceBoundActive: boolean;
}

/** One step of a run: ln L after it, the EM iterations it took, whether a component was re-seeded in it. */
interface EmStep {
  logLikelihood: number;
  iterations: number;
  reseeded: boolean;
}

/**
 * One EM iteration from the memberships of the last E-step: the M-step (re-seeding collapsed
 * components), then the E-step at the new parameters. ln L after it goes to `path`.
 */
function emIteration(ws: MixtureWorkspace, params: MixtureParameters, em: EmContext, state: RunState, path: number[] | null): EmStep {
  const { guards, random } = em;
  const report = mStepCoefficients(ws, params, guards);
  if (ws.background) updateBackgroundWeight(ws.background, ws.n);
  const reseeded: number[] = [];
  if (report.collapsed.length > 0 && state.reseeds < MAX_RESEEDS) {
    for (const c of report.collapsed) {
      reseedComponent(ws, params, c, guards, random);
      reseeded.push(c);
      state.reseeds++;
    }
  }
  let next: number;
  if (reseeded.length === 0 && mStepVariancesFromGram(ws, params, guards)) {
    next = eStep(ws, params, true);
  } else {
    computeResiduals(ws, params);
    state.varianceBoundActive = mStepVariances(ws, params, guards, reseeded);
    next = eStep(ws, params);
  }
  path?.push(next);
  return { logLikelihood: next, iterations: 1, reseeded: reseeded.length > 0 };
}

/** EM iterations a SQUAREM cycle takes when its extrapolation is kept. */
const CYCLE_ITERATIONS = 3;
/** Shorter extrapolations tried when a longer one lowers ln L, each halfway to plain EM's (each costs an EM iteration). */
const STEP_BACKTRACKS = 3;

/**
 * One SQUAREM cycle (Varadhan & Roland 2008, Scandinavian Journal of Statistics 35, scheme
 * SqS3): two EM iterations θ₀ → θ₁ → θ₂, then the extrapolation
 * θ' = θ₀ − 2α r + α² v with r = θ₁ − θ₀, v = θ₂ − 2θ₁ + θ₀ and α = −‖r‖/‖v‖, and one EM
 * iteration from θ' to keep the parameters valid. θ holds the coefficients, the log variances
 * and the log weights (renormalised after the step). The cycle keeps the result only when its
 * ln L is at least θ₂'s, halving the step towards α = −1 (θ₂ itself) up to STEP_BACKTRACKS
 * times, and else goes back to θ₂, so ln L never falls from step to step. It takes at most
 * `left` EM iterations (at least CYCLE_ITERATIONS), so a run keeps to its limit.
 */
function squaremCycle(ws: MixtureWorkspace, params: MixtureParameters, em: EmContext, state: RunState, path: number[] | null, left: number): EmStep {
  const start = packParameters(params);
  const first = emIteration(ws, params, em, state, path);
  if (first.reseeded) return first;
  const middle = packParameters(params);
  const second = emIteration(ws, params, em, state, path);
  if (second.reseeded) return { ...second, iterations: 2 };
  const end = packParameters(params);
  let iterations = 2;
  let alpha = stepLength(start, middle, end);
  if (!(alpha < -1)) return { ...second, iterations };
  const held = copyParameters(params);
  const heldBound = state.varianceBoundActive;
  const attempts = Math.min(STEP_BACKTRACKS, left - iterations);
  for (let attempt = 0; attempt < attempts && alpha < -1; attempt++) {
    extrapolate(params, start, middle, end, alpha, em.guards.varianceFloor);
    if (Number.isFinite(eStep(ws, params, true))) {
      const third = emIteration(ws, params, em, state, null);
      iterations++;
      if (!third.reseeded && third.logLikelihood >= second.logLikelihood) {
        path?.push(third.logLikelihood);
        return { logLikelihood: third.logLikelihood, iterations, reseeded: false };
      }
    }
    alpha = (alpha - 1) / 2;
  }
  restoreParameters(params, held);
  state.varianceBoundActive = heldBound;
  return { logLikelihood: eStep(ws, params, true), iterations, reseeded: false };
}

/** The extrapolated parameters: coefficients, log variances and log weights, as packed. */
function packParameters(params: MixtureParameters): Float64Array {
  const { k, q } = params;
  const packed = new Float64Array(k * q + 2 * k);
  packed.set(params.coefficients.subarray(0, k * q));
  for (let c = 0; c < k; c++) {
    packed[k * q + c] = Math.log(params.variances[c]);
    packed[k * q + k + c] = Math.log(params.weights[c]);
  }
  return packed;
}

/** SqS3's step length −‖r‖/‖v‖ (NaN when a packed value is not finite, a weight of 0, say). */
function stepLength(start: Float64Array, middle: Float64Array, end: Float64Array): number {
  let rr = 0;
  let vv = 0;
  for (let j = 0; j < start.length; j++) {
    const r = middle[j] - start[j];
    const v = end[j] - 2 * middle[j] + start[j];
    rr += r * r;
    vv += v * v;
  }
  return vv > 0 && Number.isFinite(rr) && Number.isFinite(vv) ? -Math.sqrt(rr / vv) : NaN;
}

/** params ← θ₀ − 2α r + α² v, variances at least the floor, weights renormalised. */
function extrapolate(params: MixtureParameters, start: Float64Array, middle: Float64Array, end: Float64Array, alpha: number, varianceFloor: number): void {
  const { k, q } = params;
  const at = (j: number): number => start[j] - 2 * alpha * (middle[j] - start[j]) + alpha * alpha * (end[j] - 2 * middle[j] + start[j]);
  for (let j = 0; j < k * q; j++) params.coefficients[j] = at(j);
  let total = 0;
  for (let c = 0; c < k; c++) {
    params.variances[c] = Math.max(Math.exp(at(k * q + c)), varianceFloor);
    params.weights[c] = Math.exp(at(k * q + k + c));
    total += params.weights[c];
  }
  for (let c = 0; c < k; c++) params.weights[c] /= total;
}

function restoreParameters(params: MixtureParameters, from: MixtureParameters): void {
  params.weights.set(from.weights);
  params.coefficients.set(from.coefficients);
  params.variances.set(from.variances);
}

/** A stop that ends the run when either does (each asked every step while the first says no). */
function eitherStop(first: EmStop | null, second: EmStop | null): EmStop | null {
  if (!first || !second) return first ?? second;
  return (logLikelihood, gain, iterations) => first(logLikelihood, gain, iterations) || second(logLikelihood, gain, iterations);
}

/** Optional ends of a run besides the tolerance and the iteration limit. */
export interface EmEnds {
  /**
   * Also converged once the gain still to come is below this many nats, whatever the ratio of
   * the changes (below 1): a change below the bound is not enough, since when EM converges
   * slowly (ratio near 1) far more than the change is still to come (DEVELOPERS.md).
   */
  enoughGain?: number;
  /** Asked after each step whether the run may end before converging. */
  stop?: EmStop | null;
  /**
   * Plain EM iterations throughout, however slow. The runs after exact peeling ask for it:
   * they are to land more components exactly, and the phases that count and peel exact
   * components were measured on plain EM's path. Accelerated, ten noiseless d = 50, K = 7
   * fits at 5 rows per predictor per component gave the same fits, but one took 43 s instead
   * of 11 (its peeled runs landed other components); plain, the ten took plain EM's times
   * within the spread, and the bench's d = 100 fits kept the gain (DEVELOPERS.md).
   */
  plain?: boolean;
}

/** Aitken's estimate of the gain in ln L still to come after `change`, Infinity unless the last two changes shrink geometrically with ratio a ≤ largestRatio (below 1). */
function gainToCome(previousChange: number, change: number, largestRatio = 0.5): number {
  const ratio = change / previousChange;
  return change > 0 && ratio > 0 && ratio <= largestRatio && ratio < 1 ? (change * ratio) / (1 - ratio) : Infinity;
}
