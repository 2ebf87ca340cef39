import { checkSignal } from "../errors";
import type { CancelSignal } from "../mixtureTypes";
import { choleskyScratchLength, scaledCholeskySolve } from "../cholesky";
import { MAD_TO_SD, median } from "../median";
import { reserveDoubles, rowKernels, type RowKernels } from "../rowKernels";
import { addBlockDots, addBlockGram, blockRowsFor, rowBlock, rowPredictions, weighBlock, type RowBlock } from "../weightedGram";

/**
 * Hard-assignment refinement of K regressions (k-lines / clusterwise regression, Späth 1979,
 * Computing 22): give each row to the component with the smallest absolute residual, refit
 * each component by least squares on its rows, repeat until no row moves. It is EM's limit as
 * the noise goes to 0, converges in few steps from a start within its (wide) basin, and in
 * noiseless data lands on exact fits, which certify the start.
 *
 * The "classification" rule instead gives each row to the component of largest
 * π_c φ(r/σ_c)/σ_c, the assignment of classification EM (Celeux & Govaert 1992,
 * Computational Statistics & Data Analysis 14): a component close to its rows has a small
 * σ_c and keeps them, where the nearest-residual rule lets a component far from the truth
 * take rows that happen to lie near it. From the moment warm start's lifted candidates in
 * 50 dimensions with 7 components, the nearest rule fitted no row exactly, the classification
 * rule one or two whole components on about half the problems (see DEVELOPERS.md).
 */
export type AssignmentRule = "nearest" | "classification";

/** Refinement steps of the final solve (see alternatingLeastSquares). */
const REFINEMENT_STEPS = 2;

export interface AlternatingFit {
  coefficients: Float64Array[];
  labels: Int32Array;
  /** Rows whose residual under their component is within the exact-fit tolerance. */
  exactRows: number;
  /** Per component, the RMS residual on its rows. */
  scales: Float64Array;
  iterations: number;
}

/**
 * @param design n x q row-major full design (intercept column included when there is one)
 * @param minimumRows a component left with fewer rows keeps its previous coefficients
 * @param signal asked before each iteration (an iteration on 10,000 rows of 100 predictors takes about 0.1 s)
 */
export function alternatingLeastSquares(
  design: Float64Array, n: number, q: number, y: Float64Array, start: Float64Array[],
  maxIterations: number, exactTolerance: number, minimumRows: number, signal?: CancelSignal, rule: AssignmentRule = "nearest",
): AlternatingFit {
  const state = createState(design, n, q, y, start, exactTolerance, rule);
  const iterations = alternate(state, maxIterations, minimumRows, signal);
  refineFinalSolves(state, minimumRows);
  assign(state, state.criterion);
  return summarise(state, exactTolerance, iterations);
}

/** The rows, the current components and the scratch that the phases of one fit share. */
interface AlternatingState {
  design: Float64Array;
  n: number;
  q: number;
  y: Float64Array;
  coefficients: Float64Array[];
  /** Each row's component, −1 before the first assignment. */
  labels: Int32Array;
  /** Each row's absolute residual under its component. */
  best: Float64Array;
  /** Rows per component, as the normal equations hold them. */
  counts: Int32Array;
  /** k x q x q Gram matrices XᵀX and k x q right-hand sides, one per component. */
  grams: Float64Array;
  rights: Float64Array;
  scratch: Float64Array;
  /** Components that gained or lost a row at the last assignment. */
  changedComponent: Uint8Array;
  /** The labels the normal equations were last brought up to. */
  previous: Int32Array;
  moves: RowMoves;
  /** n x k fitted values, row-major. */
  fitted: Float64Array;
  /** Components whose column of `fitted` is out of date. */
  stale: Uint8Array;
  criterion: ClassificationCriterion | null;
}

