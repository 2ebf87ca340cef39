import { ROW_KERNELS_WASM_BASE64 } from "./wasm/rowKernelsModule";
import { compileModule, growTo, instantiate } from "./wasm/compileModule";
import { dot } from "./weightedGram";

/**
 * The scalar row kernels' WebAssembly module (wasm/rowKernels.wat): compiled code from the
 * first call, where a JavaScript loop runs interpreted until the engine's optimising compiler
 * has reached it, which is most of a small fit in a fresh process. Each kernel's JavaScript
 * path gives the same bits and stays beside its caller (the E-step kernel in logDensities.ts,
 * the k-means of starts.ts, hard assignment in warmStart/alternatingLeastSquares.ts) or here
 * (columnSums, rowProducts, whitenRows); the callers copy a block of rows at a time into the
 * module's memory (no caller of one kernel nests another, so they share it).
 */
export interface RowKernels {
  memory: WebAssembly.Memory;
  /** A view of the whole memory, made again whenever the memory grows. */
  heap: Float64Array;
  normalise: (terms: number, m: number, k: number, out: number, rows: number, total: number) => number;
  fromResiduals: (residuals: number, m: number, k: number, constant: number, curvature: number, terms: number, out: number, rows: number, total: number) => number;
  columnSums: (values: number, m: number, k: number, sums: number) => void;
  fromSquares: (squares: number, m: number, k: number, constant: number, variance: number, terms: number, out: number, total: number) => number;
  squaredResiduals: (rows: number, m: number, q: number, y: number, coefficients: number, k: number, tau: number, squares: number, rss: number) => void;
  nearestUpdate: (points: number, n: number, dimension: number, centre: number, nearest: number) => number;
  draw: (nearest: number, n: number, target: number) => number;
  assignNearest: (points: number, n: number, dimension: number, centres: number, k: number, labels: number, first: number) => number;
  centreSums: (points: number, n: number, dimension: number, labels: number, k: number, sums: number, counts: number) => void;
  assignRows: (fitted: number, y: number, n: number, k: number, classify: number, inverseScale: number, penalty: number, labels: number, best: number, changed: number) => number;
  rowProducts: (rows: number, m: number, q: number, vectors: number, k: number, out: number) => void;
  whitenRows: (rows: number, m: number, p: number, mean: number, lower: number) => void;
}

/** sums[c] = Σ_i values[i·k + c] over n rows (set afresh), added row by row in order on either path. */
export function columnSums(values: Float64Array, n: number, k: number, sums: Float64Array): void {
  sums.fill(0, 0, k);
  const kernels = rowKernels();
  if (!kernels) {
    for (let i = 0; i < n; i++) for (let c = 0; c < k; c++) sums[c] += values[i * k + c];
    return;
  }
  const blockRows = kernelBlockRows(k);
  const valuesAt = k;
  reserveDoubles(kernels, valuesAt + blockRows * k);
  const heap = kernels.heap;
  heap.fill(0, 0, k);
  for (let start = 0; start < n; start += blockRows) {
    const rows = Math.min(n - start, blockRows);
    heap.set(values.subarray(start * k, (start + rows) * k), valuesAt);
    kernels.columnSums(valuesAt * 8, rows, k, 0);
  }
  sums.set(heap.subarray(0, k));
}

/**
 * The whitened rows (x − mean) L⁻ᵀ of n rows of p values into `out` (whitenPredictors.ts):
 * each row centred, then forward substitution with the lower factor L (p x p row-major), each
 * sum in dot's association (weightedGram.ts), on either path.
 */
