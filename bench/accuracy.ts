/**
 * Accuracy bench: (i) noiseless problems with per-component design
 * covariances, fraction recovered to relative error ≤ 1e-6 and fit time at n = 6, 10 and 14
 * rows per predictor per component; (ii) noisy problems with intercepts and shifted design
 * means, parameter error as a multiple of an oracle that knows the labels.
 *
 * The fit measured is the product's: fitMixture (moment warm start among its starts, EM
 * refinement, hard-assignment polish on noiseless data).
 */
import { createRandom } from "../src/engine/random";
import { leastSquares } from "../src/engine/leastSquares";
import { gatherRows, rowsWithLabel } from "../src/engine/rowSubset";
import { fitMixture } from "../src/engine/fitMixture";
import { SkeinError } from "../src/engine/errors";
import type { MixtureFit } from "../src/engine/mixtureTypes";
import { noiselessProblem, noisyProblem, relativeCoefficientError, totalCoefficientError, type GeneratedProblem } from "../src/synthetic/generateProblems";
import { carefulEm, emFromTruth } from "./plainEm";
import { median as medianOf } from "../src/engine/median";

/** Relative error at or below which a component counts as recovered (the accuracy target). */
export const RECOVERY_TOLERANCE = 1e-6;

/** Full design with the intercept column when asked. */
function fullDesign(problem: GeneratedProblem): { design: Float64Array; q: number } {
  const { x, n, p } = problem.data;
  const q = problem.intercept ? p + 1 : p;
  const design = new Float64Array(n * q);
  for (let i = 0; i < n; i++) {
    if (problem.intercept) design[i * q] = 1;
    design.set(x.subarray(i * p, i * p + p), i * q + (problem.intercept ? 1 : 0));
  }
  return { design, q };
}

/** Least squares on the rows with the given label; null when too few rows. */
function fitLabel(design: Float64Array, q: number, y: Float64Array, labels: Int32Array, label: number): Float64Array | null {
  const rows = rowsWithLabel(labels, label);
  if (rows.length < q) return null;
  const own = gatherRows(design, q, y, rows);
  try {
    return leastSquares(own.matrix, rows.length, q, own.y).coefficients;
  } catch {
    return null;
  }
}

export interface FitOutcome {
  coefficients: Float64Array[];
  certificate: number;
  converged: boolean;
}

/**
 * The fit under measurement: the product's fitMixture with the problem's seed. Given
 * `limitMs`, the fit is cancelled through its signal once that many milliseconds have passed
 * (null: not finished), so a section whose fits do not end still prints.
 */
export function fitForBench(problem: GeneratedProblem, seed: number, limitMs = Infinity): FitOutcome | null {
  const deadline = performance.now() + limitMs;
  const signal = { get aborted(): boolean { return performance.now() > deadline; } };
  let fit: MixtureFit;
  try {
    fit = fitMixture(problem.data, { k: problem.k, intercept: problem.intercept, seed, signal });
  } catch (error) {
    if (error instanceof SkeinError && error.code === "cancelled") return null;
    throw error;
  }
  // Components carry an intercept slot first (0 without an intercept); compare like with like.
  const coefficients = fit.components.map((c) => (problem.intercept ? c.coefficients : c.coefficients.subarray(1)));
  return { coefficients, certificate: fit.warmStart.certificate, converged: fit.warmStart.converged };
}

/** How many noiseless fits recovered their problem, their mean and longest times, and the problems' rows. */
export interface RecoveryTally {
  recovered: number;
  fits: number;
  meanMs: number;
  maxMs: number;
  rows: number;
}

/** Fits each problem with its seed (cancelled after limitMs: not recovered) and tallies the recoveries and times. */
export function tallyRecoveries(runs: ReadonlyArray<{ problem: GeneratedProblem; seed: number }>, limitMs = Infinity): RecoveryTally {
  let recovered = 0;
  let time = 0;
  let maxMs = 0;
  for (const { problem, seed } of runs) {
    const began = performance.now();
    const fit = fitForBench(problem, seed, limitMs);
    const elapsed = performance.now() - began;
    time += elapsed;
    maxMs = Math.max(maxMs, elapsed);
    if (fit && relativeCoefficientError(fit.coefficients, problem.coefficients) <= RECOVERY_TOLERANCE) recovered++;
  }
  return { recovered, fits: runs.length, meanMs: time / runs.length, maxMs, rows: runs[runs.length - 1]?.problem.data.n ?? 0 };
}

/** The heading of a recovery table (recoveryRow's columns). */
export const RECOVERY_HEADER = `  ${"d".padStart(3)} ${"K".padStart(2)} ${"n/(dK)".padStart(6)} ${"rows".padStart(6)} ${"recovered".padStart(9)} ${"mean ms".padStart(8)} ${"max ms".padStart(8)}`;

