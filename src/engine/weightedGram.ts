import { WEIGHTED_GRAM_WASM_BASE64 } from "./wasm/weightedGramModule";
import { compileModule, growTo, instantiate } from "./wasm/compileModule";

/**
 * The one weighted-Gram kernel: Σ_i w_i x_i x_iᵀ (and Σ_i x_i v_i) accumulated a block of rows
 * at a time. Callers gather the rows that carry weight into a row block (rowBlock), and the
 * kernel sums them in registers, entry blocks at a time, rather than adding one rank-one update
 * per row to a q x q array in memory (about four times faster). Used by the M-step
 * (mixture/mStep.ts), the observed information (observedInformation.ts), the warm start's
 * subspace EM and hard-assignment moves, and meanOuterProduct (secondMoment.ts).
 *
 * Two paths, the same sums to the bit: a WebAssembly module with 128-bit SIMD
 * (wasm/weightedGram.wat) where the runtime has one, the row block living in its memory; and
 * plain JavaScript otherwise (a runtime without WebAssembly SIMD, or one that refuses to
 * compile it), which copies each row block column by column first. Each Gram entry is one
 * running sum over the block's rows in order in both, with the multiply and the add rounded
 * separately, and each dot product keeps dot's association, so which path ran never changes a
 * fit.
 */

/**
 * Doubles per block buffer (16384 x 8 bytes = 128 KB): two q x rows buffers fit in about
 * 256 KB, a typical L2 cache.
 */
export const BLOCK_DOUBLES = 16384;

/** Rows per block for q columns. */
export function blockRowsFor(q: number): number {
  return Math.max(32, Math.floor(BLOCK_DOUBLES / Math.max(q, 1)));
}

/**
 * The JavaScript path: adds the upper triangle of Wᵀ X for one block (W = weighted columns,
 * X = plain columns, both q x m column-major with stride `stride`) into gram[offset + j·q + l],
 * l ≥ j; rows j in groups of four register-blocked (accumulateScalar), the last q mod 4 rows
 * through dot, as the SIMD path does.
 */
export function accumulateGramBlock(weighted: Float64Array, columns: Float64Array, stride: number, m: number, q: number, gram: Float64Array, offset: number): void {
  const done = accumulateScalar(weighted, columns, stride, m, q, gram, offset);
  for (let j = done; j < q; j++) {
    for (let l = j; l < q; l++) gram[offset + j * q + l] += dot(weighted, j * stride, columns, l * stride, m);
  }
}

/**
 * The JavaScript path for rows j < q rounded down to a multiple of 4 (returns that many). Four
 * weighted columns meet two plain columns at a time (a 4 x 2 register block: six loads feed
 * eight multiply-adds, against two loads per multiply-add for one entry at a time); each entry
 * is still one running sum over the rows in order, so the sums do not depend on the blocking.
 */
function accumulateScalar(weighted: Float64Array, columns: Float64Array, stride: number, m: number, q: number, gram: Float64Array, offset: number): number {
  let j = 0;
  for (; j + 3 < q; j += 4) {
    const w0 = j * stride;
    const w1 = w0 + stride;
    const w2 = w1 + stride;
    const w3 = w2 + stride;
    const row = offset + j * q;
    let l = j;
    for (; l + 1 < q; l += 2) {
      const x0 = l * stride;
      const x1 = x0 + stride;
      let s00 = 0;
      let s10 = 0;
      let s20 = 0;
      let s30 = 0;
      let s01 = 0;
      let s11 = 0;
      let s21 = 0;
      let s31 = 0;
      for (let i = 0; i < m; i++) {
        const a = columns[x0 + i];
        const b = columns[x1 + i];
        const v0 = weighted[w0 + i];
        const v1 = weighted[w1 + i];
        const v2 = weighted[w2 + i];
        const v3 = weighted[w3 + i];
        s00 += v0 * a;
        s10 += v1 * a;
        s20 += v2 * a;
        s30 += v3 * a;
        s01 += v0 * b;
        s11 += v1 * b;
        s21 += v2 * b;
        s31 += v3 * b;
      }
      // Entries left of the diagonal (column < j + t) are the lower triangle: computed, not stored.
      gram[row + l] += s00;
      gram[row + l + 1] += s01;
      if (l >= j + 1) gram[row + q + l] += s10;
      if (l + 1 >= j + 1) gram[row + q + l + 1] += s11;
      if (l >= j + 2) gram[row + 2 * q + l] += s20;
      if (l + 1 >= j + 2) gram[row + 2 * q + l + 1] += s21;
      if (l >= j + 3) gram[row + 3 * q + l] += s30;
      if (l + 1 >= j + 3) gram[row + 3 * q + l + 1] += s31;
    }
    if (l < q) {
      // The last plain column when an odd number are left: a 4 x 1 block.
      const x = l * stride;
      let s0 = 0;
      let s1 = 0;
      let s2 = 0;
      let s3 = 0;
      for (let i = 0; i < m; i++) {
        const value = columns[x + i];
        s0 += weighted[w0 + i] * value;
        s1 += weighted[w1 + i] * value;
        s2 += weighted[w2 + i] * value;
        s3 += weighted[w3 + i] * value;
      }
      gram[row + l] += s0;
      if (l >= j + 1) gram[row + q + l] += s1;
      if (l >= j + 2) gram[row + 2 * q + l] += s2;
      if (l >= j + 3) gram[row + 3 * q + l] += s3;
    }
  }
  return j;
}

