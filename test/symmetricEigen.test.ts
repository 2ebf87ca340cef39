import { describe, expect, it } from "vitest";
import { EigenvalueDecomposition, Matrix } from "ml-matrix";
import { symmetricEigen } from "../src/engine/symmetricEigen";
import { topEigenvectors } from "../src/engine/warmStart/topEigenvectors";
import { createRandom } from "../src/engine/random";

/** A symmetric n x n matrix (row-major) of the given kind; invented test data. */
function symmetricMatrix(n: number, kind: "gram" | "indefinite" | "lowRank" | "zeroRows" | "diagonal", seed: number): Float64Array {
  const random = createRandom(seed);
  const a = new Float64Array(n * n);
  if (kind === "diagonal") {
    // Repeated values on purpose: ties in the sort.
    for (let i = 0; i < n; i++) a[i * n + i] = Math.floor(3 * random.next()) - 1;
    return a;
  }
  const rank = kind === "lowRank" ? Math.max(1, n >> 2) : n + 3;
  const factor = Array.from({ length: rank }, () => Float64Array.from({ length: n }, () => random.normal()));
  for (let r = 0; r < rank; r++) {
    const sign = kind === "indefinite" && r % 3 === 0 ? -1 : 1;
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) a[i * n + j] += sign * factor[r][i] * factor[r][j];
  }
  if (kind === "zeroRows") {
    // Rows and columns of zeros: the reduction's scale = 0 branch.
    for (const z of [0, n >> 1, n - 1]) for (let t = 0; t < n; t++) a[z * n + t] = a[t * n + z] = 0;
  }
  return a;
}

describe("symmetric eigensolver on flat arrays", () => {
  const kinds = ["gram", "indefinite", "lowRank", "zeroRows", "diagonal"] as const;
  it.each([1, 2, 3, 7, 20, 50])("gives ml-matrix's eigenvalues and eigenvectors to the bit at n = %i", (n) => {
    // Reference: ml-matrix's EigenvalueDecomposition (a general-purpose library; the same
    // tred2/tql2 steps on a matrix object), on each kind of matrix.
    for (const kind of kinds) {
      const a = symmetricMatrix(n, kind, 100 + n);
      const rows = Array.from({ length: n }, (_, i) => Array.from(a.subarray(i * n, i * n + n)));
      const reference = new EigenvalueDecomposition(new Matrix(rows), { assumeSymmetric: true });
      const ours = symmetricEigen(a, n);
      expect(Array.from(ours.values), `${kind} values`).toEqual(reference.realEigenvalues);
      const vectors = reference.eigenvectorMatrix;
      for (let t = 0; t < n; t++) {
        for (let j = 0; j < n; j++) expect(Object.is(ours.vectors[t * n + j], vectors.get(j, t)), `${kind} vector ${t} entry ${j}`).toBe(true);
      }
    }
  });

  it("finds the second-difference matrix's eigenvalues 2 − 2cos(jπ/(n + 1)) with orthonormal vectors", () => {
    // Reference: the closed form for the tridiagonal matrix with 2 on the diagonal and −1 beside
    // it (a textbook result, e.g. Strang, Introduction to Applied Mathematics, 1986, §1.5).
    const n = 30;
    const a = new Float64Array(n * n);
    for (let i = 0; i < n; i++) {
      a[i * n + i] = 2;
      if (i + 1 < n) a[i * n + i + 1] = a[(i + 1) * n + i] = -1;
    }
    const { values, vectors } = symmetricEigen(a, n);
    for (let j = 1; j <= n; j++) expect(values[j - 1]).toBeCloseTo(2 - 2 * Math.cos((j * Math.PI) / (n + 1)), 12);
    for (let s = 0; s < n; s++) {
      for (let t = 0; t < n; t++) {
        let product = 0;
        for (let i = 0; i < n; i++) product += vectors[s * n + i] * vectors[t * n + i];
        expect(product).toBeCloseTo(s === t ? 1 : 0, 12);
      }
      // A v = λ v, row by row.
      for (let i = 0; i < n; i++) {
        let av = 0;
        for (let j = 0; j < n; j++) av += a[i * n + j] * vectors[s * n + j];
        expect(av).toBeCloseTo(values[s] * vectors[s * n + i], 12);
      }
    }
  });

  it("leaves its input as it was", () => {
    const a = symmetricMatrix(9, "gram", 3);
    const copy = a.slice();
    symmetricEigen(a, 9);
    expect(a).toEqual(copy);
  });

  it("gives the warm start's leading pairs largest first, by value and by magnitude", () => {
    // diag(1, −5, 3): by value 3, 1; by magnitude −5, 3.
    const a = new Float64Array([1, 0, 0, 0, -5, 0, 0, 0, 3]);
    const byValue = topEigenvectors(a, 3, 2, false);
    expect(byValue.values).toEqual([3, 1]);
    expect(Array.from(byValue.vectors[0]).map(Math.abs)).toEqual([0, 0, 1]);
    const byMagnitude = topEigenvectors(a, 3, 2, true);
    expect(byMagnitude.values).toEqual([-5, 3]);
    expect(Array.from(byMagnitude.vectors[0]).map(Math.abs)).toEqual([0, 1, 0]);
  });
});
