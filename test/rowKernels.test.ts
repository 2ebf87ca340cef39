import { describe, expect, it } from "vitest";
import { membershipsFromLogTerms, normaliseLogDensities, residualMemberships, squareMemberships, squaredResidualSums } from "../src/engine/logDensities";
import { allowRowKernels, columnSums, rowKernelsAvailable, rowProducts, whitenRows } from "../src/engine/rowKernels";
import { ROW_KERNELS_WASM_BASE64 } from "../src/engine/wasm/rowKernelsModule";
// @ts-expect-error: a plain ES module script without type declarations
import { assembleModule } from "../scripts/buildWasm.mjs";
import { createRandom, type Random } from "../src/engine/random";
import { fitMixture } from "../src/engine/fitMixture";
import { standardErrors } from "../src/engine/standardErrors";
import { scanComponents } from "../src/engine/scanComponents";
import { noiselessProblem, noisyProblem } from "../src/synthetic/generateProblems";

/** The bytes of a Float64Array: equal only when every value is the same double (NaN, −0 included). */
function bits(values: Float64Array): string {
  return Buffer.from(values.buffer, values.byteOffset, values.byteLength).toString("hex");
}

/** Log terms of m rows of k: mostly within 40 of each other, with ties, far-off, −∞ and NaN terms mixed in. */
function drawTerms(m: number, k: number, random: Random): Float64Array {
  const terms = new Float64Array(m * k);
  for (let i = 0; i < m; i++) {
    const base = 200 * random.next() - 100;
    for (let c = 0; c < k; c++) {
      const u = random.next();
      terms[i * k + c] =
        u < 0.02 ? -Infinity
        : u < 0.03 ? Number.NaN
        : u < 0.06 ? base
        : u < 0.1 ? base - 1e-9 * random.next()
        : u < 0.15 ? base - 36 - 2 * random.next()
        : u < 0.2 ? base - 1000 * random.next()
        : base - 40 * random.next() * random.next();
    }
  }
  return terms;
}

function fingerprint(value: unknown): string {
  return JSON.stringify(value, (key, v) => (key === "timings" ? undefined : v instanceof Float64Array ? bits(v) : v));
}

