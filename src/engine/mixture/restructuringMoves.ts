import type { MixtureFit } from "../mixtureTypes";
import { fitSubProblem } from "../fitMixture";
import type { EmRun, FitContext } from "./fitContext";
import type { MixtureParameters } from "./mixtureParameters";
import type { MixtureWorkspace } from "./mixtureWorkspace";
import { computeResiduals, eStep } from "./eStep";
import { mostLikelyComponent } from "../logDensities";
import { parametersFromCoefficients } from "./starts";
import { runEm } from "./runEm";
import { enoughRows, exactComponentsOf, exactTolerance, nearExact, PEEL_SNAP_ROUNDS, rowsNotFitExactly, sameRows, snapComponents, thinRows } from "./exactComponents";

/**
 * Moves that restructure a fit by fitting part of it afresh on a subset of rows: exact
 * peeling, peeling of the best-determined component, and split-and-merge. Each returns a
 * proposed start; the calling phase refines it and keeps it only when the likelihood rises.
 * The subset goes to the driver through its one sub-problem call (fitSubProblem), which runs
 * the whole pipeline on those rows one level deeper.
 *
 * Each move works on `ws` (the context's working or full workspace); `rowMap` maps its rows
 * to rows of the context's data (the subsample's rows, or null when `ws` holds them all).
 */

/** Rows within this many noise SDs of a kept component are set aside with it (2.5 SDs hold 98.8% of its rows). */
const PEEL_WIDTH = 2.5;
/**
 * A kept component near exact (noise SD at most 1e-3 of SD(y): nearExact) whose band holds
 * fewer than SHRUNK_ROWS_PER_COEFFICIENT · q rows, on rows that are not thin (thinRows: an
 * average group then holds more than 8q), is taken for one EM shrank onto a few rows it fits
 * nearly exactly by overfitting, not for a group, and is not peeled. Traced on noiseless
 * d = 100, K = 10 problems at 10 rows per predictor per component: SD 9e-4 of SD(y) on about
 * 210 rows (about 2q) where a group has about 1,000; peeling such a component left a
 * sub-problem of the same rows less two hundred, 12-15 s each. Not on thin rows: there the
 * peels of such components led to higher likelihoods on thin noisy sheets (DEVELOPERS.md).
 */
const SHRUNK_ROWS_PER_COEFFICIENT = 3;
/** Random-partition restarts inside a split's two-component fit (two components rarely need more). */
const SPLIT_RESTARTS = 3;

/**
 * A set of rows handed to a sub-problem of this many coefficients or more (K'·q) is not handed
 * to one again in the same start screen (PeelSettings.peeledBefore): the sub-problem would be
 * the same rows and components, fitted afresh only from another parent estimate, each try
 * costing seconds at tens of predictors. Traced on a d = 50, K = 7 problem at 5 rows per
 * predictor per component: every start fitted the same component exactly, and nine peels in
 * a row handed the same 1,213 rows to a 6-component sub-problem (2.5 s each), eight fitting
 * nothing exactly; peeled once, the finishing phase's peel with annealed landing fitted them
 * in 3.3 s. Smaller sub-problems cost milliseconds, and a second or third parent estimate is
 * often the one that lands: forbidding their repeats too lost fits at 3 rows per predictor
 * per component (d = 10, K = 5: 94 of 100 against 98). DEVELOPERS.md has the figures.
 */
const REPEATED_PEEL_COEFFICIENTS = 100;

/**
 * When some components fit their rows to rounding level and others do not, the rows the exact
 * components explain are removed and the remaining components fitted afresh on the other rows
 * (K − e components): the remove-and-repeat step of moment descent applied to a partial EM
 * fit; K-lines is much easier with fewer lines. Returns combined coefficients as a start on
 * `ws`, or null when there is nothing to peel, or when `peeledBefore` already holds these rows
 * for a sub-problem of REPEATED_PEEL_COEFFICIENTS or more (rows of sub-problems that size are
 * added to it).
 */
export function peelExactComponents(ctx: FitContext, ws: MixtureWorkspace, fit: MixtureParameters, rowMap: Int32Array | null, { anneal = false, peeledBefore }: PeelSettings = {}): MixtureParameters | null {
  const threshold = exactTolerance(ws);
  const exact = exactComponentsOf(ws, fit);
  if (exact.length === 0 || exact.length === ws.k) return null;
  // A component counted exact (enoughRows within the tolerance) may be near exact only and
  // miss many of its own rows; refitted on the rows it fits (and again as those grow, a stray
  // row of another component dropping out), it fits them all, and none is left behind for a
  // sub-problem with too few components for them.
  // ws.residuals are those of `params` either way: exactComponentsOf left fit's, and the
  // snapped parameters' were computed when they were made (parametersFromCoefficients).
  const params = snapComponents(ws, fit, exact, () => threshold, ctx.guards, PEEL_SNAP_ROUNDS) ?? fit;
  const remaining = rowsNotFitExactly(ws, exact).map((i) => (rowMap ? rowMap[i] : i));
  const others = otherComponents(params, exact);
  if (remaining.length < others.length * ctx.guards.minimumSize) return null;
  if (peeledBefore && others.length * ws.q >= REPEATED_PEEL_COEFFICIENTS) {
    if (peeledBefore.some((rows) => sameRows(rows, remaining))) return null;
    peeledBefore.push(remaining);
  }
  // The components not exact yet are the sub-problem's first start: with the exact rows
  // removed they are often next to an exact fit of the rest. Below a peel or split of a noisy
  // fit a few rows of a component outside this fit may lie among these rows: a background
  // then takes them, which no regression can do and stay exact.
  const sub = fitSubProblem(ctx, { rows: remaining, k: others.length, start: coefficientsOf(params, others), expectExact: true, background: ctx.strays, anneal });
  return combine(ws, params, exact, sub, ctx);
}

