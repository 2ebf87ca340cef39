import { SkeinError } from "../errors";
import type { MixtureModel, MixtureOptions, RegressionData } from "../mixtureTypes";
import { DEFAULT_MAX_ITERATIONS, DEFAULT_RESTARTS, DEFAULT_SEED, DEFAULT_TOLERANCE } from "../options";
import type { Settings } from "./fitContext";
import type { Guards } from "./mStep";

// The user-settable defaults (seed, restarts, tolerance, iterations) live in the options table.
const MODELS: readonly MixtureModel[] = ["plain", "joint"];

/**
 * A component must keep at least q + 1 rows' worth of membership: with q rows it fits them
 * exactly, its variance is 0 and the likelihood is infinite; one row more leaves one degree
 * of freedom for its noise.
 */
export const ROWS_BEYOND_COEFFICIENTS = 1;
/**
 * Variance floor, relative to the variance of y: 1e-20 (σ ≥ 1e-10·SD(y)) is far below any
 * real noise yet above the rounding of residuals computed from normal equations (about
 * 1e-14·SD(y) for well-conditioned designs), so on noiseless data EM stops at hard memberships
 * instead of chasing rounding; without a floor the likelihood is unbounded.
 */
const VARIANCE_FLOOR_RELATIVE = 1e-20;
/**
 * Hathaway (1985) bound on min σ_k² / max σ_k²: 1e-6 lets noise SDs differ by a factor of
 * 1000, more than real groups in one sheet do, yet stops a component from collapsing onto a
 * handful of rows it fits (nearly) exactly while the others carry the noise.
 */
const VARIANCE_RATIO_BOUND = 1e-6;

/** Whether the smallest component variance is held at the Hathaway bound: `bound` times the largest, within rounding. */
export function atVarianceRatioBound(smallestVariance: number, largestVariance: number, bound = VARIANCE_RATIO_BOUND): boolean {
  return smallestVariance <= bound * largestVariance * 1.000001;
}
/** Joint model: ridge on each x covariance, relative to each predictor's overall variance. */
const COVARIANCE_RIDGE = 1e-6;

/** The guards against degenerate fits for q coefficients on data whose response has variance yVariance. */
export function createGuards(q: number, yVariance: number): Guards {
  return {
    minimumSize: q + ROWS_BEYOND_COEFFICIENTS,
    varianceFloor: Math.max(VARIANCE_FLOOR_RELATIVE * yVariance, Number.MIN_VALUE * 1e20),
    varianceRatioBound: VARIANCE_RATIO_BOUND,
    covarianceRidge: COVARIANCE_RIDGE,
  };
}

/**
 * K components with q coefficients each need at least k·(q + 1) rows (each component one row
 * more than its coefficients); fewer is a bad-input error saying so. Hosts call it before
 * starting work, so the message comes before any fitting.
 */
export function checkRowsForComponents(n: number, q: number, k: number): void {
  const needed = k * (q + ROWS_BEYOND_COEFFICIENTS);
  if (n < needed) {
    throw new SkeinError("bad-input", `k = ${k} components with ${q} coefficient${q === 1 ? "" : "s"} each need at least ${needed} rows (k·(coefficients + 1)); the data has ${n}. Use fewer components or predictors, or add rows.`);
  }
}

/** Checks every option once, at the entrance, with messages naming the setting. */
export function checkInput(data: RegressionData, options: MixtureOptions): Settings {
  const { n, p } = data;
  if (!Number.isInteger(n) || n < 1 || !Number.isInteger(p) || p < 0 || data.y.length < n || data.x.length < n * p) {
    throw new SkeinError("bad-input", `The data is malformed: expected ${n} responses and ${n} x ${p} predictors. Select a response column and predictor columns of the same height.`);
  }
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(data.y[i])) throw new SkeinError("bad-input", `Response row ${i + 1} is ${data.y[i]}; every response must be a finite number. Remove or fix that row.`);
  }
  for (let i = 0; i < n * p; i++) {
    if (!Number.isFinite(data.x[i])) throw new SkeinError("bad-input", `Predictor value in row ${Math.floor(i / p) + 1}, column ${(i % p) + 1} is ${data.x[i]}; predictors must be finite numbers. Remove or fix that row.`);
  }
  const k = options.k;
  if (typeof k !== "number" || !Number.isInteger(k) || k < 1) {
    throw new SkeinError("bad-input", `k (the number of components) must be a whole number of 1 or more; received ${String(k)}. Set k to 1, 2, 3, ...`);
  }
  const model = options.model ?? "plain";
  if (!MODELS.includes(model)) {
    throw new SkeinError("bad-input", `model must be one of ${MODELS.map((m) => `"${m}"`).join(", ")}; received "${String(model)}". Use "plain" (regression of y on x per component) or "joint" (each component also models x).`);
  }
  const intercept = options.intercept ?? true;
  if (typeof intercept !== "boolean") throw new SkeinError("bad-input", `intercept must be yes or no (true or false); received ${String(intercept)}.`);
  const q = intercept ? p + 1 : p;
  if (q < 1) throw new SkeinError("bad-input", "There is nothing to fit: no predictors and no intercept. Add a predictor column or turn the intercept on.");
  checkRowsForComponents(n, q, k);
  const seed = options.seed ?? DEFAULT_SEED;
  if (typeof seed !== "number" || !Number.isFinite(seed)) throw new SkeinError("bad-input", `seed must be a finite number; received ${String(seed)}.`);
  const restarts = options.restarts ?? DEFAULT_RESTARTS;
  if (!Number.isInteger(restarts) || restarts < 0) throw new SkeinError("bad-input", `restarts must be a whole number of 0 or more; received ${String(restarts)}.`);
  const tolerance = options.tolerance ?? DEFAULT_TOLERANCE;
  if (typeof tolerance !== "number" || !(tolerance > 0) || !Number.isFinite(tolerance)) throw new SkeinError("bad-input", `tolerance must be a positive number such as 1e-8; received ${String(tolerance)}.`);
  const maxIterations = options.maxIterations ?? DEFAULT_MAX_ITERATIONS;
  if (!Number.isInteger(maxIterations) || maxIterations < 1) throw new SkeinError("bad-input", `max_iterations must be a whole number of 1 or more; received ${String(maxIterations)}.`);
  const background = options.background ?? false;
  if (typeof background !== "boolean") throw new SkeinError("bad-input", `background must be yes, no or auto; received ${String(background)}.`);
  return { k, seed, intercept, model, restarts, tolerance, maxIterations, background };
}