describe("the row kernels' WebAssembly path (rowKernels.ts, the E-step kernel in logDensities.ts)", () => {
  it("runs here (Node has WebAssembly), so the checks below compare two paths", () => {
    expect(rowKernelsAvailable()).toBe(true);
  });

  // Reference: Math.exp and Math.log, through membershipsFromLogTerms (the row kernel in
  // JavaScript). V8 computes both with fdlibm's algorithms, which the module carries, so the
  // values must agree to the bit, not within a tolerance.
  it("gives membershipsFromLogTerms's memberships and row values to the bit, for 1-9 components and rows across blocks", () => {
    const random = createRandom(71);
    for (const k of [1, 2, 3, 4, 5, 7, 9]) {
      const m = 20000;
      const terms = drawTerms(m, k, random);
      const expected = terms.slice();
      const expectedRows = new Float64Array(m);
      let expectedTotal = 0;
      for (let i = 0; i < m; i++) {
        expectedRows[i] = membershipsFromLogTerms(expected, i * k, k, expected, i * k);
        expectedTotal += expectedRows[i];
      }
      const rows = new Float64Array(m);
      const total = normaliseLogDensities(terms, m, k, rows);
      expect(bits(terms)).toBe(bits(expected));
      expect(bits(rows)).toBe(bits(expectedRows));
      expect(Object.is(total, expectedTotal)).toBe(true);
    }
  });

  it("takes exp over every argument a row passes it (−37 to 0) and log over 1 to k, as Math.exp and Math.log", () => {
    // Two terms 0 and d: membership e^d / (1 + e^d) and value ln(1 + e^d), d spread over the
    // exponential's reduction branches (|d| below 2⁻²⁸, below ½ ln 2, below 1.5 ln 2, beyond).
    const m = 200000;
    const random = createRandom(72);
    const terms = new Float64Array(2 * m);
    for (let i = 0; i < m; i++) terms[2 * i + 1] = -37 * Math.pow(random.next(), 1 + 30 * random.next());
    const expected = terms.slice();
    for (let i = 0; i < m; i++) membershipsFromLogTerms(expected, 2 * i, 2, expected, 2 * i);
    const total = normaliseLogDensities(terms, m, 2);
    expect(bits(terms)).toBe(bits(expected));
    expect(Number.isFinite(total)).toBe(true);
  });

  it("makes the regression E-step from residuals as the JavaScript path does, rows [from, to) only", () => {
    const random = createRandom(73);
    for (const k of [1, 2, 4, 6]) {
      const n = 9000;
      const residuals = Float64Array.from({ length: n * k }, () => 4 * (random.next() - 0.5) * (random.next() < 0.1 ? 100 : 1));
      const constant = Float64Array.from({ length: k }, () => -2 * random.next());
      const curvature = Float64Array.from({ length: k }, () => -0.5 / (0.01 + random.next()));
      // Without and with one more term the same for every row (the background's).
      for (const term of [null, -1.5 - random.next()]) {
        const outputs: string[] = [];
        for (const allowed of [false, true]) {
          allowRowKernels(allowed);
          const memberships = new Float64Array(n * k).fill(-1);
          const rows = new Float64Array(n).fill(-1);
          const extra = term === null ? undefined : { term, memberships: new Float64Array(n).fill(-1) };
          const total = residualMemberships(residuals, 17, n - 5, k, constant, curvature, memberships, rows, extra);
          outputs.push(`${bits(memberships)} ${bits(rows)} ${bits(Float64Array.of(total))} ${extra ? bits(extra.memberships) : ""}`);
          // Rows outside [from, to) untouched; inside, a row's memberships (the extra one with
          // them) add up to 1.
          expect(memberships[17 * k - 1]).toBe(-1);
          expect(rows[n - 5]).toBe(-1);
          for (const i of [17, 500, n - 6]) {
            let sum = extra ? extra.memberships[i] : 0;
            for (let c = 0; c < k; c++) sum += memberships[i * k + c];
            expect(sum).toBeCloseTo(1, 12);
          }
        }
        allowRowKernels(true);
        expect(outputs[1]).toBe(outputs[0]);
      }
    }
  });

  it("makes the subspace EM's squared residuals, their weighted sums and memberships as the JavaScript path does", () => {
    const random = createRandom(74);
    for (const [k, m] of [[2, 2], [3, 6], [7, 14], [5, 1]]) {
      const n = 9000;
      const rows = Float64Array.from({ length: n * m }, () => random.next() - 0.5);
      const y = Float64Array.from({ length: n }, () => 3 * (random.next() - 0.5));
      const coefficients = Float64Array.from({ length: k * m }, () => 2 * random.next() - 1);
      const tau = Float64Array.from({ length: n * k }, () => random.next());
      const constant = Float64Array.from({ length: k }, () => -random.next());
      const variances = Float64Array.from({ length: k }, () => 0.05 + random.next());
      const outputs: string[] = [];
      for (const allowed of [false, true]) {
        allowRowKernels(allowed);
        const squares = new Float64Array(n * k);
        const rss = new Float64Array(k).fill(7);
        squaredResidualSums(rows, n, m, y, coefficients, k, tau, squares, rss);
        const memberships = new Float64Array(n * k);
        const total = squareMemberships(squares, n, k, constant, variances, memberships);
        const sizes = new Float64Array(k);
        columnSums(memberships, n, k, sizes);
        outputs.push([squares, rss, memberships, Float64Array.of(total), sizes].map(bits).join(" "));
      }
      allowRowKernels(true);
      expect(outputs[1]).toBe(outputs[0]);
    }
  });

  it("projects rows onto vectors and whitens rows as the JavaScript paths do (all rows and a list of rows; p = 1 to 53)", () => {
    const random = createRandom(75);
    for (const [p, k, n] of [[1, 1, 10], [3, 2, 5000], [7, 5, 300], [50, 14, 3001], [53, 3, 40]]) {
      const x = Float64Array.from({ length: n * p }, () => random.next() * 4 - 2);
      const vectors = Array.from({ length: k }, () => Float64Array.from({ length: p }, () => random.next() - 0.5));
      const rows = Int32Array.from({ length: Math.ceil(n / 3) }, (_, t) => (t * 7) % n);
      const mean = Float64Array.from({ length: p }, () => random.next());
      // A lower factor with a positive diagonal.
      const lower = new Float64Array(p * p);
      for (let a = 0; a < p; a++) for (let l = 0; l <= a; l++) lower[a * p + l] = l === a ? 0.5 + random.next() : random.next() - 0.5;
      const outputs: string[] = [];
      for (const allowed of [false, true]) {
        allowRowKernels(allowed);
        const all = new Float64Array(n * k);
        rowProducts(x, n, p, null, vectors, all);
        const listed = new Float64Array(rows.length * k);
        rowProducts(x, n, p, rows, vectors, listed);
        const whitened = new Float64Array(n * p);
        whitenRows(x, n, p, mean, lower, whitened);
        const sums = new Float64Array(p);
        columnSums(x, n, p, sums);
        outputs.push([all, listed, whitened, sums].map(bits).join(" "));
      }
      allowRowKernels(true);
      expect(outputs[1]).toBe(outputs[0]);
    }
  });

  it("never changes a fit, its standard errors or a scan: the same to the bit either way", () => {
    const noiseless = noiselessProblem(20, 4, 8, createRandom(5));
    const noisy = noisyProblem(6, 3, 40, createRandom(6));
    const prints: string[] = [];
    for (const allowed of [false, true]) {
      allowRowKernels(allowed);
      const exact = fitMixture(noiseless.data, { k: 4, intercept: false, seed: 2 });
      const fit = fitMixture(noisy.data, { k: 3, intercept: true, seed: 2 });
      const scan = scanComponents(noisy.data, { kMax: 4, seed: 3 });
      const withBackground = fitMixture(noisy.data, { k: 3, intercept: true, seed: 2, background: true });
      prints.push(fingerprint([exact.components, exact.logLikelihood, fit.components, fit.logLikelihood, fit.memberships, standardErrors(noisy.data, fit), scan.rows, withBackground]));
    }
    allowRowKernels(true);
    expect(prints[1]).toBe(prints[0]);
  });

  it("is the assembly of rowKernels.wat (run `npm run build:wasm` after editing it)", async () => {
    const bytes: Uint8Array = await assembleModule("rowKernels.wat");
    expect(Buffer.from(bytes).toString("base64")).toBe(ROW_KERNELS_WASM_BASE64);
  });
});
