import { HouseholderQR } from "../householderQR";
import { gatherRows } from "../rowSubset";
import { choleskyScratchLength, scaledCholeskySolve } from "../cholesky";
import { ROW_MULTIPLY_ADDS_PER_MICROSECOND, allShared, helperFor, shareableArray, shareableCounter, type HelperJob } from "../helperThread";
import { rowResidual } from "../rowResiduals";
import { addNormalEquations } from "../weightedGram";

/**
 * Concentration steps ("C-steps") of least trimmed squares (Rousseeuw & Van Driessen 2006,
 * "Computing LTS regression for large data sets", Data Mining and Knowledge Discovery 12):
 * from a coefficient vector, keep the h rows with the smallest absolute residuals and refit by
 * least squares on them; repeat. The sum of the h smallest squared residuals never increases
 * from one step to the next (their Theorem 1), so the steps reach a fixed h-subset.
 *
 * Why here: in a noiseless mixture a start near one component has that component's rows
 * among its smallest residuals; the steps then shed the other components' rows one refit at
 * a time until the subset is the component's own and the refit is exact. Every row of the
 * component then fits to rounding level, which certifies it (a spurious fit of q rows cannot
 * reach clearly more than q). Each step costs one pass for the residuals plus a fit of h rows,
 * far less than an EM or hard-assignment step over all K components.
 */
export interface Concentrated {
  coefficients: Float64Array;
  /** Rows of the whole data fitted within the exact-fit tolerance. */
  exactRows: number;
  /** Steps taken. */
  steps: number;
}

/**
 * C-steps from several starts, each run whole on one thread: with a helper thread
 * (helperThread.ts) both threads claim the next start from a shared counter until none is
 * left, so the results are the same as one after the other, in less time.
 */
export function concentrationRuns(design: Float64Array, n: number, q: number, y: Float64Array, starts: readonly Float64Array[], subsets: readonly number[], maxSteps: number, exactTolerance: number): Concentrated[] {
  const count = starts.length;
  const flat = new Float64Array(count * q);
  starts.forEach((start, s) => flat.set(start.subarray(0, q), s * q));
  const out = shareableArray(count * (q + 2)).fill(NaN);
  const job: ConcentrationJob = { kind: "concentration", design, n, q, y, starts: flat, subsets: Int32Array.from(subsets), maxSteps, exactTolerance, next: shareableCounter(), out };
  // At least one step of a residual pass per start: n·q multiply-adds each.
  const helper = count > 1 && allShared(design, y, out) ? helperFor((n * q * count) / ROW_MULTIPLY_ADDS_PER_MICROSECOND) : null;
  helper?.start(job);
  concentrateStarts(job);
  helper?.finish();
  let steps: ConcentrationSteps | null = null;
  return starts.map((start, s) => {
    const at = s * (q + 2);
    // A start a failed helper claimed and did not finish is run here.
    if (Number.isNaN(out[at + q])) {
      steps ??= new ConcentrationSteps(design, n, q, y);
      return steps.run(start, subsets[s], maxSteps, exactTolerance);
    }
    return { coefficients: out.slice(at, at + q), exactRows: out[at + q], steps: out[at + q + 1] };
  });
}

/** Several starts' C-steps for concentrationRuns, claimed one at a time from `next` by either thread. */
export interface ConcentrationJob extends HelperJob {
  kind: "concentration";
  design: Float64Array;
  n: number;
  q: number;
  y: Float64Array;
  /** The starts, q coefficients each, and each start's subset size h. */
  starts: Float64Array;
  subsets: Int32Array;
  maxSteps: number;
  exactTolerance: number;
  /** Slot 0: the next start to claim. */
  next: Int32Array;
  /** Per start: its q coefficients, exact rows and steps (exact rows NaN until done). */
  out: Float64Array;
}

/** Claims starts from the job's counter and runs each, until none is left. */
export function concentrateStarts(job: ConcentrationJob): void {
  const { design, n, q, y, starts, subsets, maxSteps, exactTolerance, next, out } = job;
  const steps = new ConcentrationSteps(design, n, q, y);
  for (let s = Atomics.add(next, 0, 1); s < subsets.length; s = Atomics.add(next, 0, 1)) {
    const result = steps.run(starts.subarray(s * q, (s + 1) * q), subsets[s], maxSteps, exactTolerance);
    const at = s * (q + 2);
    out.set(result.coefficients, at);
    out[at + q + 1] = result.steps;
    out[at + q] = result.exactRows;
  }
}

/**
 * A start whose trimmed objective has not fallen below this fraction of its first value after
 * STALL_STEPS steps is abandoned: starts that lead to a component shrink it by orders of
 * magnitude within a few steps, starts between components barely move it.
 */
const STALL_FRACTION = 0.5;
const STALL_STEPS = 4;

/**
 * What a landing of one component on n rows keeps from step to step (the concentration steps
 * here, the reweighted steps of annealedLanding.ts): its absolute residuals, sorted and not,
 * the normal equations and the Cholesky kernel's scratch, and a list of rows.
 */
