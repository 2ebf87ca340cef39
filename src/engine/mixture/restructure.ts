import type { EmRun, FitContext } from "./fitContext";
import type { MixtureParameters } from "./mixtureParameters";
import { adopt, type Incumbent } from "./refineBest";
import { exactComponentsOf, isNoiseless, SHORT_ITERATIONS, snapNearExactComponents, stopOnExactGain } from "./exactComponents";
import { peelAndRefine, peelComponent, peelExactComponents, splitAndMerge } from "./restructuringMoves";
import { runEm } from "./runEm";
import { checkSignal } from "../errors";

/** Split-and-merge rounds (each must raise ln L by MIN_GAIN). */
const MAX_SPLIT_ROUNDS = 3;
/** Components tried for a split per round, largest unexplained variance n_k σ_k² first. */
const SPLIT_CANDIDATES = 3;
/**
 * Components tried as the one kept by peeling, smallest noise SD first; when some component
 * is exact, only exact ones: in noiseless data a component that is not exact holds rows of
 * several groups, so the rows near it are not one group's, and the sub-problem would be left
 * with rows of more groups than components (on d = 50, K = 7 fits at 3-6 rows per predictor
 * per component, measured interleaved with the code before: 0.99 of the time, the same
 * recoveries, the slowest 6-row bench problem 9.1 s to 6.7 s).
 */
const PEEL_CANDIDATES = 2;
/** Sub-problem depth below which noisy peeling may run (the user's fit and one level of sub-problems). */
const MAX_PEELING_DEPTH = 2;
/** Gain in ln L a restructured fit must bring to be kept: 1 log unit, so rounding never counts. */
const MIN_GAIN = 1;

/**
 * Phase, run only when no two starts agreed on the best fit: exact peeling of a component left
 * near exact (peelNearExact), split-and-merge (on the user's fit only, and only while no
 * component is exact; a component that holds two groups shows as one with a large noise SD),
 * then peeling of the best-determined component (down to MAX_PEELING_DEPTH). A proposal
 * replaces the incumbent when its refinement gains MIN_GAIN in ln L. Returns how many splits
 * were kept.
 */
export function restructure(ctx: FitContext, incumbent: Incumbent): number {
  const exactNowhere = (): boolean => !isNoiseless(incumbent.best.params, ctx.working) && exactComponentsOf(ctx.working, incumbent.best.params).length === 0;
  if (exactNowhere()) peelNearExact(ctx, incumbent);
  let splits = 0;
  if (ctx.depth === 0 && exactNowhere()) {
    for (let round = 0; round < MAX_SPLIT_ROUNDS; round++) {
      if (!tryMoves(ctx, incumbent, "split-and-merge", splitOrder(incumbent.best.params), (split) => splitAndMerge(ctx, ctx.working, incumbent.best.params, split, ctx.subsampleRows))) break;
      splits++;
      // Once a component is exact, peeling (below) takes the fit on.
      if (exactComponentsOf(ctx.working, incumbent.best.params).length > 0) break;
    }
  }
  if (ctx.depth < MAX_PEELING_DEPTH && !isNoiseless(incumbent.best.params, ctx.working)) {
    tryMoves(ctx, incumbent, "peeling", peelOrder(incumbent.best.params, exactComponentsOf(ctx.working, incumbent.best.params)), (keep) => peelComponent(ctx, ctx.working, incumbent.best.params, keep, ctx.subsampleRows));
  }
  return splits;
}

/**
 * A component the refinement left near exact (noise SD at most 1e-3 of SD(y)) while fitting
 * no row within the exact tolerance, as EM approaches an exact fit only linearly, is snapped
 * onto its rows (snapComponents); exact then, it is peeled at once by exact peeling, whose
 * sub-problem expects exact rows, rather than by the noisy peel below, whose sub-problem does
 * not. On a held-out d = 100, K = 10 problem this phase took 22 s against 33 s (DEVELOPERS.md).
 * A component EM shrank onto a few rows it overfits is snapped too, and peeled only if that
 * leaves it exact.
 */
function peelNearExact(ctx: FitContext, incumbent: Incumbent): void {
  const ws = ctx.working;
  const snapped = snapNearExactComponents(ws, incumbent.best.params, ctx.guards);
  if (!snapped || exactComponentsOf(ws, snapped).length === 0) return;
  tryMoves(ctx, incumbent, "exact-peeling", [0], () => peelExactComponents(ctx, ws, snapped, ctx.subsampleRows));
}

/** Tries `propose` on each component in order; the first proposal that gains MIN_GAIN becomes the incumbent. */
function tryMoves(ctx: FitContext, incumbent: Incumbent, method: string, order: number[], propose: (component: number) => MixtureParameters | null): boolean {
  const ws = ctx.working;
  for (const component of order) {
    checkSignal(ctx.signal);
    const proposal = propose(component);
    if (!proposal) continue;
    // Split proposals get a brief run first; only one already ahead is refined fully.
    const briefRun = method === "split-and-merge" ? runEm(ws, proposal, ctx, 2 * SHORT_ITERATIONS) : null;
    if (briefRun && !(briefRun.logLikelihood > incumbent.best.logLikelihood + MIN_GAIN)) continue;
    const { params, run } = briefRun?.converged ? { params: proposal, run: briefRun } : refineProposal(ctx, proposal);
    if (!(run.logLikelihood > incumbent.best.logLikelihood + MIN_GAIN)) continue;
    adopt(ctx, incumbent, ws, params, run, method);
    return true;
  }
  return false;
}

/**
 * A proposal refined to convergence on the working rows, except that a run which fits more
 * components exactly than the proposal did ends there (stopOnExactGain) and those components
 * are peeled at once (exact peeling), kept when the peeled fit's run ends higher; otherwise the
 * run goes on to convergence. On a held-out d = 100, K = 10 problem a split's run fitted a
 * component exactly by iteration 47 and went on for 240 more before this phase peeled it
 * (DEVELOPERS.md has the figures).
 */
function refineProposal(ctx: FitContext, proposal: MixtureParameters): { params: MixtureParameters; run: EmRun } {
  const ws = ctx.working;
  const maxIterations = ctx.settings.maxIterations;
  const gain = stopOnExactGain(ws, proposal);
  let gained = false;
  const run = runEm(ws, proposal, ctx, maxIterations, null, { stop: (logLikelihood, toCome, iterations) => (gained = gain(logLikelihood, toCome, iterations)) });
  // A run the context's own stop ended (FitContext.runStop) is returned as it is.
  if (!gained) return { params: proposal, run };
  const peeled = peelAndRefine(ctx, ws, proposal, ctx.subsampleRows);
  if (peeled && peeled.run.logLikelihood > run.logLikelihood) return peeled;
  const rest = runEm(ws, proposal, ctx, maxIterations - run.iterations);
  return { params: proposal, run: { ...rest, iterations: run.iterations + rest.iterations, reseeds: run.reseeds + rest.reseeds } };
}

function splitOrder(params: MixtureParameters): number[] {
  const order = Array.from({ length: params.k }, (_, c) => c);
  order.sort((a, b) => params.weights[b] * params.variances[b] - params.weights[a] * params.variances[a] || a - b);
  return order.slice(0, SPLIT_CANDIDATES);
}

export function peelOrder(params: MixtureParameters, exact: number[]): number[] {
  const order = exact.length > 0 ? exact.slice() : Array.from({ length: params.k }, (_, c) => c);
  order.sort((a, b) => params.variances[a] - params.variances[b] || a - b);
  return order.slice(0, PEEL_CANDIDATES);
}