export function whitenRows(x: Float64Array, n: number, p: number, mean: Float64Array, lower: Float64Array, out: Float64Array): void {
  const kernels = rowKernels();
  if (!kernels) {
    for (let i = 0; i < n; i++) {
      const row = i * p;
      for (let j = 0; j < p; j++) out[row + j] = x[row + j] - mean[j];
      for (let a = 0; a < p; a++) out[row + a] = (out[row + a] - dot(lower, a * p, out, row, a)) / lower[a * p + a];
    }
    return;
  }
  const blockRows = kernelBlockRows(p);
  const meanAt = p * p;
  const rowsAt = meanAt + p;
  reserveDoubles(kernels, rowsAt + blockRows * p);
  const heap = kernels.heap;
  heap.set(lower.subarray(0, p * p), 0);
  heap.set(mean.subarray(0, p), meanAt);
  for (let start = 0; start < n; start += blockRows) {
    const rows = Math.min(n - start, blockRows);
    heap.set(x.subarray(start * p, (start + rows) * p), rowsAt);
    kernels.whitenRows(rowsAt * 8, rows, p, meanAt * 8, 0);
    out.set(heap.subarray(rowsAt, rowsAt + rows * p), start * p);
  }
}

/**
 * out[t·k + c] = Σ_j x[i·q + j] · vectors[c][j] for the rows i listed in `rows` (all n when
 * null, t = i), each sum from 0 in column order, multiply then add, on either path.
 */
export function rowProducts(x: Float64Array, n: number, q: number, rows: Int32Array | null, vectors: readonly Float64Array[], out: Float64Array): void {
  const k = vectors.length;
  const used = rows ? rows.length : n;
  const kernels = rowKernels();
  if (!kernels) {
    for (let t = 0; t < used; t++) {
      const row = (rows ? rows[t] : t) * q;
      for (let c = 0; c < k; c++) {
        let z = 0;
        for (let j = 0; j < q; j++) z += x[row + j] * vectors[c][j];
        out[t * k + c] = z;
      }
    }
    return;
  }
  const blockRows = kernelBlockRows(q + k);
  const rowsAt = k * q;
  const outAt = rowsAt + blockRows * q;
  reserveDoubles(kernels, outAt + blockRows * k);
  const heap = kernels.heap;
  vectors.forEach((vector, c) => heap.set(vector.subarray(0, q), c * q));
  for (let start = 0; start < used; start += blockRows) {
    const count = Math.min(used - start, blockRows);
    if (rows) for (let t = 0; t < count; t++) heap.set(x.subarray(rows[start + t] * q, rows[start + t] * q + q), rowsAt + t * q);
    else heap.set(x.subarray(start * q, (start + count) * q), rowsAt);
    kernels.rowProducts(rowsAt * 8, count, q, 0, k, outAt * 8);
    out.set(heap.subarray(outAt, outAt + count * k), start * k);
  }
}

/** undefined until first asked for; null where this runtime cannot run the module. */
let instance: RowKernels | null | undefined;
let allowed = true;

/** Turns the WebAssembly path of the row kernels off or back on (the tests compare the two paths). */
export function allowRowKernels(allow: boolean): void {
  allowed = allow;
}

/** Whether the WebAssembly path runs in this runtime (and is allowed). */
export function rowKernelsAvailable(): boolean {
  return rowKernels() !== null;
}

/** The module (compiled on first use, one instance per thread), or null where it cannot run or is not allowed. */
export function rowKernels(): RowKernels | null {
  if (!allowed) return null;
  if (instance === undefined) {
    const made = instantiate(compileModule(ROW_KERNELS_WASM_BASE64));
    const memory = made ? (made.exports.memory as WebAssembly.Memory) : null;
    instance = made && memory ? { memory, heap: new Float64Array(memory.buffer), ...(made.exports as unknown as Omit<RowKernels, "memory" | "heap">) } : null;
  }
  return instance;
}

/** Rows of `width` doubles per block copied through the module's memory (about 64 KB of them). */
export function kernelBlockRows(width: number): number {
  return Math.max(1, Math.floor(8192 / Math.max(width, 1)));
}

/** Makes the module's memory at least `doubles` long (views made before a growth are void). */
export function reserveDoubles(kernels: RowKernels, doubles: number): void {
  if (growTo(kernels.memory, doubles * 8)) kernels.heap = new Float64Array(kernels.memory.buffer);
}