/** One line of a recovery table: the case (d, K, n/(dK)) and its tally. */
export function recoveryRow(d: number, k: number, factor: number, tally: RecoveryTally): string {
  return `  ${String(d).padStart(3)} ${String(k).padStart(2)} ${String(factor).padStart(6)} ${String(tally.rows).padStart(6)} ${`${tally.recovered}/${tally.fits}`.padStart(9)} ${tally.meanMs.toFixed(0).padStart(8)} ${tally.maxMs.toFixed(0).padStart(8)}`;
}

/** The noiseless grid's problems 0 .. count − 1 for (d, K, n/(dK)), each with its own seed as the fit's. */
export function gridRuns(d: number, k: number, factor: number, count: number): Array<{ problem: GeneratedProblem; seed: number }> {
  return Array.from({ length: count }, (_, s) => {
    const { problem, problemSeed } = noiselessBenchProblem(d, k, factor, s);
    return { problem, seed: problemSeed };
  });
}

/** Problem `s` of the noiseless grid for (d, K, n/(dK)) and the seed it was drawn from (also the fit's seed). */
export function noiselessBenchProblem(d: number, k: number, factor: number, s: number): { problem: GeneratedProblem; problemSeed: number } {
  const problemSeed = 1000 * d + 100 * k + 10 * factor + s;
  return { problem: noiselessProblem(d, k, factor, createRandom(problemSeed)), problemSeed };
}

/** (d, K) cases of the grid: small and large d, few and many components, d = 50 with K = 7. */
const NOISELESS_CASES: Array<[number, number]> = [[5, 2], [10, 3], [20, 5], [10, 7], [30, 4], [50, 7]];
const ROWS_PER_PREDICTOR = [6, 10, 14];
const NOISELESS_SEEDS_PER_CASE = 3;
const NOISY_CASES: Array<[number, number]> = [[5, 2], [10, 3], [20, 5]];
/** Seeds per noisy case; problems 0-2 at 10 rows per predictor per component are those of earlier runs. */
const NOISY_SEEDS_PER_CASE = 5;
/** Rows per predictor per component of the noisy problems: the grid's middle size, and a larger one where the estimator's own small-sample error has shrunk. */
const NOISY_ROWS_PER_PREDICTOR = [10, 30];

export function runAccuracyBench(print: (line: string) => void): void {
  print("Accuracy (i): noiseless, per-component design covariances; recovered = worst relative error <= 1e-6");
  print(RECOVERY_HEADER);
  const totals = new Map<number, [number, number]>();
  for (const factor of ROWS_PER_PREDICTOR) {
    for (const [d, k] of NOISELESS_CASES) {
      const tally = tallyRecoveries(gridRuns(d, k, factor, NOISELESS_SEEDS_PER_CASE));
      const [r, t] = totals.get(factor) ?? [0, 0];
      totals.set(factor, [r + tally.recovered, t + tally.fits]);
      print(recoveryRow(d, k, factor, tally));
    }
  }
  for (const [factor, [r, t]] of totals) print(`  n = ${factor}·d·K: ${r}/${t} recovered (${((100 * r) / t).toFixed(0)}%)`);

  print("Accuracy (ii): noisy, intercepts, shifted design means; error = fit error / labelled-oracle error");
  print("  (EM from truth: the product's EM started at the true parameters, the error of the likelihood maximum itself)");
  print(`  ${"d".padStart(3)} ${"K".padStart(2)} ${"n/(dK)".padStart(6)} ${"median".padStart(7)} ${"worst".padStart(7)}   EM from truth: ${"median".padStart(7)} ${"worst".padStart(7)}`);
  for (const factor of NOISY_ROWS_PER_PREDICTOR) {
    for (const [d, k] of NOISY_CASES) {
      const ratios: number[] = [];
      const floors: number[] = [];
      for (let s = 0; s < NOISY_SEEDS_PER_CASE; s++) {
        const problemSeed = 50000 + (factor === 10 ? 0 : 10 * factor) + 1000 * d + 100 * k + s;
        const problem = noisyProblem(d, k, factor, createRandom(problemSeed));
        const { design, q } = fullDesign(problem);
        const oracle = problem.coefficients.map((c, label) => fitLabel(design, q, problem.data.y, problem.labels, label) ?? c);
        const oracleError = totalCoefficientError(oracle, problem.coefficients);
        const fit = fitForBench(problem, problemSeed);
        ratios.push(fit ? totalCoefficientError(fit.coefficients, problem.coefficients) / oracleError : Infinity);
        floors.push(totalCoefficientError(emFromTruth(problem), problem.coefficients) / oracleError);
      }
      const median = (values: number[]): string => medianOf(Float64Array.from(values)).toFixed(2).padStart(7);
      const worst = (values: number[]): string => Math.max(...values).toFixed(2).padStart(7);
      print(`  ${String(d).padStart(3)} ${String(k).padStart(2)} ${String(factor).padStart(6)} ${median(ratios)} ${worst(ratios)}                  ${median(floors)} ${worst(floors)}`);
    }
  }
}
