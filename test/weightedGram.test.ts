import { describe, expect, it } from "vitest";
import { accumulateGramBlock, addBlockDots, addBlockGram, allowSimdKernel, blockRowsFor, cutMemberships, dot, finishGramSum, holdRows, rowBlock, rowPredictions, simdKernelAvailable, stageMemberships, startGramSums, weighBlock, stageRows, gatherRows, type RowBlock } from "../src/engine/weightedGram";
import { WEIGHTED_GRAM_WASM_BASE64 } from "../src/engine/wasm/weightedGramModule";
import { fitMixture } from "../src/engine/fitMixture";
import { noiselessProblem, noisyProblem } from "../src/synthetic/generateProblems";
import { standardErrors } from "../src/engine/standardErrors";
// @ts-expect-error: a plain ES module script without type declarations
import { assembleWeightedGram } from "../scripts/buildWasm.mjs";
import { membershipsFromLogTerms } from "../src/engine/logDensities";
import { createRandom } from "../src/engine/random";
import { meanOuterProduct } from "../src/engine/secondMoment";
import { createWorkspace } from "../src/engine/mixture/mixtureWorkspace";
import { createParameters } from "../src/engine/mixture/mixtureParameters";
import { computeResiduals } from "../src/engine/mixture/eStep";
import { paddedCoefficients, rowResidual, rowResiduals } from "../src/engine/rowResiduals";
import { Matrix } from "ml-matrix";

describe("the weighted-Gram kernel", () => {
  it("adds the upper triangle of Σ w x xᵀ of a block, as the plain row-by-row sum does", () => {
    const random = createRandom(11);
    for (const q of [1, 3, 4, 7, 11]) {
      const m = 37;
      const stride = blockRowsFor(q);
      const columns = new Float64Array(q * stride);
      const weighted = new Float64Array(q * stride);
      const weights = Array.from({ length: m }, () => random.next());
      for (let r = 0; r < m; r++) {
        for (let j = 0; j < q; j++) {
          columns[j * stride + r] = random.next() * 2 - 1;
          weighted[j * stride + r] = weights[r] * columns[j * stride + r];
        }
      }
      const gram = new Float64Array(q * q);
      accumulateGramBlock(weighted, columns, stride, m, q, gram, 0);
      for (let j = 0; j < q; j++) {
        for (let l = 0; l < q; l++) {
          let expected = 0;
          for (let r = 0; r < m; r++) expected += weights[r] * columns[j * stride + r] * columns[l * stride + r];
          // Upper triangle only; the lower one is left untouched (0).
          if (l >= j) expect(gram[j * q + l]).toBeCloseTo(expected, 12);
          else expect(gram[j * q + l]).toBe(0);
        }
      }
    }
  });
});

/** A block of m rows (stride `stride`) with random columns and weights in [0, 1). */
function randomBlock(q: number, m: number, stride: number, seed: number): { weighted: Float64Array; columns: Float64Array } {
  const random = createRandom(seed);
  const columns = new Float64Array(q * stride);
  const weighted = new Float64Array(q * stride);
  for (let r = 0; r < m; r++) {
    const weight = random.next();
    for (let j = 0; j < q; j++) {
      columns[j * stride + r] = random.next() * 2 - 1;
      weighted[j * stride + r] = weight * columns[j * stride + r];
    }
  }
  return { weighted, columns };
}

/** Copies a column-major block (stride `stride`) into a row block, with the given per-row vectors. */
function fillRowBlock(block: RowBlock, weighted: Float64Array, columns: Float64Array, stride: number, m: number, q: number, vectors: Float64Array[]): void {
  for (let r = 0; r < m; r++) {
    for (let j = 0; j < block.qp; j++) {
      block.plain[r * block.qp + j] = j < q ? columns[j * stride + r] : 0;
      block.weighted[r * block.qp + j] = j < q ? weighted[j * stride + r] : 0;
    }
    vectors.forEach((vector, t) => (block.vectors[r * block.vectorCount + t] = vector[r]));
  }
}

/** Fit, memberships and standard errors as text, every number in full. */
function fingerprint(value: unknown): string {
  return JSON.stringify(value, (key, v) => (key === "timings" ? undefined : v instanceof Float64Array ? Array.from(v) : v));
}