export interface SimdKernel {
  memory: WebAssembly.Memory;
  /** A view of the whole memory, made again whenever the memory grows. */
  heap: Float64Array;
  gram: (weighted: number, columns: number, m: number, rows: number, qp: number, out: number, add: number) => void;
  dots: (x: number, m: number, qp: number, from: number, v: number, vStride: number, out: number) => void;
  scale: (x: number, m: number, qp: number, v: number, vStride: number, out: number) => void;
  gather: (staged: number, stride: number, ones: number, q: number, qp: number, indices: number, m: number, out: number) => void;
  residuals: (staged: number, stride: number, ones: number, q: number, coefficients: number, y: number, m: number, k: number, out: number) => void;
  predictions: (rows: number, q: number, coefficients: number, m: number, pairs: number, out: number) => void;
  cholesky: (gram: number, scales: number, q: number, ridge: number, tolerance: number, factor: number) => number;
  hold: (tau: number, k: number, c: number, y: number, m: number, threshold: number, indices: number, vectors: number, squares: number) => number;
  cut: (tau: number, k: number, c: number, m: number, cutoff: number, vectors: number, stride: number) => number;
}

/** undefined until first asked for; null when this runtime cannot run the module. */
let simd: SimdKernel | null | undefined;
let simdAllowed = true;

/** Turns the SIMD path off or back on (the tests compare the two paths). */
export function allowSimdKernel(allowed: boolean): void {
  simdAllowed = allowed;
}

/** Whether the SIMD path runs in this runtime (and is allowed). */
export function simdKernelAvailable(): boolean {
  return simdKernel() !== null;
}

/** The SIMD module (compiled on first use; the E-step's residuals use it too), or null where it cannot run or is not allowed. */
export function simdKernel(): SimdKernel | null {
  if (!simdAllowed) return null;
  if (simd === undefined) simd = newKernel();
  return simd;
}

let choleskyModule: SimdKernel | null | undefined;

/**
 * The SIMD module for the Cholesky factorisation (cholesky.ts), or null where the module
 * cannot run or is not allowed. A second instance with a memory of its own: a solve may come
 * between the filling and the summing of a row block (the subspace EM fills its block once
 * and solves each component's equations between the sums), and growing the row blocks'
 * memory there would void their views.
 */
export function choleskyKernel(): SimdKernel | null {
  if (!simdAllowed) return null;
  if (choleskyModule === undefined) choleskyModule = newKernel();
  return choleskyModule;
}

/** A new instance of the module with its exports, or null where it cannot run. */
function newKernel(): SimdKernel | null {
  const instance = instantiateModule();
  if (!instance) return null;
  const memory = instance.exports.memory as WebAssembly.Memory;
  const exports = instance.exports as unknown as Omit<SimdKernel, "memory" | "heap">;
  return {
    memory,
    heap: new Float64Array(memory.buffer),
    gram: exports.gram,
    dots: exports.dots,
    scale: exports.scale,
    gather: exports.gather,
    residuals: exports.residuals,
    predictions: exports.predictions,
    cholesky: exports.cholesky,
    hold: exports.hold,
    cut: exports.cut,
  };
}

/** The module compiled once (null: it cannot run here), shared by both instances. */
let compiledModule: WebAssembly.Module | null | undefined;

