import { describe, expect, it } from "vitest";
import { createRandom, sampleIndices, shuffleInPlace } from "../src/engine/random";

describe("seeded generator", () => {
  it("reproduces the same stream from the same seed and a different one from another seed", () => {
    const a = createRandom(42);
    const b = createRandom(42);
    const c = createRandom(43);
    const streamA = Array.from({ length: 100 }, () => a.next());
    const streamB = Array.from({ length: 100 }, () => b.next());
    const streamC = Array.from({ length: 100 }, () => c.next());
    expect(streamB).toEqual(streamA);
    expect(streamC).not.toEqual(streamA);
  });

  it("gives uniforms in [0, 1) with mean 1/2 and variance 1/12 within 5 standard errors", () => {
    // Expected moments of U(0, 1): mean 1/2, variance 1/12; standard errors by the central
    // limit theorem (common practice for generator smoke tests).
    const random = createRandom(7);
    const n = 100000;
    let sum = 0;
    let sumSquares = 0;
    let outside = 0;
    for (let i = 0; i < n; i++) {
      const u = random.next();
      if (!(u >= 0 && u < 1)) outside++;
      sum += u;
      sumSquares += u * u;
    }
    expect(outside).toBe(0);
    const mean = sum / n;
    const variance = sumSquares / n - mean * mean;
    expect(Math.abs(mean - 0.5)).toBeLessThan(5 * Math.sqrt(1 / 12 / n));
    // SD of a sample variance ≈ √((μ₄ − σ⁴)/n), with μ₄ = 1/80 and σ⁴ = 1/144 for U(0, 1).
    expect(Math.abs(variance - 1 / 12)).toBeLessThan(5 * Math.sqrt((1 / 80 - 1 / 144) / n));
  });

  it("gives standard normals: mean 0 and variance 1 within 5 standard errors, 0.27% beyond ±3", () => {
    // N(0, 1): SE of the mean 1/√n, SE of the variance √(2/n); P(|Z| > 3) = 0.0027 (standard normal table).
    const random = createRandom(11);
    const n = 100000;
    let sum = 0;
    let sumSquares = 0;
    let tails = 0;
    for (let i = 0; i < n; i++) {
      const z = random.normal();
      sum += z;
      sumSquares += z * z;
      if (Math.abs(z) > 3) tails++;
    }
    expect(Math.abs(sum / n)).toBeLessThan(5 / Math.sqrt(n));
    expect(Math.abs(sumSquares / n - 1)).toBeLessThan(5 * Math.sqrt(2 / n));
    const expectedTails = 0.0027 * n;
    expect(Math.abs(tails - expectedTails)).toBeLessThan(5 * Math.sqrt(expectedTails));
  });

  it("gives integers below the bound, spread evenly (chi-square below the 99.9% point)", () => {
    // 10 bins, 9 degrees of freedom: the 99.9% point of χ²₉ is 27.88 (standard χ² table).
    const random = createRandom(3);
    const counts = new Array(10).fill(0);
    const n = 50000;
    for (let i = 0; i < n; i++) {
      counts[random.integer(10)]++;
    }
    const expected = n / 10;
    expect(counts.reduce((s, c) => s + c, 0)).toBe(n);
    const chiSquare = counts.reduce((s, c) => s + (c - expected) ** 2 / expected, 0);
    expect(chiSquare).toBeLessThan(27.88);
    expect(() => random.integer(0)).toThrow();
    expect(() => random.integer(2.5)).toThrow();
  });

  it("shuffles into a permutation and samples sorted distinct indices", () => {
    const random = createRandom(5);
    const values = Int32Array.from({ length: 50 }, (_, i) => i);
    shuffleInPlace(values, random);
    expect([...values].sort((a, b) => a - b)).toEqual(Array.from({ length: 50 }, (_, i) => i));
    expect([...values]).not.toEqual(Array.from({ length: 50 }, (_, i) => i));
    const sample = sampleIndices(1000, 100, random);
    expect(sample.length).toBe(100);
    for (let i = 1; i < sample.length; i++) expect(sample[i]).toBeGreaterThan(sample[i - 1]);
    expect(sample[sample.length - 1]).toBeLessThan(1000);
  });
});
