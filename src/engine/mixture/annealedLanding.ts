import type { FitContext } from "./fitContext";
import type { MixtureParameters } from "./mixtureParameters";
import { createParameters } from "./mixtureParameters";
import { createWorkspace, type MixtureWorkspace } from "./mixtureWorkspace";
import { computeResiduals, eStep } from "./eStep";
import { mStepCoefficients } from "./mStep";
import { parametersFromCoefficients } from "./starts";
import { enoughRows, exactComponentsOf, exactTolerance, isNoiseless, thinRows } from "./exactComponents";
import { adopt, type Incumbent } from "./refineBest";
import { peelExactComponents } from "./restructuringMoves";
import { runEm } from "./runEm";
import { LandingSteps } from "./concentrationSteps";
import { scaledCholeskySolve } from "../cholesky";
import { addNormalEquations } from "../weightedGram";
import { checkSignal } from "../errors";
import { designClusterStarts, randomMemberships } from "./designClusters";

/**
 * Phase, twice: after the refinement of the best start with at most EARLY_TRIES partitions,
 * and after the restructuring (when the first did not land) with the tries left. When the
 * incumbent fits nothing exactly on rows that may lie exactly on their regressions
 * (mayLieExactly), annealed landing looks for a first exact component; the landed fit, its
 * exact components peeled (the sub-problem may land again), replaces the incumbent when its
 * refinement raises ln L. Returns whether it did. When the first call does, the driver skips
 * the restructuring, whose split-and-merge and noisy peeling found nothing on these problems
 * and took most of their time (3.8-4.4 s of 7-9 s on the bench's same-design d = 50, K = 7
 * problems at 6 rows); two thirds of the landings traced came within two tries. Run only
 * before the restructuring, all tries recovered fewer problems (DEVELOPERS.md).
 */
export function landByAnnealing(ctx: FitContext, incumbent: Incumbent, tries: number): boolean {
  // Annealings need a component near exact (mayLieExactly); the design clusters, tried once
  // at the first call, need only thin rows fitted exactly nowhere (landingMayHelp): the
  // predictors may tell the rows apart where no start did.
  const { full } = ctx;
  const budget = ctx.annealing;
  if (!budget || !landingMayHelp(ctx, incumbent.best.params)) return false;
  const annealings = mayLieExactly(ctx, incumbent.best.params) ? Math.min(tries, budget.triesLeft) : 0;
  if (budget.designTried && annealings === 0) return false;
  const landed = annealedLanding(ctx, budget, annealings);
  const next = landed && (peelExactComponents(ctx, full, landed, null, { anneal: true }) ?? landed);
  const run = next && runEm(full, next, ctx, ctx.settings.maxIterations, null, { plain: true });
  if (!next || !run || !(run.logLikelihood > incumbent.best.logLikelihood)) {
    // The workspace's memberships back to the incumbent's, for the phases after this one.
    computeResiduals(full, incumbent.best.params);
    eStep(full, incumbent.best.params);
    return false;
  }
  adopt(ctx, incumbent, full, next, run, "annealed-landing");
  return true;
}

/** Tries of the first call, before the restructuring. */
export const EARLY_TRIES = 2;

/**
 * A fit exact nowhere is tried by annealed landing when its rows are few and may lie exactly
 * on their regressions. Few: thin rows (thinRows, exactComponents.ts: at most 8 per
 * coefficient per component, where the starts miss noiseless problems), and one annealing
 * within ANNEALING_MULTIPLY_ADDS (about 1.1-1.3 s here at d = 50, K = 7 with 1,400-2,100 rows;
 * d = 100 with K = 4 at 8 rows is over). May lie exactly: a parent fitted other
 * rows of the same data exactly, or some component's noise SD is at most NEAR_EXACT_SD times
 * SD(y), as where an EM component shrank onto a few rows of a noiseless problem (0.1-5% on
 * noiseless d = 50, K = 7 problems at 4-6 rows). Noisy sheets this thin often have such a
 * component too (an overfitted one); on sixteen of them (d = 10-50, K = 5-7, 3-5 rows) the
 * tries took the fits 1.6 times as long, to the same fits, when they were first added; the
 * budget below holds them there (DEVELOPERS.md). Only the plain
 * model without a background, on rows no noisy fit chose (landingMayHelp). The design
 * clusters need only that: on the sixteen sheets they took the fits 1.08 times as long, to the
 * same fits.
 */