/** A new instance of the module, or null where it cannot run. */
function instantiateModule(): WebAssembly.Instance | null {
  if (compiledModule === undefined) compiledModule = compileModule(WEIGHTED_GRAM_WASM_BASE64);
  return instantiate(compiledModule);
}

/** Makes the module's memory at least `bytes` long (views made before a growth are void). */
export function reserve(kernel: SimdKernel, bytes: number): void {
  if (growTo(kernel.memory, bytes)) kernel.heap = new Float64Array(kernel.memory.buffer);
}

/** Adds the module's "gram" output (entry (j, l) at outAt + l·qp + j) into the upper triangle of rows j < rows. */
function addGramOutput(kernel: SimdKernel, outAt: number, rows: number, q: number, qp: number, gram: Float64Array, offset: number): void {
  const heap = kernel.heap;
  for (let j = 0; j < rows; j++) {
    const row = offset + j * q;
    for (let l = j; l < q; l++) gram[row + l] += heap[outAt + l * qp + j];
  }
}

/**
 * Rows gathered for the kernel, row-major: gathered row g's q design values at plain[g·qp ..]
 * and its weighted values w·x at weighted[g·qp ..], each padded with zeros to qp (q rounded up
 * to a multiple of 4), and `vectorCount` per-row values at vectors[g·vectorCount ..] (the
 * response in the M-step, other per-row weights in the observed information). Where the SIMD
 * path runs the arrays are views of the module's memory, valid until the next call for a row
 * block: filled directly, they need no copy before the sums. Elsewhere they are plain arrays,
 * and the scalar path copies the block column by column first (see addBlockGram).
 */
export interface RowBlock {
  plain: Float64Array;
  weighted: Float64Array;
  vectors: Float64Array;
  /** Rows staged by stageRows, `stagedStride` values a row (empty when the block was asked for none). */
  staged: Float64Array;
  /** Which staged rows gatherRows copies into the plain rows, in order. */
  indices: Int32Array;
  /** Memberships staged by stageMemberships, `components` a row (empty when the block was asked for none). */
  stagedMemberships: Float64Array;
  /** The responses staged with them. */
  stagedResponses: Float64Array;
  components: number;
  q: number;
  qp: number;
  capacity: number;
  vectorCount: number;
  stagedStride: number;
  /** The SIMD module, or null for the scalar path. */
  kernel: SimdKernel | null;
  /** SIMD path: where the module's outputs start in its memory, in doubles. */
  outAt: number;
  /** Gram sums the block carries in the module's memory across blocks (see startGramSums). */
  sums: number;
  /** SIMD path: where the first of them starts, in doubles (qp² each). */
  sumsAt: number;
  /** Scalar path: column-major copies of the block (stride capacity). */
  columns: Float64Array | null;
  weightedColumns: Float64Array | null;
}

let lastBlock: RowBlock | null = null;

/** Most doubles the carried Gram sums of a row block may take in the module (64 MB). */
const CARRIED_SUMS_DOUBLES = 8 * 1024 * 1024;

/**
 * A row block for up to `capacity` rows of q values and `vectorCount` per-row values, with room
 * to stage `capacity` rows of `stagedStride` values and, for holdRows, their memberships of
 * `components` components and their responses (the last one, while these stay the same, the
 * path is the same and the module's memory has not grown).
 * Every row block shares the same memory, as does the E-step's residual pass (eStep.ts): take
 * it afresh for every pass, and fill and sum it without another user of the module in between
 * (none of them nests). Row blocks from any q use the SIMD path where it runs: on 21 noisy
 * sheets of 2-10 predictors, fitted interleaved, M-steps on row blocks from 1, 4 and 8
 * columns took 0.90-0.94 of the time of row blocks from 16 columns only.
 */