describe("the weighted-Gram kernel's SIMD path", () => {
  it("runs here (Node 20 has WebAssembly SIMD), so the checks below compare two paths", () => {
    expect(simdKernelAvailable()).toBe(true);
  });

  it("row blocks give the same sums on both paths, to the bit, added into what the Gram held, the memory growing as needed", () => {
    // Gram rows in groups of four and the last q mod 4 (q mod 4 = 0-3), m mod 4 = 0-3 for dot's tail, up to 600 columns.
    const cases: Array<[number, number]> = [[1, 9], [2, 10], [3, 11], [5, 12], [8, 8], [9, 37], [11, 100], [12, 5], [13, 1489], [50, 327], [61, 200], [600, 32]];
    for (const [q, m] of cases) {
      const stride = Math.max(m, blockRowsFor(q));
      const { weighted, columns } = randomBlock(q, m, stride, q * 1000 + m);
      const vector = Float64Array.from({ length: m }, (_, r) => Math.cos(r * q));
      const start = Float64Array.from({ length: q * q }, (_, t) => (t % 7) - 3);
      const sums: Float64Array[][] = [];
      for (const allowed of [false, true]) {
        allowSimdKernel(allowed);
        const block = rowBlock(q, stride, 2);
        fillRowBlock(block, weighted, columns, stride, m, q, [vector, vector.map((v) => -2 * v)]);
        const gram = start.slice();
        const plainDots = Float64Array.from({ length: q }, (_, j) => j);
        const weightedDots = new Float64Array(q);
        addBlockGram(block, m, gram, 0);
        addBlockDots(block, m, "plain", 0, plainDots, 0);
        addBlockDots(block, m, "weighted", 1, weightedDots, 0);
        sums.push([gram, plainDots, weightedDots]);
      }
      allowSimdKernel(true);
      for (let t = 0; t < 3; t++) expect(Array.from(sums[1][t]), `q = ${q}, m = ${m}, output ${t}`).toEqual(Array.from(sums[0][t]));
      // Not a comparison of two zero arrays: the block moved every upper-triangle entry.
      expect(sums[1][0].some((value, t) => value !== start[t])).toBe(true);
    }
  });

  it("Gram sums carried across blocks in the module (startGramSums, finishGramSum) are the block-by-block sums to the bit", () => {
    // Reference: the same blocks added one call at a time into the caller's array (the path
    // checked against the scalar kernel above), and the scalar path itself.
    for (const [q, m] of [[6, 40], [12, 33], [101, 17]] as Array<[number, number]>) {
      const stride = Math.max(m, blockRowsFor(q));
      const blocks = [0, 1, 2, 3].map((b) => randomBlock(q, m, stride, 700 + 10 * q + b));
      const vector = new Float64Array(m).fill(1);
      const results: Float64Array[] = [];
      for (const [allowed, carried] of [[false, true], [true, false], [true, true]]) {
        allowSimdKernel(allowed);
        const grams = new Float64Array(3 * q * q);
        const block = rowBlock(q, stride, 1, 0, 3);
        if (carried) startGramSums(block);
        // Blocks 0-3 into sums 0, 1, 2, 0: sum 0 carries two blocks, the others one each.
        blocks.forEach(({ weighted, columns }, b) => {
          fillRowBlock(block, weighted, columns, stride, m, q, [vector]);
          const sum = b % 3;
          addBlockGram(block, m, grams, sum * q * q, carried ? sum : -1);
        });
        if (carried) for (let sum = 0; sum < 3; sum++) finishGramSum(block, sum, grams, sum * q * q);
        results.push(grams);
      }
      allowSimdKernel(true);
      expect(Array.from(results[1]), `q = ${q}, scalar against one call at a time`).toEqual(Array.from(results[0]));
      expect(Array.from(results[2]), `q = ${q}, carried against one call at a time`).toEqual(Array.from(results[1]));
      expect(results[2].some((value) => value !== 0)).toBe(true);
    }
  });

  it("carries no sums when they would take more than 64 MB of the module, and the Gram is the same", () => {
    // 30 sums of a 600 x 600 Gram would be 86 MB: the block carries none, and addBlockGram
    // with a sum's index adds into the caller's array as without one.
    const q = 600;
    const m = 5;
    const stride = Math.max(m, blockRowsFor(q));
    const { weighted, columns } = randomBlock(q, m, stride, 901);
    const vector = new Float64Array(m).fill(1);
    const direct = new Float64Array(q * q);
    const viaSum = new Float64Array(q * q);
    const plainBlock = rowBlock(q, stride, 1, 0, 0);
    fillRowBlock(plainBlock, weighted, columns, stride, m, q, [vector]);
    addBlockGram(plainBlock, m, direct, 0);
    const block = rowBlock(q, stride, 1, 0, 30);
    expect(block.sums).toBe(0);
    fillRowBlock(block, weighted, columns, stride, m, q, [vector]);
    startGramSums(block);
    addBlockGram(block, m, viaSum, 0, 29);
    finishGramSum(block, 29, viaSum, 0);
    expect(Array.from(viaSum)).toEqual(Array.from(direct));
    expect(direct.some((value) => value !== 0)).toBe(true);
  });

  it("weighs a row block's rows by a per-row value, on both paths the product w·x of each value", () => {
    for (const [q, m] of [[1, 3], [5, 17], [12, 40]] as Array<[number, number]>) {
      const random = createRandom(q + m);
      const values = Float64Array.from({ length: m * q }, () => random.next() * 4 - 2);
      const weights = Float64Array.from({ length: m }, () => random.next());
      for (const allowed of [false, true]) {
        allowSimdKernel(allowed);
        const block = rowBlock(q, 64, 3);
        for (let g = 0; g < m; g++) {
          for (let j = 0; j < block.qp; j++) block.plain[g * block.qp + j] = j < q ? values[g * q + j] : 0;
          block.vectors[g * 3 + 2] = weights[g];
        }
        weighBlock(block, m, 2);
        for (let g = 0; g < m; g++) {
          for (let j = 0; j < q; j++) expect(block.weighted[g * block.qp + j], `q = ${q}, SIMD ${allowed}`).toBe(weights[g] * values[g * q + j]);
        }
      }
      allowSimdKernel(true);
    }
  });

  it("gathers staged rows into the plain rows, with the intercept's 1s and zero padding, the same on both paths", () => {
    // (q, implicit 1s, staged stride): odd and even copy lengths, a stride wider than the copy.
    for (const [q, ones, stride] of [[1, 1, 0], [4, 1, 3], [5, 0, 5], [6, 1, 7], [11, 0, 11], [12, 1, 11]] as Array<[number, number, number]>) {
      const rows = 9;
      const random = createRandom(31 * q + stride);
      const source = Float64Array.from({ length: (rows + 2) * stride }, () => random.next() * 2 - 1);
      const picked = [7, 0, 3, 3, 8];
      for (const allowed of [false, true]) {
        allowSimdKernel(allowed);
        const block = rowBlock(q, 16, 1, stride);
        block.plain.fill(NaN);
        stageRows(block, source, 2, 2 + rows);
        picked.forEach((row, g) => (block.indices[g] = row));
        gatherRows(block, picked.length, ones);
        picked.forEach((row, g) => {
          const expected = Array.from({ length: block.qp }, (_, j) => (j < ones ? 1 : j < q ? source[(2 + row) * stride + j - ones] : 0));
          expect(Array.from(block.plain.subarray(g * block.qp, (g + 1) * block.qp)), `q = ${q}, SIMD ${allowed}`).toEqual(expected);
        });
      }
      allowSimdKernel(true);
    }
  });

  it("row blocks give the column-major kernel's and dot's sums to the bit", () => {
    // m mod 4 = 0, 1, 2, 3 and q mod 4 = 0, 1, 2, 3, so both of dot's tails and the Gram's last rows are met.
    for (const [q, m] of [[1, 9], [2, 10], [3, 11], [5, 12], [16, 40], [17, 41], [18, 42], [19, 43], [50, 327], [31, 1]] as Array<[number, number]>) {
      const stride = blockRowsFor(q);
      const { weighted, columns } = randomBlock(q, m, stride, 7 * q + m);
      const y = Float64Array.from({ length: m }, (_, r) => Math.sin(r + q));
      const gramStart = Float64Array.from({ length: q * q }, (_, t) => (t % 5) - 2);
      const rhsStart = Float64Array.from({ length: q }, (_, j) => j - 3);
      const expectedGram = gramStart.slice();
      const expectedRhs = rhsStart.slice();
      const expectedPlain = new Float64Array(q);
      accumulateGramBlock(weighted, columns, stride, m, q, expectedGram, 0);
      for (let j = 0; j < q; j++) expectedRhs[j] += dot(weighted, j * stride, y, 0, m);
      for (let j = 0; j < q; j++) expectedPlain[j] += dot(columns, j * stride, y, 0, m);
      for (const allowed of [true, false]) {
        allowSimdKernel(allowed);
        const block = rowBlock(q, stride);
        fillRowBlock(block, weighted, columns, stride, m, q, [y]);
        const gram = gramStart.slice();
        const rhs = rhsStart.slice();
        const plain = new Float64Array(q);
        addBlockGram(block, m, gram, 0);
        addBlockDots(block, m, "weighted", 0, rhs, 0);
        addBlockDots(block, m, "plain", 0, plain, 0);
        expect(Array.from(gram), `q = ${q}, m = ${m}, SIMD ${allowed}`).toEqual(Array.from(expectedGram));
        expect(Array.from(rhs), `q = ${q}, m = ${m}, SIMD ${allowed}`).toEqual(Array.from(expectedRhs));
        expect(Array.from(plain), `q = ${q}, m = ${m}, SIMD ${allowed}`).toEqual(Array.from(expectedPlain));
      }
      allowSimdKernel(true);
    }
  });

  it("never changes a fit: noiseless and noisy fits and their standard errors are the same either way", () => {
    const noiseless = noiselessProblem(20, 4, 8, createRandom(5));
    const noisy = noisyProblem(12, 3, 40, createRandom(6));
    const prints: string[] = [];
    for (const allowed of [false, true]) {
      allowSimdKernel(allowed);
      const exact = fitMixture(noiseless.data, { k: 4, intercept: false, seed: 2 });
      const fit = fitMixture(noisy.data, { k: 3, intercept: true, seed: 2 });
      prints.push(fingerprint([exact.components, exact.logLikelihood, fit.components, fit.logLikelihood, fit.memberships, standardErrors(noisy.data, fit)]));
    }
    allowSimdKernel(true);
    expect(prints[1]).toBe(prints[0]);
  });

  it("picks and weighs each component's rows from staged memberships the same way on both paths (holdRows, cutMemberships), NaN memberships kept", () => {
    const random = createRandom(17);
    const k = 3;
    const m = 500;
    const memberships = Float64Array.from({ length: m * k }, () => {
      const u = random.next();
      return u < 0.3 ? 1e-13 * random.next() : u < 0.32 ? Number.NaN : u < 0.35 ? 1e-12 : random.next();
    });
    const y = Float64Array.from({ length: m }, () => random.next() - 0.5);
    const outputs: string[] = [];
    for (const allowed of [false, true]) {
      allowSimdKernel(allowed);
      const block = rowBlock(2, m, 2, 0, 0, k);
      stageMemberships(block, memberships, y, 0, m);
      const parts: unknown[] = [];
      for (let c = 0; c < k; c++) {
        const squares = Float64Array.of(0.25, 0.5);
        const held = holdRows(block, m, c, 1e-12, squares, 1);
        parts.push(held, Array.from(block.indices.subarray(0, held)), Array.from(block.vectors.subarray(0, 2 * held)).map(String), String(squares[1]));
        const mass = cutMemberships(block, m, c, 1e-6, 1);
        parts.push(String(mass), Array.from({ length: m }, (_, i) => String(block.vectors[2 * i + 1])));
      }
      outputs.push(JSON.stringify(parts));
    }
    allowSimdKernel(true);
    expect(outputs[1]).toBe(outputs[0]);
    // Rows held: memberships not below 1e-12 (NaN included), e.g. component 0's count by hand.
    let expected = 0;
    for (let i = 0; i < m; i++) if (!(memberships[i * k] < 1e-12)) expected++;
    expect(JSON.parse(outputs[0])[0]).toBe(expected);
  });

  it("is the assembly of weightedGram.wat (run `npm run build:wasm` after editing it)", async () => {
    const bytes: Uint8Array = await assembleWeightedGram();
    expect(Buffer.from(bytes).toString("base64")).toBe(WEIGHTED_GRAM_WASM_BASE64);
  });
});