function createState(
  design: Float64Array, n: number, q: number, y: Float64Array, start: Float64Array[], exactTolerance: number, rule: AssignmentRule,
): AlternatingState {
  const k = start.length;
  return {
    design,
    n,
    q,
    y,
    coefficients: start.map((c) => Float64Array.from(c)),
    labels: new Int32Array(n).fill(-1),
    best: new Float64Array(n),
    counts: new Int32Array(k),
    // Normal equations per component, kept up to date by rank-one updates: a row that moves from
    // component a to component b is subtracted from a's XᵀX and Xᵀy and added to b's, so an
    // iteration costs O(moved rows · q²) instead of O(n · q²) (the updating of least-squares
    // normal equations, Golub & Van Loan, Matrix Computations, 4th ed., §6.5). After the first
    // few iterations only a small fraction of the rows moves. Cheap and accurate enough on the
    // well-conditioned (whitened) designs the warm start passes; the final solve of each
    // component is refined to rounding level (refineFinalSolves).
    grams: new Float64Array(k * q * q),
    rights: new Float64Array(k * q),
    scratch: new Float64Array(choleskyScratchLength(q)),
    changedComponent: new Uint8Array(k),
    previous: new Int32Array(n).fill(-1),
    moves: new RowMoves(q, n),
    // Fitted values per row and component (n x k), recomputed only for the components whose
    // coefficients changed since the last assignment: late iterations move a few rows and
    // re-solve a few components, so most of the n·k·q products are reused.
    fitted: new Float64Array(n * k),
    stale: new Uint8Array(k).fill(1),
    criterion: rule === "classification" ? new ClassificationCriterion(n, k, exactTolerance) : null,
  };
}

/** Assigns rows and re-solves the components they moved between until no row moves; returns the iterations run. */
function alternate(state: AlternatingState, maxIterations: number, minimumRows: number, signal?: CancelSignal): number {
  const { criterion } = state;
  let iterations = 0;
  for (; iterations < maxIterations; iterations++) {
    checkSignal(signal);
    state.changedComponent.fill(0);
    const moved = assign(state, criterion?.ready ? criterion : null);
    if (criterion && !criterion.ready) {
      // The first assignment (every row moved: none had a label) is by nearest residual; the
      // scales it shows decide it again.
      criterion.update(state.labels, state.best);
      assign(state, criterion);
    }
    if (moved === 0) break;
    applyMoves(state);
    solveChangedComponents(state, minimumRows);
    criterion?.update(state.labels, state.best);
  }
  return iterations;
}

/** The normal equations brought from the rows' previous labels to their current ones. */
function applyMoves(state: AlternatingState): void {
  const { design, y, labels, previous, grams, rights, counts } = state;
  state.moves.apply(design, y, labels, previous, grams, rights, counts);
}

/** Re-solves each component that gained or lost rows and still has enough of them. */
function solveChangedComponents(state: AlternatingState, minimumRows: number): void {
  const { q, coefficients, counts, grams, rights, scratch, changedComponent, stale } = state;
  for (let c = 0; c < coefficients.length; c++) {
    if (!changedComponent[c] || counts[c] < minimumRows) continue;
    stale[c] = 1;
    scaledCholeskySolve(grams.subarray(c * q * q, (c + 1) * q * q), rights.subarray(c * q, (c + 1) * q), q, coefficients[c], scratch);
  }
}

/**
 * Final solve per component on its final rows, to rounding level: the normal equations
 * brought up to the final labels, then iterative refinement (Golub & Van Loan, 4th ed.,
 * §3.5.3): δ solves G δ = Xᵀ(y − Xβ) on the component's rows and β ← β + δ. The first step
 * carries β to the least-squares solution of the final rows; the second removes what the
 * updates of G as rows moved left in it (their rounding only slows the refinement, its fixed
 * point is set by the residuals, computed afresh from the rows). About n·q operations a step,
 * against n·q² for a QR of each component's rows.
 */
function refineFinalSolves(state: AlternatingState, minimumRows: number): void {
  const { q, coefficients, counts, grams, rights, scratch, stale } = state;
  assign(state, state.criterion);
  applyMoves(state);
  const correction = new Float64Array(q);
  for (let step = 0; step < REFINEMENT_STEPS; step++) {
    residualCrossProducts(state);
    for (let c = 0; c < coefficients.length; c++) {
      if (counts[c] < minimumRows) continue;
      if (!scaledCholeskySolve(grams.subarray(c * q * q, (c + 1) * q * q), rights.subarray(c * q, (c + 1) * q), q, correction, scratch, false)) continue;
      for (let j = 0; j < q; j++) coefficients[c][j] += correction[j];
      stale[c] = 1;
    }
  }
}

/** `rights` ← Xᵀ(y − Xβ) per component over its rows (Xᵀy is not needed after the last solve). */
function residualCrossProducts(state: AlternatingState): void {
  const { design, n, q, y, coefficients, labels, rights } = state;
  rights.fill(0);
  for (let i = 0; i < n; i++) {
    const c = labels[i];
    const row = i * q;
    const v = coefficients[c];
    let residual = y[i];
    for (let j = 0; j < q; j++) residual -= design[row + j] * v[j];
    const out = c * q;
    for (let j = 0; j < q; j++) rights[out + j] += design[row + j] * residual;
  }
}

