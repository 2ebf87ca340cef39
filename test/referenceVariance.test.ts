import { describe, expect, it } from "vitest";
import { referenceSpread, referenceVariance } from "../src/engine/referenceVariance";
import { createRandom } from "../src/engine/random";

/** Invented: n standard normal values (seeded). */
function normals(n: number, seed: number): Float64Array {
  const random = createRandom(seed);
  return Float64Array.from({ length: n }, () => random.normal());
}

/** Two-pass variance, written out here as the reference. */
function plainVariance(values: Float64Array): number {
  const mean = values.reduce((s, v) => s + v, 0) / values.length;
  return values.reduce((s, v) => s + (v - mean) ** 2, 0) / values.length;
}

describe("the reference variance of y", () => {
  it("is the plain variance for ordinary data, bit for bit, small or large", () => {
    for (const n of [50, 20_000]) {
      const values = normals(n, 3);
      expect(referenceVariance(values, n)).toBe(plainVariance(values));
    }
  });

  it("is the robust variance when a few huge values dominate, also when the MAD is taken over a sample of the rows", () => {
    for (const n of [300, 20_000]) {
      const values = normals(n, 5);
      // Five invented typing slips of 1e10 among standard normal values.
      for (let t = 0; t < 5; t++) values[(t * 997) % n] = 1e10;
      // (1.4826 MAD)² of standard normal values is about 1 (Hampel 1974); the plain variance is about 5e20 / n.
      const reference = referenceVariance(values, n);
      expect(reference).toBeGreaterThan(0.8);
      expect(reference).toBeLessThan(1.25);
    }
  });

  it("gives a finite spread for values near 1e300, whose squares overflow", () => {
    const values = Float64Array.from(normals(100, 7), (v) => 1e300 * (3 + v));
    const spread = referenceSpread(values, 100);
    expect(Number.isFinite(spread)).toBe(true);
    expect(spread / 1e300).toBeCloseTo(Math.sqrt(plainVariance(Float64Array.from(values, (v) => v / 1e300))), 10);
  });
});