describe("mean outer products through the kernel (meanOuterProduct)", () => {
  // Reference: ml-matrix's products (a general-purpose library), Xᵀ diag(w) X / n. 6,000 rows
  // of 3 columns span two of the kernel's blocks (blockRowsFor(3) = 5,461 rows).
  const random = createRandom(29);
  const n = 6000;
  const p = 3;
  const x = Float64Array.from({ length: n * p }, () => random.normal());
  const weights = Float64Array.from({ length: n }, () => random.next() * 4);
  const rows = Array.from({ length: n }, (_, i) => Array.from(x.subarray(i * p, i * p + p)));

  it.each([
    ["unit weights", false, false],
    ["weighted", true, false],
    ["a leading column of 1s", false, true],
  ])("%s: equals Xᵀ diag(w) X / n", (_, useWeights, leadingOne) => {
    const design = new Matrix(rows.map((r) => (leadingOne ? [1, ...r] : r)));
    const scaled = design.clone();
    if (useWeights) for (let i = 0; i < n; i++) for (let j = 0; j < design.columns; j++) scaled.set(i, j, weights[i] * design.get(i, j));
    const reference = design.transpose().mmul(scaled).div(n);
    const moment = meanOuterProduct(x, n, p, useWeights ? weights : null, leadingOne);
    const size = design.columns;
    for (let a = 0; a < size; a++) {
      for (let b = 0; b < size; b++) expect(Math.abs(moment[a * size + b] - reference.get(a, b))).toBeLessThan(1e-12);
    }
  });
});