const ANNEALING_MULTIPLY_ADDS = 1.2e10;
const NEAR_EXACT_SD = 0.05;

function landingMayHelp(ctx: FitContext, params: MixtureParameters): boolean {
  const { full } = ctx;
  if (full.joint || full.background !== null || ctx.strays || !thinRows(full.n, full.k, full.q)) return false;
  if (annealingMultiplyAdds(full) > ANNEALING_MULTIPLY_ADDS) return false;
  return !isNoiseless(params, full) && exactComponentsOf(full, params).length === 0;
}

function mayLieExactly(ctx: FitContext, params: MixtureParameters): boolean {
  const { full } = ctx;
  if (ctx.expectExact) return true;
  const limit = NEAR_EXACT_SD * NEAR_EXACT_SD * full.yVariance;
  for (let c = 0; c < params.k; c++) if (params.variances[c] <= limit) return true;
  return false;
}

/**
 * Annealed landing: a last way to a first exact component when no start found one, on rows
 * that may lie exactly on their regressions (balanced mixtures, or the same design in every
 * component, at 4-6 rows per predictor per component; there every EM start settles with its
 * components 50-140% from every true one, spread onto rows of several).
 *
 * 1. Deterministic annealing EM (Ueda & Nakano 1998, "Deterministic annealing EM algorithm",
 *    Neural Networks 11) of ANNEALED_PER_COMPONENT·K components: from random memberships,
 *    EM with every component's variance held at T², T lowered geometrically from ANNEAL_HIGH
 *    to ANNEAL_LOW times SD(y) over ANNEAL_LEVELS levels of ANNEAL_ITERATIONS iterations. At
 *    a high T every row is shared among all components and they move together; as T falls
 *    they part gradually, instead of each settling on the first rows it happens to fit.
 * 2. Each annealed component, the heaviest first, landed by reweighted least squares (below):
 *    from 5-20% it reaches the true component's exact fit.
 *
 * Before them, once in a (sub-)problem, the design clusters (designClusters.ts): the rows
 * grouped by their predictors alone, each group's regression landed the same way. Then up to
 * `tries` annealings (each spends one of the budget's), until one lands a component. Returns K
 * components: the landed ones' exact coefficients and, in the other places, the first starts
 * that did not land (the largest groups', or the heaviest annealed components); or null.
 */
function annealedLanding(ctx: FitContext, budget: AnnealingBudget, tries: number): MixtureParameters | null {
  const ws = ctx.full;
  const { q, k } = ws;
  const landing = new ReweightedLanding(ws.design, ws.n, q, ws.y, exactTolerance(ws));
  if (!budget.designTried) {
    budget.designTried = true;
    const groups = designClusterStarts(ctx);
    const fromDesign = groups && landStarts(ctx, landing, groups);
    if (fromDesign) return fromDesign;
  }
  if (tries === 0) return null;
  const annealing = createWorkspace(ctx.data, annealedComponents(k), ws.intercept, false);
  for (let attempt = 0; attempt < tries; attempt++) {
    budget.triesLeft--;
    const annealed = annealedFit(ctx, annealing);
    const heaviestFirst = byWeight(annealed).map((c) => annealed.coefficients.subarray(c * q, (c + 1) * q));
    const landed = landStarts(ctx, landing, heaviestFirst);
    if (landed) return landed;
  }
  return null;
}

/** What annealed landing may still do in a (sub-)problem: its annealings left, and whether the design clusters were tried. */
export interface AnnealingBudget {
  triesLeft: number;
  designTried: boolean;
}

/**
 * Each start in turn landed by the reweighted steps (below) until K have landed: K components,
 * the landed ones' exact coefficients and, in the other places, the first starts that did not
 * land; or null when none landed.
 */
function landStarts(ctx: FitContext, landing: ReweightedLanding, starts: readonly Float64Array[]): MixtureParameters | null {
  const ws = ctx.full;
  const { q, k } = ws;
  const landed: Float64Array[] = [];
  const from: number[] = [];
  for (let s = 0; s < starts.length && landed.length < k; s++) {
    const exact = landing.land(starts[s]);
    // Two starts may land on the same regression: it is kept once.
    if (!exact || landed.some((other) => sameCoefficients(other, exact))) continue;
    landed.push(exact);
    from.push(s);
  }
  if (landed.length === 0) return null;
  const rest = starts.filter((_, s) => !from.includes(s)).slice(0, k - landed.length);
  const coefficients = new Float64Array(k * q);
  [...landed, ...rest].forEach((values, c) => coefficients.set(values, c * q));
  return parametersFromCoefficients(ws, coefficients, ctx.guards);
}

