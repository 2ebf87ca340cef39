import { describe, expect, it } from "vitest";
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { fitMixture } from "../src/engine/fitMixture";
import { standardErrors } from "../src/engine/standardErrors";
import { leastSquares } from "../src/engine/leastSquares";
import { createRandom } from "../src/engine/random";

const fixtures = join(__dirname, "fixtures");

function relativeError(actual: number, expected: number): number {
  return Math.abs(actual - expected) / Math.abs(expected);
}

describe("observed-information standard errors with K = 1 (NIST StRD Longley)", () => {
  // Source: NIST Statistical Reference Datasets, linear least squares, "Longley" (certified
  // standard errors use the unbiased σ² = RSS/(n − q)).
  const lines = readFileSync(join(fixtures, "longley.csv"), "utf8").trim().split(/\r?\n/).slice(1);
  const table = lines.map((line) => line.split(",").map(Number));
  const certified = JSON.parse(readFileSync(join(fixtures, "longley-certified.json"), "utf8"));
  const n = table.length;
  const p = 6;
  const q = p + 1;
  const data = { y: Float64Array.from(table.map((r) => r[1])), x: Float64Array.from(table.flatMap((r) => r.slice(2))), n, p };
  const fit = fitMixture(data, { k: 1 });
  const report = standardErrors(data, fit);
  const names = ["b0", "b1", "b2", "b3", "b4", "b5", "b6"];

  it.each(names.map((name, j) => [name, j] as const))("%s: observed-information SE = certified SE × sqrt((n − q)/n)", (name, j) => {
    // Derivation: with one component the information for β is XᵀX/σ̂² at the ML σ̂² = RSS/n,
    // so SE = sqrt(RSS/n) sqrt(diag (XᵀX)⁻¹) = certified SE × sqrt((n − q)/n). The information
    // matrix is formed from XᵀX, whose condition squares Longley's, so 6 significant digits
    // are what double precision leaves (the QR solve reaches 9).
    const expected = certified.certified[name].stdError * Math.sqrt((n - q) / n);
    expect(relativeError(report.coefficients[0][j], expected)).toBeLessThan(1e-6);
  });

  it("SE of σ is σ̂/sqrt(2n) and the single weight has SE 0 (derivation: I(σ²) = n/(2σ⁴), delta method)", () => {
    const sigma = fit.components[0].sigma;
    expect(relativeError(report.sigmas[0], sigma / Math.sqrt(2 * n))).toBeLessThan(1e-8);
    expect(report.weights[0]).toBe(0);
    expect(report.method).toBe("observed-information");
  });
});

describe("observed-information standard errors for well-separated components", () => {
  // Invented demo data: two regressions with parallel slopes and intercepts 12 noise SDs apart,
  // so every row is at least ~6 noise SDs from the other line (regressions that cross leave
  // rows near the crossing whose labels stay uncertain however large the average gap).
  // When memberships are all near 0/1 the missing labels carry no information, so the SEs
  // approach the least-squares SEs computed with the true labels (Louis 1982: the
  // missing-information term vanishes as memberships become certain).
  const random = createRandom(11);
  const n = 600;
  const p = 2;
  const truth = [
    { weight: 0.35, sigma: 0.5, beta: [1, 2, -1] },
    { weight: 0.65, sigma: 1, beta: [1 + 9, 2, -1] },
  ];
  const x = new Float64Array(n * p);
  const y = new Float64Array(n);
  const labels = new Int32Array(n);
  for (let i = 0; i < n; i++) {
    const c = random.next() < truth[0].weight ? 0 : 1;
    labels[i] = c;
    x[i * p] = random.normal();
    x[i * p + 1] = random.normal();
    const b = truth[c].beta;
    y[i] = b[0] + b[1] * x[i * p] + b[2] * x[i * p + 1] + truth[c].sigma * random.normal();
  }
  const problem = { data: { x, y, n, p }, labels };
  const fit = fitMixture(problem.data, { k: 2, seed: 3 });
  const report = standardErrors(problem.data, fit);

  it("each coefficient SE is within 5% of the true-label least-squares SE", () => {
    const q = p + 1;
    for (let c = 0; c < 2; c++) {
      // Component numbering of the fit: the one with the larger intercept is true component 1.
      const other = fit.components[1 - c].coefficients[0];
      const trueComponent = fit.components[c].coefficients[0] > other ? 1 : 0;
      const rows: number[] = [];
      for (let i = 0; i < n; i++) if (problem.labels[i] === trueComponent) rows.push(i);
      const design = new Float64Array(rows.length * q);
      const yc = new Float64Array(rows.length);
      rows.forEach((row, t) => {
        design[t * q] = 1;
        for (let j = 0; j < p; j++) design[t * q + 1 + j] = x[row * p + j];
        yc[t] = y[row];
      });
      const oracle = leastSquares(design, rows.length, q, yc, { intercept: true });
      for (let j = 0; j < q; j++) {
        // The residual-SD divisor differs (n_k vs n_k − q): under 1% at these sizes.
        expect(relativeError(report.coefficients[c][j], oracle.stdErrors[j])).toBeLessThan(0.05);
      }
    }
  });

  it("weight SEs are near the binomial sqrt(π(1 − π)/n) (derivation: labels nearly known) and equal for both weights", () => {
    const pi = fit.components[0].weight;
    const binomial = Math.sqrt((pi * (1 - pi)) / problem.data.n);
    expect(relativeError(report.weights[0], binomial)).toBeLessThan(0.1);
    expect(relativeError(report.weights[1], report.weights[0])).toBeLessThan(1e-9);
  });

  it("the bootstrap, with labels aligned in each replicate, gives SEs of the same size", () => {
    const boot = standardErrors(problem.data, fit, { method: "bootstrap", replicates: 20, seed: 5 });
    expect(boot.method).toBe("bootstrap");
    expect(boot.replicates).toBe(20);
    for (let c = 0; c < 2; c++) {
      for (let j = 0; j < p + 1; j++) {
        // 20 replicates: a bootstrap SD is within about ±32% (2/sqrt(2·20)) of its limit; if labels
        // were not aligned the spread would be of the size of the coefficient gap instead.
        const ratio = boot.coefficients[c][j] / report.coefficients[c][j];
        expect(ratio).toBeGreaterThan(0.55);
        expect(ratio).toBeLessThan(1.6);
      }
    }
  });
});

describe("standard errors of an exact fit (noise about 0)", () => {
  it("are 0 for coefficients and noise SDs, sqrt(w(1 − w)/n) for weights, with no warning", () => {
    // Invented noiseless data: two lines, y = 1 + 2x on 30 rows and y = 8 − 1.5x on 20 rows.
    const random = createRandom(11);
    const n = 50;
    const x = Float64Array.from({ length: n }, () => 10 * random.next());
    const y = Float64Array.from(x, (value, i) => (i < 30 ? 1 + 2 * value : 8 - 1.5 * value));
    const data = { y, x, n, p: 1 };
    const fit = fitMixture(data, { k: 2, seed: 3 });
    const report = standardErrors(data, fit);
    expect(report.method).toBe("exact-fit");
    expect(report.warnings).toEqual([]);
    for (let c = 0; c < 2; c++) {
      expect(Array.from(report.coefficients[c])).toEqual([0, 0]);
      expect(report.sigmas[c]).toBe(0);
      const w = fit.components[c].weight;
      // Binomial standard error of a share of known labels (derivation in standardErrors.ts).
      expect(report.weights[c]).toBeCloseTo(Math.sqrt((w * (1 - w)) / n), 12);
    }
  });
});