describe("the E-step kernel's memberships from log terms", () => {
  it("matches the log-sum-exp definition, including rows whose other terms are negligible and ties", () => {
    const cases = [[0, -1, -2], [5, -100, -200], [-3, -3, -50], [1e3, 1e3 - 40, 1e3 - 30], [-7]];
    for (const terms of cases) {
      const k = terms.length;
      const out = new Float64Array(k);
      const value = membershipsFromLogTerms(Float64Array.from(terms), 0, k, out, 0);
      const largest = Math.max(...terms);
      const sum = terms.reduce((s, t) => s + Math.exp(t - largest), 0);
      expect(value).toBeCloseTo(largest + Math.log(sum), 12);
      terms.forEach((t, c) => expect(out[c]).toBeCloseTo(Math.exp(t - largest) / sum, 15));
      expect(out.reduce((s, t) => s + t, 0)).toBeCloseTo(1, 15);
    }
  });

  it("leaves a row of all −∞ terms as before: no number, not a made-up membership", () => {
    const out = new Float64Array(2);
    const value = membershipsFromLogTerms(Float64Array.from([-Infinity, -Infinity]), 0, 2, out, 0);
    expect(value).toBe(-Infinity);
    expect(Number.isNaN(out[0]) && Number.isNaN(out[1])).toBe(true);
  });
});