/**
 * How exact peeling runs: whether its sub-problem may try annealed landing, and the row sets
 * a start screen has already handed to sub-problems (REPEATED_PEEL_COEFFICIENTS).
 */
export interface PeelSettings {
  anneal?: boolean;
  peeledBefore?: number[][];
}

/**
 * Exact peeling of `fit` (peelExactComponents) and the peeled fit refined on `ws` to
 * convergence by plain EM (runs after exact peeling stay plain: runEm.ts); null when nothing
 * is peeled. The caller keeps it only where its ln L is the higher.
 */
export function peelAndRefine(ctx: FitContext, ws: MixtureWorkspace, fit: MixtureParameters, rowMap: Int32Array | null, settings: PeelSettings = {}): { params: MixtureParameters; run: EmRun } | null {
  const params = peelExactComponents(ctx, ws, fit, rowMap, settings);
  return params && { params, run: runEm(ws, params, ctx, ctx.settings.maxIterations, null, { plain: true }) };
}

/**
 * One split-and-merge move (Ueda, Nakano, Ghahramani & Hinton 2000, Neural Computation 12):
 * component `split` is split by a two-component fit of the rows it holds, and the component
 * whose removal costs the least likelihood is dropped to keep K. Null when no split applies.
 */
export function splitAndMerge(ctx: FitContext, ws: MixtureWorkspace, params: MixtureParameters, split: number, rowMap: Int32Array | null): MixtureParameters | null {
  const { n, q, k } = ws;
  computeResiduals(ws, params);
  eStep(ws, params);
  const rows: number[] = [];
  for (let i = 0; i < n; i++) if (mostLikelyComponent(ws.memberships, i, k) === split) rows.push(rowMap ? rowMap[i] : i);
  if (rows.length < 2 * ctx.guards.minimumSize) return null;
  let halves: MixtureFit;
  try {
    halves = fitSubProblem(ctx, { rows, k: 2, restarts: Math.min(ctx.settings.restarts, SPLIT_RESTARTS), strays: true });
  } catch {
    return null;
  }
  // Drop the component (other than the split one) whose loss hurts the likelihood least.
  let bestStart: MixtureParameters | null = null;
  let bestLogLikelihood = -Infinity;
  for (let drop = 0; drop < k; drop++) {
    if (drop === split) continue;
    const kept: number[] = [];
    for (let c = 0; c < k; c++) if (c !== split && c !== drop) kept.push(c);
    const start = combine(ws, params, kept, halves, ctx);
    computeResiduals(ws, start);
    const logLikelihood = eStep(ws, start);
    if (logLikelihood > bestLogLikelihood) {
      bestLogLikelihood = logLikelihood;
      bestStart = start;
    }
  }
  return bestStart;
}

/**
 * Keeps component `keep`, removes the rows within PEEL_WIDTH noise SDs of it and fits K − 1
 * components to the other rows: the remove-and-repeat idea of moment descent applied to a
 * noisy EM fit. The fit's other K − 1 components are the sub-problem's first start.
 */
export function peelComponent(ctx: FitContext, ws: MixtureWorkspace, params: MixtureParameters, keep: number, rowMap: Int32Array | null): MixtureParameters | null {
  const { n, q, k } = ws;
  computeResiduals(ws, params);
  const width = PEEL_WIDTH * Math.sqrt(params.variances[keep]);
  const remaining: number[] = [];
  for (let i = 0; i < n; i++) if (Math.abs(ws.residuals[i * k + keep]) > width) remaining.push(rowMap ? rowMap[i] : i);
  const band = n - remaining.length;
  const shrunk = nearExact(params.variances[keep], ws) && band < SHRUNK_ROWS_PER_COEFFICIENT * q && !thinRows(n, k, q);
  if (band < enoughRows(q) || shrunk || remaining.length < (k - 1) * ctx.guards.minimumSize) return null;
  let rest: MixtureFit;
  try {
    rest = fitSubProblem(ctx, { rows: remaining, k: k - 1, start: coefficientsOf(params, otherComponents(params, [keep])), strays: true });
  } catch {
    return null;
  }
  return combine(ws, params, [keep], rest, ctx);
}

/** Components of `params` not listed in `listed`, in order. */
function otherComponents(params: MixtureParameters, listed: readonly number[]): number[] {
  const others: number[] = [];
  for (let c = 0; c < params.k; c++) if (!listed.includes(c)) others.push(c);
  return others;
}

/** The listed components' coefficients, one after another. */
function coefficientsOf(params: MixtureParameters, components: readonly number[]): Float64Array {
  const { q } = params;
  const out = new Float64Array(components.length * q);
  components.forEach((c, slot) => out.set(params.coefficients.subarray(c * q, c * q + q), slot * q));
  return out;
}

/** A start on `ws`: the kept components of `params` first, then the sub-problem's components. */
function combine(ws: MixtureWorkspace, params: MixtureParameters, kept: readonly number[], sub: MixtureFit, ctx: FitContext): MixtureParameters {
  const { q } = ws;
  const coefficients = new Float64Array(ws.k * q);
  coefficients.set(coefficientsOf(params, kept));
  const offset = ctx.settings.intercept ? 0 : 1;
  sub.components.forEach((component, j) => coefficients.set(component.coefficients.subarray(offset), (kept.length + j) * q));
  return parametersFromCoefficients(ws, coefficients, ctx.guards);
}