export function rowBlock(q: number, capacity: number, vectorCount = 1, stagedStride = 0, sums = 0, components = 0): RowBlock {
  const kernel = simdKernel();
  const qp = (q + 3) & ~3;
  // Carried sums only while they fit in CARRIED_SUMS_DOUBLES; past that (thousands of
  // predictors, dozens of components) each block's Gram is added into the caller's array.
  const carried = kernel && sums * qp * qp <= CARRIED_SUMS_DOUBLES ? sums : 0;
  const last = lastBlock;
  if (last && last.q === q && last.capacity === capacity && last.vectorCount === vectorCount && last.stagedStride === stagedStride && last.components === components && last.sums >= carried && last.kernel === kernel && (!kernel || last.plain.buffer === kernel.memory.buffer)) return last;
  if (!kernel) {
    lastBlock = {
      plain: new Float64Array(capacity * qp),
      weighted: new Float64Array(capacity * qp),
      vectors: new Float64Array(capacity * vectorCount),
      staged: new Float64Array(capacity * stagedStride),
      indices: new Int32Array(capacity),
      stagedMemberships: new Float64Array(capacity * components),
      stagedResponses: new Float64Array(components > 0 ? capacity : 0),
      components,
      q, qp, capacity, vectorCount, stagedStride, kernel, outAt: 0, sums: 0, sumsAt: 0,
      columns: new Float64Array(capacity * q),
      weightedColumns: new Float64Array(capacity * q),
    };
    return lastBlock;
  }
  // Memory in doubles: the weighted and the plain rows (capacity·qp each), the vectors, the
  // indices (capacity 32-bit integers), the staged rows, their memberships and responses, the
  // output (qp² for the Gram, then qp for the dot products, then one running sum of holdRows),
  // the Gram sums carried across blocks (qp² each).
  const plainAt = capacity * qp;
  const vectorsAt = 2 * capacity * qp;
  const indicesAt = vectorsAt + capacity * vectorCount;
  const stagedAt = indicesAt + Math.ceil(capacity / 2);
  const membershipsAt = stagedAt + capacity * stagedStride;
  const responsesAt = membershipsAt + capacity * components;
  const outAt = responsesAt + (components > 0 ? capacity : 0);
  const sumsAt = outAt + qp * qp + qp + 1;
  reserve(kernel, (sumsAt + carried * qp * qp) * 8);
  const buffer = kernel.memory.buffer;
  lastBlock = {
    weighted: new Float64Array(buffer, 0, capacity * qp),
    plain: new Float64Array(buffer, plainAt * 8, capacity * qp),
    vectors: new Float64Array(buffer, vectorsAt * 8, capacity * vectorCount),
    indices: new Int32Array(buffer, indicesAt * 8, capacity),
    staged: new Float64Array(buffer, stagedAt * 8, capacity * stagedStride),
    stagedMemberships: new Float64Array(buffer, membershipsAt * 8, capacity * components),
    stagedResponses: new Float64Array(buffer, responsesAt * 8, components > 0 ? capacity : 0),
    components,
    q, qp, capacity, vectorCount, stagedStride, kernel, outAt, sums: carried, sumsAt, columns: null, weightedColumns: null,
  };
  return lastBlock;
}

/**
 * Adds Σ w x xᵀ over the block's first m rows into the upper triangle of gram[offset ..]
 * (q x q row-major). SIMD path: the Gram's rows in groups of four as running sums over the
 * rows in order (the module's "gram"), the last q mod 4 rows as dot products in dot's
 * association (its "dots"). Scalar path: the block copied column by column, then the same
 * sums in JavaScript (accumulateGramBlock). The two give the same sums to the bit.
 */
export function addBlockGram(block: RowBlock, m: number, gram: Float64Array, offset: number, sum = -1): void {
  if (m === 0) return;
  const { plain, weighted, q, qp, kernel, outAt } = block;
  if (!kernel) {
    const columns = block.columns as Float64Array;
    const weightedColumns = block.weightedColumns as Float64Array;
    const stride = block.capacity;
    for (let g = 0; g < m; g++) {
      for (let j = 0; j < q; j++) {
        columns[j * stride + g] = plain[g * qp + j];
        weightedColumns[j * stride + g] = weighted[g * qp + j];
      }
    }
    accumulateGramBlock(weightedColumns, columns, stride, m, q, gram, offset);
    return;
  }
  const rows = q & ~3;
  const heap = kernel.heap;
  const dotsAt = outAt + qp * qp;
  for (let j = rows; j < q; j++) {
    // Row j of the Gram from column j on: Σ (w·x_j)·x_l, plain columns against weighted column j.
    kernel.dots(plain.byteOffset, m, qp, j & ~1, weighted.byteOffset + j * 8, qp * 8, dotsAt * 8);
    for (let l = j; l < q; l++) gram[offset + j * q + l] += heap[dotsAt + l];
  }
  if (rows === 0) return;
  if (sum >= 0 && sum < block.sums) {
    kernel.gram(weighted.byteOffset, plain.byteOffset, m, rows, qp, (block.sumsAt + sum * qp * qp) * 8, 1);
    return;
  }
  kernel.gram(weighted.byteOffset, plain.byteOffset, m, rows, qp, outAt * 8, 0);
  addGramOutput(kernel, outAt, rows, q, qp, gram, offset);
}