describe("the residual kernel's SIMD path (computeResiduals)", () => {
  it("gives the JavaScript residuals to the bit: odd and even K, with and without an intercept, all rows and a subsample", () => {
    const problem = noisyProblem(7, 3, 60, createRandom(41));
    const rows = Int32Array.from({ length: 500 }, (_, t) => (t * 7) % problem.data.n);
    for (const [k, intercept, subsample] of [[3, true, false], [4, false, false], [5, true, true], [1, false, true]] as Array<[number, boolean, boolean]>) {
      const outputs: Float64Array[] = [];
      for (const allowed of [false, true]) {
        allowSimdKernel(allowed);
        const ws = createWorkspace(problem.data, k, intercept, false, subsample ? rows : undefined);
        const params = createParameters(k, ws.q, ws.p, false);
        const random = createRandom(k + 10);
        for (let t = 0; t < params.coefficients.length; t++) params.coefficients[t] = 4 * random.next() - 2;
        computeResiduals(ws, params);
        outputs.push(ws.residuals.slice());
      }
      allowSimdKernel(true);
      expect(Array.from(outputs[1]), `k = ${k}, intercept ${intercept}, subsample ${subsample}`).toEqual(Array.from(outputs[0]));
      // Not two arrays of zeros: every residual was written.
      expect(outputs[1].every((value) => value !== 0 && Number.isFinite(value))).toBe(true);
    }
  });
});