/** Component indices of `params`, heaviest first. */
function byWeight(params: MixtureParameters): number[] {
  return Array.from({ length: params.k }, (_, c) => c).sort((a, b) => params.weights[b] - params.weights[a]);
}

/**
 * Annealings before giving up. Rows a parent fitted exactly in part are noiseless there, and
 * get EXACT_ROWS_TRIES: on one same-design d = 50, K = 7 problem at 4 rows the sub-problem of
 * six components landed at its seventh (four: 3 of 6 such problems recovered, eight: 4 of 6;
 * the bench's few-row fits the same and in about the same time). On the user's rows, which
 * may be noisy (every try then spent in vain), at most UNSURE_TRIES, and they also stop at
 * UNSURE_MULTIPLY_ADDS of annealing in all (annealingMultiplyAdds): two on a d = 50, K = 7
 * sheet of up to about 1,350 rows with an intercept, one on more. Eight tries there took the
 * sixteen thin noisy sheets above 2.2 times as long, to the same fits; twice this budget
 * recovered none more of three same-design misses at 4 rows (DEVELOPERS.md).
 */
const EXACT_ROWS_TRIES = 8;
const UNSURE_TRIES = 3;
const UNSURE_MULTIPLY_ADDS = 1.2e10;

/** The annealings a (sub-)problem may try in all (both calls of landByAnnealing). */
export function annealingTries(ws: MixtureWorkspace, expectExact: boolean): number {
  return expectExact ? EXACT_ROWS_TRIES : Math.max(1, Math.min(UNSURE_TRIES, Math.floor(UNSURE_MULTIPLY_ADDS / annealingMultiplyAdds(ws))));
}
/** The temperature's range, times SD(y), and its levels: fewer levels or iterations, or a start below SD(y), landed far fewer components (DEVELOPERS.md). */
const ANNEAL_HIGH = 1.5;
const ANNEAL_LOW = 0.1;
const ANNEAL_LEVELS = 40;
const ANNEAL_ITERATIONS = 3;

/** The Gram sums of one annealing (its M-steps: each annealed component's XᵀWX over every row), in multiply-adds. */
export function annealingMultiplyAdds(ws: MixtureWorkspace): number {
  return ANNEAL_LEVELS * ANNEAL_ITERATIONS * ws.n * annealedComponents(ws.k) * ((ws.q * (ws.q + 1)) / 2);
}

/**
 * Components annealed for each one sought. More components than K come near a true one far
 * more often: on a noiseless same-design d = 50, K = 7 problem at 4 rows per predictor per
 * component (NumPy, twelve annealings each), 11 of 12 annealings of 28 components ended with
 * one within 20% of a true component, where reweighted least squares lands it, against 2 of 12
 * with 7 components, 5 with 14 and 9 with 21; 28 components over half the levels, 6 of 12.
 * With K components every one ends spread over the rows of two or three true ones; the extra
 * components give those rows somewhere else to go (DEVELOPERS.md).
 */
export const ANNEALED_PER_COMPONENT = 4;

/** Components of one annealing for K sought. */
export function annealedComponents(k: number): number {
  return ANNEALED_PER_COMPONENT * k;
}

/**
 * One annealing of `ws.k` components from random soft memberships (drawn from the trial
 * generator; with four components per one sought a random partition would give each fewer
 * rows than coefficients). A component's Gram matrix then has every row's weight, so no size
 * guard applies; one that cannot be solved keeps its coefficients.
 */
function annealedFit(ctx: FitContext, ws: MixtureWorkspace): MixtureParameters {
  const { n, k } = ws;
  const params = createParameters(k, ws.q, ws.p, false);
  const guards = { ...ctx.guards, minimumSize: 0 };
  randomMemberships(ws.memberships, n, k, () => ctx.trialRandom.next());
  mStepCoefficients(ws, params, guards);
  const sd = Math.sqrt(ws.yVariance);
  for (let level = 0; level < ANNEAL_LEVELS; level++) {
    checkSignal(ctx.signal);
    const temperature = sd * ANNEAL_HIGH * Math.pow(ANNEAL_LOW / ANNEAL_HIGH, level / (ANNEAL_LEVELS - 1));
    params.variances.fill(temperature * temperature);
    for (let iteration = 0; iteration < ANNEAL_ITERATIONS; iteration++) {
      eStep(ws, params, true);
      mStepCoefficients(ws, params, guards);
    }
  }
  return params;
}