/**
 * Gram sums carried in the module's memory from block to block (the block asked for with
 * `sums` of them): addBlockGram with a sum's index adds a block's Gram there instead of
 * into the caller's array, so each entry is added once per call instead of once per block
 * (with many components, each holding a few rows of a block, those adds took about a quarter
 * of the M-step's time at q = 100); finishGramSum then adds the total into the caller's
 * array. Each entry is the same running sum in the same order, so the same bits. On the
 * scalar path addBlockGram adds into the caller's array directly and these do nothing.
 */
export function startGramSums(block: RowBlock): void {
  const kernel = block.kernel;
  if (!kernel || block.sums === 0) return;
  kernel.heap.fill(0, block.sumsAt, block.sumsAt + block.sums * block.qp * block.qp);
}

/** Adds Gram sum `sum` (see startGramSums) into the upper triangle of gram[offset ..]. */
export function finishGramSum(block: RowBlock, sum: number, gram: Float64Array, offset: number): void {
  const kernel = block.kernel;
  if (!kernel || sum < 0 || sum >= block.sums) return;
  addGramOutput(kernel, block.sumsAt + sum * block.qp * block.qp, block.q & ~3, block.q, block.qp, gram, offset);
}

/**
 * Stages rows [from, to) of a row-major source (block.stagedStride values a row, at most
 * `capacity` rows) for gatherRows: one copy of a block of rows, from which each component
 * then gathers the rows it holds.
 */
export function stageRows(block: RowBlock, source: Float64Array, from: number, to: number): void {
  const stride = block.stagedStride;
  block.staged.set(source.subarray(from * stride, to * stride));
}

/**
 * Stages the memberships (block.components a row) and responses of rows [from, to) for
 * holdRows, as stageRows stages their values.
 */
export function stageMemberships(block: RowBlock, memberships: Float64Array, y: Float64Array, from: number, to: number): void {
  const k = block.components;
  block.stagedMemberships.set(memberships.subarray(from * k, to * k));
  block.stagedResponses.set(y.subarray(from, to));
}

/**
 * The rows component c holds among the first m staged ones: those whose membership is not
 * below `threshold`, in order, go to the block's indices (their staged row) and vectors (the
 * response, then the membership), and w·y·y of each is added to squares[at], one running sum
 * in row order (the same on either path). Returns how many rows it holds.
 */
export function holdRows(block: RowBlock, m: number, c: number, threshold: number, squares: Float64Array, at: number): number {
  const { stagedMemberships, stagedResponses, indices, vectors, components: k, kernel } = block;
  if (kernel) {
    const slot = block.outAt + block.qp * block.qp + block.qp;
    kernel.heap[slot] = squares[at];
    const held = kernel.hold(stagedMemberships.byteOffset, k, c, stagedResponses.byteOffset, m, threshold, indices.byteOffset, vectors.byteOffset, slot * 8);
    squares[at] = kernel.heap[slot];
    return held;
  }
  let held = 0;
  let sum = squares[at];
  for (let i = 0; i < m; i++) {
    const w = stagedMemberships[i * k + c];
    if (w < threshold) continue;
    const value = stagedResponses[i];
    indices[held] = i;
    vectors[2 * held] = value;
    vectors[2 * held + 1] = w;
    sum += w * value * value;
    held++;
  }
  squares[at] = sum;
  return held;
}

/**
 * Per-row value number `vector` of the block's first m rows: staged row i's membership of
 * component c, or 0 where it is below `cutoff`; returns their sum, added in row order (the
 * same on either path).
 */
export function cutMemberships(block: RowBlock, m: number, c: number, cutoff: number, vector: number): number {
  const { stagedMemberships, vectors, vectorCount, components: k, kernel } = block;
  if (kernel) return kernel.cut(stagedMemberships.byteOffset, k, c, m, cutoff, vectors.byteOffset + vector * 8, vectorCount * 8);
  let mass = 0;
  for (let i = 0; i < m; i++) {
    const t = stagedMemberships[i * k + c];
    const kept = t < cutoff ? 0 : t;
    vectors[i * vectorCount + vector] = kept;
    mass += kept;
  }
  return mass;
}