describe("the residual kernel (rowResiduals, rowResidual)", () => {
  it("gives y − Σ x·β summed in column order, to the bit, for 1 to 9 components, with and without implicit 1s, writing nothing past k; one component alone the same", () => {
    const random = createRandom(77);
    const q = 6;
    const values = Float64Array.from({ length: 3 * q }, () => 6 * random.next() - 3);
    for (let k = 1; k <= 9; k++) {
      for (const ones of [0, 1, 2]) {
        const coefficients = Float64Array.from({ length: k * q }, () => 4 * random.next() - 2);
        const yi = 10 * random.next() - 5;
        const rowOffset = q - ones;
        const out = new Float64Array(k + 4).fill(-7);
        rowResiduals(values, rowOffset, ones, q, paddedCoefficients(coefficients, k, q), k, yi, out, 1);
        for (let c = 0; c < k; c++) {
          // The definition, written plainly: column j is 1 for j < ones, else the row's value.
          let sum = 0;
          for (let j = 0; j < q; j++) sum += (j < ones ? 1 : values[rowOffset + j]) * coefficients[c * q + j];
          expect(out[1 + c], `k = ${k}, ones = ${ones}, component ${c}`).toBe(yi - sum);
          // One component's residual alone (a design row holds its 1s): the same value.
          if (ones === 0) expect(rowResidual(values, rowOffset, q, coefficients, c * q, yi)).toBe(out[1 + c]);
        }
        expect(out[0]).toBe(-7);
        for (let c = k + 1; c < out.length; c++) expect(out[c], `k = ${k}: nothing written past k`).toBe(-7);
      }
    }
  });
});

describe("the hard-assignment predictions (rowPredictions)", () => {
  it("give dot's value to the bit on both paths: odd and even counts, q not a multiple of 4, rows past one block", () => {
    // Reference: dot itself, row by row (the JavaScript path), which the SIMD path must equal.
    const random = createRandom(43);
    for (const [n, q, count] of [[300, 7, 3], [513, 8, 4], [40, 13, 1], [257, 2, 5]]) {
      const x = Float64Array.from({ length: n * q }, () => 4 * random.next() - 2);
      const coefficients = Array.from({ length: count }, () => Float64Array.from({ length: q }, () => 2 * random.next() - 1));
      // Into columns count down to 1 of a wider n x (count + 2) table; columns 0 and count + 1 stay.
      const stride = count + 2;
      const columns = Array.from({ length: count }, (_, s) => stride - 2 - s);
      const outputs: Float64Array[] = [];
      for (const allowed of [false, true]) {
        allowSimdKernel(allowed);
        const out = new Float64Array(n * stride).fill(NaN);
        rowPredictions(x, n, q, coefficients, columns, out, stride);
        outputs.push(out);
      }
      allowSimdKernel(true);
      const label = `n = ${n}, q = ${q}, ${count} components`;
      for (let i = 0; i < n; i++) {
        for (let s = 0; s < count; s++) {
          const expected = dot(x, i * q, coefficients[s], 0, q);
          expect(outputs[0][i * stride + columns[s]], label).toBe(expected);
          expect(outputs[1][i * stride + columns[s]], label).toBe(expected);
        }
      }
      // Columns of no component are left as they were.
      const written = new Set(columns);
      for (let c = 0; c < stride; c++) if (!written.has(c)) expect(Number.isNaN(outputs[1][c]), label).toBe(true);
    }
  });
});