export class LandingSteps {
  protected readonly absolute: Float64Array;
  protected readonly sorted: Float64Array;
  protected readonly gram: Float64Array;
  protected readonly right: Float64Array;
  protected readonly scratch: Float64Array;
  protected readonly rows: Int32Array;

  /** @param design n x q row-major design (scaledCholeskySolve equilibrates its columns; the final refit is by QR) */
  constructor(protected readonly design: Float64Array, protected readonly n: number, protected readonly q: number, protected readonly y: Float64Array) {
    this.absolute = new Float64Array(n);
    this.sorted = new Float64Array(n);
    this.gram = new Float64Array(q * q);
    this.right = new Float64Array(q);
    this.scratch = new Float64Array(choleskyScratchLength(q));
    this.rows = new Int32Array(n);
  }

  /** Fills `absolute` with |y − Xc| and `sorted` with the same, ascending. */
  protected sortResiduals(coefficients: Float64Array): void {
    const { n, q, design, y } = this;
    for (let i = 0; i < n; i++) this.absolute[i] = Math.abs(rowResidual(design, i * q, q, coefficients, 0, y[i]));
    this.sorted.set(this.absolute);
    this.sorted.sort();
  }

  /**
   * The end of a landing: when more than q rows fit `coefficients` within the tolerance, the
   * coefficients are refitted by Householder QR on all of them (rounding-level coefficients).
   * Returns the rows then fitted within the tolerance.
   */
  protected refitOnExactRows(coefficients: Float64Array, exactTolerance: number): number {
    const { q, design, y, rows } = this;
    const exactRows = this.countExactRows(coefficients, exactTolerance);
    if (exactRows <= q) return exactRows;
    const exact = gatherRows(design, q, y, rows, exactRows);
    const qr = new HouseholderQR(exact.matrix, exactRows, q);
    if (!qr.isFullRank) return exactRows;
    coefficients.set(qr.solve(exact.y));
    return this.countExactRows(coefficients, exactTolerance);
  }

  /** Lists in `rows` the rows fitted within the tolerance (absolute residuals into `absolute`) and returns how many. */
  private countExactRows(coefficients: Float64Array, exactTolerance: number): number {
    const { n, q, design, y } = this;
    let count = 0;
    for (let i = 0; i < n; i++) {
      this.absolute[i] = Math.abs(rowResidual(design, i * q, q, coefficients, 0, y[i]));
      if (this.absolute[i] <= exactTolerance) this.rows[count++] = i;
    }
    return count;
  }
}

export class ConcentrationSteps extends LandingSteps {
  /**
   * Runs up to maxSteps C-steps with subsets of h rows from `start` (length q). When the
   * subset fits exactly, the component is refitted by Householder QR on every row it fits
   * within the tolerance (rounding-level coefficients) and the steps stop.
   */
  run(start: Float64Array, h: number, maxSteps: number, exactTolerance: number): Concentrated {
    const { n, q } = this;
    const coefficients = Float64Array.from(start);
    let firstObjective = NaN;
    let steps = 0;
    for (; steps < maxSteps; steps++) {
      const threshold = this.residualsAndThreshold(coefficients, h);
      let objective = 0;
      for (let i = 0; i < n; i++) if (this.absolute[i] <= threshold) objective += this.absolute[i] * this.absolute[i];
      if (threshold <= exactTolerance) break;
      if (steps === 0) firstObjective = objective;
      else if (steps >= STALL_STEPS && objective > STALL_FRACTION * firstObjective) break;
      const previous = Float64Array.from(coefficients);
      this.fitSubset(coefficients, threshold, h);
      let moved = false;
      for (let j = 0; j < q; j++) if (coefficients[j] !== previous[j]) moved = true;
      if (!moved) break;
    }
    const exactRows = this.refitOnExactRows(coefficients, exactTolerance);
    return { coefficients, exactRows, steps };
  }

  /** Fills `absolute` with |y − Xc| and returns the h-th smallest. */
  private residualsAndThreshold(coefficients: Float64Array, h: number): number {
    this.sortResiduals(coefficients);
    return this.sorted[Math.min(h, this.n) - 1];
  }

  /**
   * Least squares on the first h rows with |residual| ≤ threshold, by the normal equations
   * (addNormalEquations); the rows are listed in `rows`, which the final refit of run() reuses.
   */
  private fitSubset(coefficients: Float64Array, threshold: number, h: number): void {
    const { n, q, design, y, gram, right, rows } = this;
    gram.fill(0);
    right.fill(0);
    let taken = 0;
    for (let i = 0; i < n && taken < h; i++) if (this.absolute[i] <= threshold) rows[taken++] = i;
    addNormalEquations(design, q, y, rows, taken, gram, right);
    scaledCholeskySolve(gram, right, q, coefficients, this.scratch);
  }
}

