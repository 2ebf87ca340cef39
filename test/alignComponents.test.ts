import { describe, expect, it } from "vitest";
import { fitMixture } from "../src/engine/fitMixture";
import { alignToPrevious, canonicalOrder, permuteComponents, refitFrom, solveAssignment } from "../src/engine/alignComponents";
import { createRandom } from "../src/engine/random";
import { wellSeparatedProblem } from "../src/synthetic/generateProblems";
import { computeMemberships } from "../src/engine/computeMemberships";
import { dataMatrix } from "../src/engine/regressionMatrix";
import type { MixtureFit, RegressionData } from "../src/engine/mixtureTypes";

function mostProbable(fit: MixtureFit, data: RegressionData): Int32Array {
  const { matrix, q } = dataMatrix(data, fit.intercept);
  const { memberships } = computeMemberships(fit, matrix, q, data.y, data.x, data.n);
  const labels = new Int32Array(data.n);
  for (let i = 0; i < data.n; i++) {
    for (let c = 1; c < fit.k; c++) if (memberships[i * fit.k + c] > memberships[i * fit.k + labels[i]]) labels[i] = c;
  }
  return labels;
}

describe("optimal assignment", () => {
  it("finds the minimum-cost matching of a 4 x 4 matrix (checked by enumerating all 24 permutations in the test)", () => {
    const cost = Float64Array.from([9, 2, 7, 8, 6, 4, 3, 7, 5, 8, 1, 8, 7, 6, 9, 4]);
    const k = 4;
    const rowOfColumn = solveAssignment(cost, k);
    const total = (assignment: ArrayLike<number>) => Array.from(assignment).reduce((s, row, column) => s + cost[row * k + column], 0);
    let best = Infinity;
    const permute = (prefix: number[]): void => {
      if (prefix.length === k) {
        best = Math.min(best, total(prefix));
        return;
      }
      for (let r = 0; r < k; r++) if (!prefix.includes(r)) permute([...prefix, r]);
    };
    permute([]);
    expect(new Set(rowOfColumn).size).toBe(k);
    expect(total(rowOfColumn)).toBe(best);
  });
});

describe("stable component numbering", () => {
  // Invented demo data (wellSeparatedProblem): three well-separated components.
  const random = createRandom(21);
  const problem = wellSeparatedProblem(3, random, 40);
  const fit = fitMixture(problem.data, { k: 3, seed: 2 });

  it("canonical order is by decreasing weight (the rule stated in alignComponents.ts)", () => {
    const ordered = permuteComponents(fit, canonicalOrder(fit));
    for (let c = 1; c < 3; c++) expect(ordered.components[c - 1].weight).toBeGreaterThanOrEqual(ordered.components[c].weight);
  });

  it("a shuffled fit is matched back to the original numbering, memberships and labels included", () => {
    const shuffled = permuteComponents(fit, [2, 0, 1]);
    const aligned = alignToPrevious(shuffled, fit, problem.data);
    for (let c = 0; c < 3; c++) expect(aligned.components[c]).toBe(fit.components[c]);
    expect(Array.from(aligned.labels)).toEqual(Array.from(fit.labels));
    expect(Array.from(aligned.memberships)).toEqual(Array.from(fit.memberships));
  });

  it("after a small data change the refit keeps component numbering", () => {
    // Change: drop the first 5% of rows and perturb y of another 5% by a tenth of a noise SD.
    const { n, p } = problem.data;
    const drop = Math.floor(0.05 * n);
    const y = problem.data.y.slice(drop);
    for (let i = 0; i < drop; i++) y[i] += 0.05;
    const changed = { y, x: problem.data.x.slice(drop * p), n: n - drop, p };
    // Start the previous fit from a deliberately non-canonical numbering, so keeping it is
    // the refit's work and not an accident of the canonical order.
    const previous = permuteComponents(fit, [1, 2, 0]);
    const refit = refitFrom(changed, { k: 3, seed: 9 }, previous);
    for (let c = 0; c < 3; c++) {
      const before = previous.components[c].coefficients;
      const after = refit.components[c].coefficients;
      for (let j = 0; j < before.length; j++) expect(Math.abs(after[j] - before[j])).toBeLessThan(0.2);
    }
    // The most probable component of each kept row, from each fit's own parameters, stays the
    // same for nearly all rows (all but those near a crossing of two lines).
    const before = mostProbable(previous, problem.data);
    const after = mostProbable(refit, changed);
    let same = 0;
    for (let i = 0; i < changed.n; i++) if (after[i] === before[i + drop]) same++;
    expect(same / changed.n).toBeGreaterThan(0.95);
  });
});