/**
 * Plain row g of the block (g < m) from staged row indices[g]: `ones` 1s, then the staged
 * row's first q − ones values, then zeros up to qp (the same copies on either path).
 */
export function gatherRows(block: RowBlock, m: number, ones: number): void {
  const { plain, staged, indices, q, qp, stagedStride, kernel } = block;
  if (kernel) {
    kernel.gather(staged.byteOffset, stagedStride, ones, q, qp, indices.byteOffset, m, plain.byteOffset);
    return;
  }
  for (let g = 0; g < m; g++) {
    const base = g * qp;
    const from = indices[g] * stagedStride - ones;
    for (let j = 0; j < ones; j++) plain[base + j] = 1;
    for (let j = ones; j < q; j++) plain[base + j] = staged[from + j];
    for (let j = q; j < qp; j++) plain[base + j] = 0;
  }
}

/**
 * The weighted rows of the block's first m rows from its plain ones: weighted = v · plain, v
 * the per-row value number `vector` (the same products in the module or in JavaScript).
 * Callers that gather only the plain rows and their weights save half the copying.
 */
export function weighBlock(block: RowBlock, m: number, vector: number): void {
  const { plain, weighted, vectors, vectorCount, qp, kernel } = block;
  if (kernel) {
    kernel.scale(plain.byteOffset, m, qp, vectors.byteOffset + vector * 8, vectorCount * 8, weighted.byteOffset);
    return;
  }
  for (let g = 0; g < m; g++) {
    const w = vectors[g * vectorCount + vector];
    for (let j = g * qp; j < (g + 1) * qp; j++) weighted[j] = w * plain[j];
  }
}

/**
 * Adds Σ_g x_g v_g over the block's first m rows into out[offset + j], j < q: x from the
 * plain rows (`source` "plain") or the weighted ones, v the per-row value number `vector`.
 * Each sum in dot's association, on either path (the module's "dots", or dot itself).
 */
export function addBlockDots(block: RowBlock, m: number, source: "plain" | "weighted", vector: number, out: Float64Array, offset: number): void {
  if (m === 0) return;
  const { q, qp, kernel, vectors, vectorCount, outAt } = block;
  const rows = source === "plain" ? block.plain : block.weighted;
  if (!kernel) {
    // The rows column by column and the values in a column of their own (the column scratch's
    // second buffer, free between calls), then dot over each.
    const columns = block.columns as Float64Array;
    const values = block.weightedColumns as Float64Array;
    const stride = block.capacity;
    for (let g = 0; g < m; g++) {
      values[g] = vectors[g * vectorCount + vector];
      for (let j = 0; j < q; j++) columns[j * stride + g] = rows[g * qp + j];
    }
    for (let j = 0; j < q; j++) out[offset + j] += dot(columns, j * stride, values, 0, m);
    return;
  }
  const dotsAt = outAt + qp * qp;
  kernel.dots(rows.byteOffset, m, qp, 0, vectors.byteOffset + vector * 8, vectorCount * 8, dotsAt * 8);
  const heap = kernel.heap;
  for (let j = 0; j < q; j++) out[offset + j] += heap[dotsAt + j];
}

/**
 * The normal equations of chosen rows of a row-major design (q values a row): adds XᵀX over
 * rows[0 .. count) (rows null: rows 0 .. count − 1) into the upper triangle of gram (q x q
 * row-major) and Xᵀy into right, a block of rows at a time through the kernel. The rows are
 * copied straight into the block's plain rows in the order given (not staged: they may lie
 * anywhere in the design); XᵀX is one running sum over all of them (a carried sum), Xᵀy a dot
 * per block. Every unweighted least-squares fit of a subset of rows (concentration steps, the
 * pooled fit of residual seeding, a re-seeded component) goes through here, and with
 * `weights` (one per row of the design, read for the rows taken) every weighted one outside
 * the M-step (XᵀWX and XᵀWy: the reweighted landing steps).
 */