/** The fit as returned: exact rows counted and each component's RMS residual on its rows. */
function summarise(state: AlternatingState, exactTolerance: number, iterations: number): AlternatingFit {
  const { n, coefficients, labels, best, counts } = state;
  const k = coefficients.length;
  let exactRows = 0;
  const scales = new Float64Array(k);
  counts.fill(0);
  for (let i = 0; i < n; i++) {
    if (best[i] <= exactTolerance) exactRows++;
    scales[labels[i]] += best[i] * best[i];
    counts[labels[i]]++;
  }
  for (let c = 0; c < k; c++) scales[c] = counts[c] > 0 ? Math.sqrt(scales[c] / counts[c]) : Infinity;
  return { coefficients, labels, exactRows, scales, iterations };
}

/**
 * Brings the normal equations from the rows' previous labels to their current ones: per
 * component, the rows that leave it (weight −1) and the rows that join it (weight +1) are
 * gathered into the weighted-Gram kernel's row block and added as one weighted Gram, instead
 * of one rank-one update per row. The rows that moved are listed once, so each component's
 * pass visits only those (after the first few iterations a small fraction of the n rows).
 */
class RowMoves {
  private readonly blockRows: number;
  /** The rows whose label changed at the last assignment, in order (filled by apply). */
  private readonly moved: Int32Array;

  constructor(private readonly q: number, n: number) {
    this.blockRows = blockRowsFor(q);
    this.moved = new Int32Array(n);
  }

  apply(design: Float64Array, y: Float64Array, labels: Int32Array, previous: Int32Array, grams: Float64Array, rights: Float64Array, counts: Int32Array): void {
    const { q, blockRows } = this;
    const n = labels.length;
    const k = counts.length;
    const moved = this.moved;
    let movedCount = 0;
    for (let i = 0; i < n; i++) if (previous[i] !== labels[i]) moved[movedCount++] = i;
    // Per gathered row: ±y, then the sign (its weight).
    const block = rowBlock(q, blockRows, 2);
    const { plain, vectors, qp } = block;
    for (let c = 0; c < k; c++) {
      let m = 0;
      for (let t = 0; t < movedCount; t++) {
        const i = moved[t];
        const from = previous[i];
        const to = labels[i];
        if (from !== c && to !== c) continue;
        const sign = to === c ? 1 : -1;
        counts[c] += sign;
        const base = m * qp;
        plain.set(design.subarray(i * q, i * q + q), base);
        plain.fill(0, base + q, base + qp);
        vectors[2 * m] = sign * y[i];
        vectors[2 * m + 1] = sign;
        if (++m === blockRows) {
          addMoves(block, m, grams, rights, c);
          m = 0;
        }
      }
      addMoves(block, m, grams, rights, c);
    }
    previous.set(labels);
  }
}

/** One row block of moves into component c's normal equations: Σ ±x xᵀ and Σ x (±y). */
function addMoves(block: RowBlock, m: number, grams: Float64Array, rights: Float64Array, c: number): void {
  const q = block.q;
  weighBlock(block, m, 1);
  addBlockGram(block, m, grams, c * q * q);
  addBlockDots(block, m, "plain", 0, rights, c * q);
}

/**
 * The classification rule's terms per component: 1/σ_c and ln σ_c − ln π_c, so that a row
 * goes to the smallest r²/(2σ_c²) + ln σ_c − ln π_c. σ_c is the median absolute residual of
 * the component's rows (as a normal scale, at least the exact-fit tolerance), so a few stray
 * rows do not widen an exact component; π_c is its share of the rows. A component left
 * without rows takes none back (as in classification EM).
 */
class ClassificationCriterion {
  readonly inverseScale: Float64Array;
  readonly penalty: Float64Array;
  ready = false;
  private readonly pool: Float64Array;
  private readonly counts: Int32Array;
  private readonly offsets: Int32Array;
  /** Where the next residual of each component goes in the pool. */
  private readonly next: Int32Array;

  constructor(private readonly n: number, private readonly k: number, private readonly floor: number) {
    this.inverseScale = new Float64Array(k);
    this.penalty = new Float64Array(k);
    this.pool = new Float64Array(n);
    this.counts = new Int32Array(k);
    this.offsets = new Int32Array(k + 1);
    this.next = new Int32Array(k);
  }