function sameCoefficients(a: Float64Array, b: Float64Array): boolean {
  let scale = 0;
  let difference = 0;
  for (let j = 0; j < a.length; j++) {
    scale = Math.max(scale, Math.abs(a[j]));
    difference = Math.max(difference, Math.abs(a[j] - b[j]));
  }
  return difference <= SAME_RELATIVE * scale;
}

/** Coefficients this close (relative to the largest) are the same exact fit to rounding. */
const SAME_RELATIVE = 1e-8;

/** Reweighted steps per component: landings from 15-20% away took 7-62 steps (one 154), most under 25. */
const LANDING_STEPS = 40;
/**
 * Steps that have not brought the enoughRows(q)-th smallest |residual| to STALL_RATIO of its
 * start by step STALL_STEP are abandoned: landings traced had it at 0.1 or less by then (or
 * had landed), while most steps that did not land (80% of those traced on noisy sheets and
 * noiseless ones) still had it above 0.2.
 */
const STALL_STEP = 10;
const STALL_RATIO = 0.25;
/** ε starts at this quantile of the start's absolute residuals (a component holds about 1/K of the rows). */
const START_QUANTILE = 0.1;
/** ε then follows the (RANK_PER_COEFFICIENT · q)-th smallest absolute residual down. */
const RANK_PER_COEFFICIENT = 2;

/**
 * Iteratively reweighted least squares for the sum of log(r_i² + ε²) over all rows, a smooth
 * stand-in for the number of rows not fitted exactly (Chartrand & Yin 2008, "Iteratively
 * reweighted algorithms for compressive sensing", ICASSP): weights 1/(r_i² + ε²), ε never
 * rising and following the 2q-th smallest |r| (the rule of Daubechies, DeVore, Fornasier &
 * Güntürk 2010, Communications on Pure and Applied Mathematics 63, with the residuals in the
 * place of the sparse vector). From near a component, its rows' residuals shrink and their
 * weights grow at each step while the other rows' fall, and the fit closes in on the
 * component's exact one. A trimmed refit (concentration steps) from the same start gives
 * every row it keeps the same weight, so the other components' rows among them pull it off;
 * on the problems above it landed few of the components that these steps land.
 */
export class ReweightedLanding extends LandingSteps {
  private readonly weights: Float64Array;

  constructor(design: Float64Array, n: number, q: number, y: Float64Array, private readonly tolerance: number) {
    super(design, n, q, y);
    this.weights = new Float64Array(n);
  }

  /** The exact coefficients of the component the steps from `start` (q values) land on, or null. */
  land(start: Float64Array): Float64Array | null {
    const { n, q } = this;
    const needed = enoughRows(q);
    if (n <= Math.max(needed, RANK_PER_COEFFICIENT * q)) return null;
    const coefficients = Float64Array.from(start);
    this.sortResiduals(coefficients);
    let epsilon = this.sorted[Math.floor(START_QUANTILE * (n - 1))];
    const first = this.sorted[needed - 1];
    for (let step = 0; step < LANDING_STEPS && epsilon > 0; step++) {
      if (step === STALL_STEP && this.sorted[needed - 1] > STALL_RATIO * first) return null;
      for (let i = 0; i < n; i++) this.weights[i] = 1 / (this.absolute[i] * this.absolute[i] + epsilon * epsilon);
      this.gram.fill(0);
      this.right.fill(0);
      addNormalEquations(this.design, q, this.y, null, n, this.gram, this.right, this.weights);
      if (!scaledCholeskySolve(this.gram, this.right, q, coefficients, this.scratch)) return null;
      this.sortResiduals(coefficients);
      if (this.sorted[needed - 1] <= this.tolerance) {
        return this.refitOnExactRows(coefficients, this.tolerance) >= needed ? coefficients : null;
      }
      epsilon = Math.min(epsilon, this.sorted[RANK_PER_COEFFICIENT * q]);
    }
    return null;
  }
}