export function addNormalEquations(design: Float64Array, q: number, y: Float64Array, rows: ArrayLike<number> | null, count: number, gram: Float64Array, right: Float64Array, weights: ArrayLike<number> | null = null): void {
  const blockRows = blockRowsFor(q);
  // Per row: the weight (1 unweighted, so that the Gram is XᵀX; 1·x is x to the bit) and y.
  const block = rowBlock(q, blockRows, 2, 0, 1);
  const { plain, vectors, qp } = block;
  startGramSums(block);
  for (let from = 0; from < count; from += blockRows) {
    const m = Math.min(count, from + blockRows) - from;
    for (let g = 0; g < m; g++) {
      const row = rows ? rows[from + g] : from + g;
      const source = row * q;
      const base = g * qp;
      for (let j = 0; j < q; j++) plain[base + j] = design[source + j];
      for (let j = q; j < qp; j++) plain[base + j] = 0;
      vectors[2 * g] = weights ? weights[row] : 1;
      vectors[2 * g + 1] = y[row];
    }
    weighBlock(block, m, 0);
    addBlockGram(block, m, gram, 0, 0);
    // XᵀWy from the weighted rows; unweighted, Xᵀy from the plain ones (the same bits: 1·x is x).
    addBlockDots(block, m, weights ? "weighted" : "plain", 1, right, 0);
  }
  finishGramSum(block, 0, gram, 0);
}

/** Rows of predictions a block at a time on the SIMD module. */
const PREDICTION_BLOCK_ROWS = 256;

/**
 * Each row's prediction under each given component: out[i·outStride + columns[s]] =
 * dot(x row i, coefficients[s]) for i < n (x row-major, q values a row, no implicit 1s). On
 * the SIMD module where it runs (a block of rows copied into its memory at a time, two
 * components to a lane pair, each sum in dot's order, so the same bits), else row by row with
 * dot, each row read once while it is in cache.
 */
export function rowPredictions(x: Float64Array, n: number, q: number, coefficients: readonly Float64Array[], columns: readonly number[], out: Float64Array, outStride: number): void {
  const count = coefficients.length;
  if (count === 0) return;
  const kernel = simdKernel();
  if (!kernel) {
    for (let i = 0; i < n; i++) {
      const row = i * q;
      for (let s = 0; s < count; s++) out[i * outStride + columns[s]] = dot(x, row, coefficients[s], 0, q);
    }
    return;
  }
  const pairs = (count + 1) >> 1;
  // Memory in doubles: a block of rows, the coefficients interleaved by pairs, the output.
  const coefficientsAt = PREDICTION_BLOCK_ROWS * q;
  const outAt = coefficientsAt + 2 * pairs * q;
  reserve(kernel, (outAt + PREDICTION_BLOCK_ROWS * 2 * pairs) * 8);
  const heap = kernel.heap;
  for (let p = 0; p < pairs; p++) {
    const second = 2 * p + 1 < count ? coefficients[2 * p + 1] : null;
    for (let j = 0; j < q; j++) {
      heap[coefficientsAt + 2 * (p * q + j)] = coefficients[2 * p][j];
      heap[coefficientsAt + 2 * (p * q + j) + 1] = second ? second[j] : 0;
    }
  }
  for (let start = 0; start < n; start += PREDICTION_BLOCK_ROWS) {
    const m = Math.min(n, start + PREDICTION_BLOCK_ROWS) - start;
    heap.set(x.subarray(start * q, (start + m) * q), 0);
    kernel.predictions(0, q, coefficientsAt * 8, m, pairs, outAt * 8);
    for (let g = 0; g < m; g++) {
      const from = outAt + g * 2 * pairs;
      const to = (start + g) * outStride;
      for (let s = 0; s < count; s++) out[to + columns[s]] = heap[from + s];
    }
  }
}

/** Σ a[aOffset + i] b[bOffset + i] for i < m, four partial sums to shorten the dependency chain. */
export function dot(a: Float64Array, aOffset: number, b: Float64Array, bOffset: number, m: number): number {
  let s0 = 0;
  let s1 = 0;
  let s2 = 0;
  let s3 = 0;
  let i = 0;
  for (; i + 3 < m; i += 4) {
    s0 += a[aOffset + i] * b[bOffset + i];
    s1 += a[aOffset + i + 1] * b[bOffset + i + 1];
    s2 += a[aOffset + i + 2] * b[bOffset + i + 2];
    s3 += a[aOffset + i + 3] * b[bOffset + i + 3];
  }
  for (; i < m; i++) s0 += a[aOffset + i] * b[bOffset + i];
  return s0 + s1 + (s2 + s3);
}