  /** The terms from each row's label and absolute residual under it. */
  update(labels: Int32Array, residuals: Float64Array): void {
    const { n, k, pool, counts, offsets, next } = this;
    counts.fill(0);
    for (let i = 0; i < n; i++) counts[labels[i]]++;
    for (let c = 0; c < k; c++) offsets[c + 1] = offsets[c] + counts[c];
    next.set(offsets.subarray(0, k));
    for (let i = 0; i < n; i++) pool[next[labels[i]]++] = residuals[i];
    for (let c = 0; c < k; c++) {
      if (counts[c] === 0) {
        this.inverseScale[c] = 0;
        this.penalty[c] = Infinity;
        continue;
      }
      const scale = Math.max(MAD_TO_SD * median(pool.subarray(offsets[c], offsets[c + 1])), this.floor, Number.MIN_VALUE);
      this.inverseScale[c] = 1 / scale;
      this.penalty[c] = Math.log(scale) - Math.log(counts[c] / n);
    }
    this.ready = true;
  }
}

/**
 * Labels each row with its smallest-|residual| component, or by the classification criterion
 * when one is given; returns how many labels changed.
 * `fitted` (n x k) holds each row's fitted value under each component; only the columns of
 * components flagged in `stale` are recomputed, then the flags are cleared.
 */
function assign(state: AlternatingState, criterion: ClassificationCriterion | null): number {
  const { design, n, q, y, coefficients, labels, best, changedComponent, fitted, stale } = state;
  const k = coefficients.length;
  const recompute: Float64Array[] = [];
  const columns: number[] = [];
  for (let c = 0; c < k; c++) {
    if (!stale[c]) continue;
    recompute.push(coefficients[c]);
    columns.push(c);
    stale[c] = 0;
  }
  rowPredictions(design, n, q, recompute, columns, fitted, k);
  const kernels = rowKernels();
  if (kernels) return assignInModule(kernels, state, criterion);
  let changed = 0;
  for (let i = 0; i < n; i++) {
    let label = 0;
    let smallest = Infinity;
    if (criterion) {
      let lowest = Infinity;
      for (let c = 0; c < k; c++) {
        const r = Math.abs(y[i] - fitted[i * k + c]);
        const scaled = r * criterion.inverseScale[c];
        const value = 0.5 * scaled * scaled + criterion.penalty[c];
        if (value < lowest) {
          lowest = value;
          smallest = r;
          label = c;
        }
      }
    } else {
      for (let c = 0; c < k; c++) {
        const r = Math.abs(y[i] - fitted[i * k + c]);
        if (r < smallest) {
          smallest = r;
          label = c;
        }
      }
    }
    if (labels[i] !== label) {
      changed++;
      if (labels[i] >= 0) changedComponent[labels[i]] = 1;
      changedComponent[label] = 1;
    }
    labels[i] = label;
    best[i] = smallest;
  }
  return changed;
}

/**
 * assign's choice of component on the row kernels' module (rowKernels.ts): the same
 * comparisons in the same order, so the same labels, residuals and changed components.
 */
function assignInModule(kernels: RowKernels, state: AlternatingState, criterion: ClassificationCriterion | null): number {
  const { n, y, labels, best, changedComponent, fitted } = state;
  const k = state.coefficients.length;
  // In doubles: fitted values, responses, residuals, the criterion's terms, labels (32-bit,
  // two to a double), changed flags (a byte each).
  const yAt = n * k;
  const bestAt = yAt + n;
  const scaleAt = bestAt + n;
  const penaltyAt = scaleAt + k;
  const labelsAt = penaltyAt + k;
  const changedAt = labelsAt + Math.ceil(n / 2);
  reserveDoubles(kernels, changedAt + Math.ceil(k / 8));
  const { heap, memory } = kernels;
  heap.set(fitted.subarray(0, n * k), 0);
  heap.set(y.subarray(0, n), yAt);
  if (criterion) {
    heap.set(criterion.inverseScale, scaleAt);
    heap.set(criterion.penalty, penaltyAt);
  }
  const moduleLabels = new Int32Array(memory.buffer, labelsAt * 8, n);
  const moduleChanged = new Uint8Array(memory.buffer, changedAt * 8, k);
  moduleLabels.set(labels);
  moduleChanged.set(changedComponent);
  const changed = kernels.assignRows(0, yAt * 8, n, k, criterion ? 1 : 0, scaleAt * 8, penaltyAt * 8, labelsAt * 8, bestAt * 8, changedAt * 8);
  labels.set(moduleLabels);
  best.set(heap.subarray(bestAt, bestAt + n));
  changedComponent.set(moduleChanged);
  return changed;
}
