import { ROW_KERNELS_WASM_BASE64 } from "./wasm/rowKernelsModule";
import { compileModule, growTo, instantiate } from "./wasm/compileModule";

/**
 * The scalar row kernels' WebAssembly module (wasm/rowKernels.wat): compiled code from the
 * first call, where a JavaScript loop runs interpreted until the engine's optimising compiler
 * has reached it, which is most of a small fit in a fresh process. Each kernel's JavaScript
 * path stays beside its caller (logDensities.ts, the k-means of starts.ts, hard assignment in
 * warmStart/alternatingLeastSquares.ts) and gives the same
 * bits; the callers copy a block of rows at a time into the module's memory (no caller of
 * one kernel nests another, so they share it).
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
