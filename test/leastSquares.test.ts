import { describe, expect, it } from "vitest";
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { leastSquares } from "../src/engine/leastSquares";
import { SkeinError } from "../src/engine/errors";

const fixtures = join(__dirname, "fixtures");

function significantDigits(actual: number, expected: number): number {
  if (actual === expected) return 17;
  return -Math.log10(Math.abs(actual - expected) / Math.abs(expected));
}

function designWithIntercept(rows: number[][]): { x: Float64Array; n: number; q: number } {
  const n = rows.length;
  const q = rows[0].length + 1;
  const x = new Float64Array(n * q);
  rows.forEach((row, i) => {
    x[i * q] = 1;
    row.forEach((value, j) => (x[i * q + 1 + j] = value));
  });
  return { x, n, q };
}

describe("least squares against NIST StRD Longley (higher difficulty)", () => {
  // Source: NIST Statistical Reference Datasets, linear least squares, "Longley";
  // data and certified values copied into test/fixtures (test/fixtures/longley-certified.json).
  const lines = readFileSync(join(fixtures, "longley.csv"), "utf8").trim().split(/\r?\n/).slice(1);
  const table = lines.map((line) => line.split(",").map(Number));
  const certified = JSON.parse(readFileSync(join(fixtures, "longley-certified.json"), "utf8"));
  const { x, n, q } = designWithIntercept(table.map((row) => row.slice(2)));
  const y = Float64Array.from(table.map((row) => row[1]));
  const fit = leastSquares(x, n, q, y, { intercept: true });
  const names = ["b0", "b1", "b2", "b3", "b4", "b5", "b6"];

  it.each(names.map((name, j) => [name, j] as const))("certified estimate and standard error of %s to 9+ significant digits", (name, j) => {
    expect(significantDigits(fit.coefficients[j], certified.certified[name].estimate)).toBeGreaterThanOrEqual(9);
    expect(significantDigits(fit.stdErrors[j], certified.certified[name].stdError)).toBeGreaterThanOrEqual(9);
  });

  it("certified residual SD, R² and residual sum of squares", () => {
    expect(significantDigits(fit.residualSD, certified.residualStandardDeviation)).toBeGreaterThanOrEqual(9);
    expect(significantDigits(fit.rSquared, certified.rSquared)).toBeGreaterThanOrEqual(9);
    expect(significantDigits(fit.rss, certified.residualSumOfSquares)).toBeGreaterThanOrEqual(9);
    expect(fit.rank).toBe(7);
  });

  it("log-likelihood equals the Gaussian formula at σ² = RSS/n (common practice)", () => {
    const sigma2 = certified.residualSumOfSquares / n;
    const expected = -0.5 * n * (Math.log(2 * Math.PI * sigma2) + 1);
    expect(fit.logLikelihood).toBeCloseTo(expected, 8);
    expect(fit.mlSigma).toBeCloseTo(Math.sqrt(sigma2), 8);
  });
});

describe("least squares against Anscombe (1973)", () => {
  // Source: Anscombe, F.J. (1973), "Graphs in Statistical Analysis", The American
  // Statistician 27(1):17-21. Every series: y = 3.00 + 0.500 x, standard error of the
  // slope 0.118, R² 0.667, at the precision printed there.
  const rows = readFileSync(join(fixtures, "anscombe.csv"), "utf8").trim().split(/\r?\n/).slice(1).map((line) => line.split(","));
  for (const series of ["I", "II", "III", "IV"]) {
    it(`series ${series}`, () => {
      const picked = rows.filter((row) => row[0] === series);
      expect(picked).toHaveLength(11);
      const { x, n, q } = designWithIntercept(picked.map((row) => [Number(row[1])]));
      const y = Float64Array.from(picked.map((row) => Number(row[2])));
      const fit = leastSquares(x, n, q, y, { intercept: true });
      expect(fit.coefficients[0].toFixed(2)).toBe("3.00");
      expect(fit.coefficients[1].toFixed(3)).toBe("0.500");
      expect(fit.stdErrors[1].toFixed(3)).toBe("0.118");
      // The paper prints one R² (0.667) for all four series; the series' own values
      // run from 0.6662 to 0.6667, so the check allows the paper's last digit ±1.
      expect(Math.abs(fit.rSquared - 0.667)).toBeLessThanOrEqual(0.001);
    });
  }
});

describe("least squares guards and weights", () => {
  it("rejects a design whose columns are dependent, naming the column", () => {
    // Column 3 = 2 × column 2: a derivation in this test.
    const { x, n, q } = designWithIntercept([[1, 2], [2, 4], [3, 6], [4, 8.0000000000000001]]);
    const y = Float64Array.from([1, 2, 3, 5]);
    expect(() => leastSquares(x, n, q, y)).toThrowError(SkeinError);
    expect(() => leastSquares(x, n, q, y)).toThrowError(/column 3/);
  });

  it("integer weights equal repeating rows (derivation: weighted normal equations)", () => {
    const base = [[0.5], [1.5], [2.0], [3.5], [4.0]];
    const yValues = [1.1, 2.9, 4.2, 6.8, 8.3];
    const weights = [1, 3, 1, 2, 1];
    const weighted = designWithIntercept(base);
    const fitWeighted = leastSquares(weighted.x, weighted.n, weighted.q, Float64Array.from(yValues), { weights: Float64Array.from(weights), intercept: true });
    const repeatedRows: number[][] = [];
    const repeatedY: number[] = [];
    base.forEach((row, i) => {
      for (let c = 0; c < weights[i]; c++) {
        repeatedRows.push(row);
        repeatedY.push(yValues[i]);
      }
    });
    const repeated = designWithIntercept(repeatedRows);
    const fitRepeated = leastSquares(repeated.x, repeated.n, repeated.q, Float64Array.from(repeatedY), { intercept: true });
    for (let j = 0; j < 2; j++) {
      expect(fitWeighted.coefficients[j]).toBeCloseTo(fitRepeated.coefficients[j], 12);
      expect(fitWeighted.stdErrors[j]).toBeCloseTo(fitRepeated.stdErrors[j], 12);
    }
    expect(fitWeighted.rss).toBeCloseTo(fitRepeated.rss, 12);
    expect(fitWeighted.logLikelihood).toBeCloseTo(fitRepeated.logLikelihood, 10);
  });

  it("rejects fewer rows than coefficients", () => {
    const { x, n, q } = designWithIntercept([[1, 2], [2, 1]]);
    expect(() => leastSquares(x, n, q, Float64Array.from([1, 2]))).toThrowError(/at least as many rows/);
  });
});

describe("least squares on columns whose squares overflow or underflow a double", () => {
  // Invented: y = 2 + 3·x exactly, with x in units of 1e200 (squares beyond 1e308) and again in
  // units of 1e-200 (squares below the smallest double). The column norms of the QR must be
  // taken in units of the largest entry, or the scaled column is 0 or NaN and the fit fails.
  const base = [1, 2, 3, 4, 5, 6, 7, 8];
  for (const unit of [1e200, 1e-200]) {
    it(`recovers the line with x in units of ${unit}`, () => {
      const { x, n, q } = designWithIntercept(base.map((v) => [v * unit]));
      const y = Float64Array.from(base, (v) => 2 + 3 * v);
      const fit = leastSquares(x, n, q, y, { intercept: true });
      expect(fit.coefficients[0]).toBeCloseTo(2, 10);
      expect(fit.coefficients[1] * unit).toBeCloseTo(3, 10);
    });
  }
});
