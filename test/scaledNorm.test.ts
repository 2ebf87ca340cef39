import { describe, expect, it } from "vitest";
import { euclideanNorm, largestMagnitude } from "../src/engine/scaledNorm";

describe("scaled norm kernel", () => {
  // Expected values: the 3-4-5 right triangle (Pythagoras), scaled by powers of ten whose
  // squares leave the double range (beyond about 1.8e308, below about 4.9e-324).
  it("gives 5 for (3, 4) at ordinary, huge and tiny sizes", () => {
    for (const unit of [1, 1e200, 1e-200]) {
      const norm = euclideanNorm(Float64Array.of(3 * unit, 4 * unit), 2);
      expect(norm / unit).toBeCloseTo(5, 12);
    }
  });
  it("reads a strided column from its offset", () => {
    // Row-major 3 x 2: column 1 holds 4, 4, 2 (norm sqrt(16 + 16 + 4) = 6); column 0 is ignored.
    const values = Float64Array.of(100, 4, -100, -4, 100, 2);
    expect(euclideanNorm(values, 3, 2, 1)).toBeCloseTo(6, 12);
    expect(largestMagnitude(values, 3, 2, 1)).toBe(4);
  });
  it("gives NaN when a value is NaN, 0 for zeros and Infinity for an infinite value", () => {
    expect(euclideanNorm(Float64Array.of(1, NaN, 2), 3)).toBeNaN();
    expect(largestMagnitude(Float64Array.of(5, NaN), 2)).toBeNaN();
    expect(euclideanNorm(new Float64Array(4), 4)).toBe(0);
    expect(euclideanNorm(Float64Array.of(1, -Infinity), 2)).toBe(Infinity);
  });
});
