import { describe, expect, it } from "vitest";
import { spawnSync } from "child_process";
import * as path from "path";
import { solveAssignment } from "../src/engine/solveAssignment";
import { coefficientDistance } from "../src/engine/mixture/compareFits";

const root = path.resolve(__dirname, "..");

/**
 * Runs `code` (CommonJS that may require the repository's .ts files) in its own Node process
 * with a time limit and returns what it printed, or null when it ran out of time. A loop
 * that never ends then fails its test instead of holding the whole test run.
 */
function printedWithin(seconds: number, code: string): string | null {
  const child = spawnSync(process.execPath, ["--import", "tsx", "-e", code], { cwd: root, timeout: seconds * 1000, encoding: "utf8" });
  if (child.error || child.status !== 0) {
    if (child.signal === "SIGTERM") return null;
    throw new Error(`child failed: ${child.stderr}`);
  }
  return child.stdout;
}

describe("optimal assignment with costs that are not finite numbers", () => {
  it("ends, and returns a permutation that avoids the non-finite costs when it can", () => {
    // Hand-made costs. Before, a NaN or Infinity reduced cost left no nearest column and the
    // augmenting search went round forever (this check then ran out of time).
    const printed = printedWithin(
      60,
      `const { solveAssignment } = require("./src/engine/solveAssignment.ts");
       const cases = [
         [[Infinity, 5, Infinity, Infinity, Infinity, 7, 2, Infinity, Infinity], 3],
         [[NaN, NaN, NaN, NaN], 2],
         [[Infinity, NaN, 1, -Infinity, Infinity, 1e300, 2, NaN, 0], 3],
         [[1e308, 1.7e308, 1.7e308, 1e308], 2],
       ];
       console.log(JSON.stringify(cases.map(([cost, k]) => Array.from(solveAssignment(Float64Array.from(cost), k)))));`,
    );
    expect(printed, "the assignment did not finish within 60 s").not.toBeNull();
    const [avoiding, allNaN, mixed, huge] = JSON.parse(printed!) as number[][];
    // Only one assignment uses finite costs: column 0 <- row 2, column 1 <- row 0, column 2 <- row 1.
    expect(avoiding).toEqual([2, 0, 1]);
    for (const assignment of [allNaN, mixed]) expect(new Set(assignment).size).toBe(assignment.length);
    // Finite costs near the top of the double range: the diagonal (2e308 in total) is cheaper.
    expect(huge).toEqual([0, 1]);
  });

  it("ordinary costs give the same matching as before (the finite path is unchanged)", () => {
    const cost = Float64Array.from([4, 1, 3, 2, 0, 5, 3, 2, 2]);
    // Enumerated by hand: rows for columns (1, 0, 2) cost 1 + 2 + 2 = 5, the least of the six.
    expect(Array.from(solveAssignment(cost, 3))).toEqual([1, 0, 2]);
  });
});

describe("comparing two fits whose coefficients are near 1e155", () => {
  it("gives a finite relative distance: squares of such coefficients overflow when taken directly", () => {
    // Invented parameters: the same two components in swapped order, coefficients of size 1e155.
    const a = { k: 2, q: 2, coefficients: Float64Array.from([3e155, -2e155, 1e155, 4e155]) };
    const b = { k: 2, q: 2, coefficients: Float64Array.from([1e155, 4.04e155, 3e155, -2e155]) };
    const distance = coefficientDistance(a as never, b as never);
    // Matched by the swap, the largest difference is 0.04e155 against a largest norm of sqrt(17)e155.
    expect(distance).toBeCloseTo(0.04 / Math.sqrt(1 + 4.04 ** 2), 6);
  });
});

describe("the worksheet table that made the fit loop forever", () => {
  it("fits within the time limit and spills finite numbers", () => {
    // Found by the worksheet property test (fast-check, seed 99): y of every size from 1e-305
    // to 5e253, x a column of numbers from 1e-298 to 1e-16 and a category column A/B/C, K = 2.
    // Two starts' coefficients near 1e155 made the matching's costs Infinity and NaN.
    const printed = printedWithin(
      90,
      `globalThis.CustomFunctions = { Error: class { constructor(code, message) { this.code = code; this.message = message; } }, ErrorCode: { invalidValue: "#VALUE!", notAvailable: "#N/A", invalidNumber: "#NUM!" } };
       const { fit } = require("./src/functions/functions.ts");
       const y = ${JSON.stringify(LOOPED_Y)};
       const b = ${JSON.stringify(LOOPED_X)};
       const groups = "${LOOPED_GROUPS}";
       fit(y.map((v) => [v]), b.map((v, i) => [v, groups[i]]), 2).then(
         (table) => console.log(JSON.stringify({ table })),
         (error) => console.log(JSON.stringify({ error: error.code + " " + (error.message ?? "") })),
       );`,
    );
    expect(printed, "the fit did not finish within 90 s").not.toBeNull();
    const answer = JSON.parse(printed!) as { table?: unknown[][]; error?: string };
    if (answer.table) {
      for (const row of answer.table) for (const value of row) if (typeof value === "number") expect(Number.isFinite(value)).toBe(true);
    } else {
      expect(answer.error).toMatch(/^#(VALUE|NUM)!/);
    }
  }, 120_000);
});

const LOOPED_Y = [
  -1.355135161633801e116, -9.704960643591175e-199, 2.574061797464731e-181, -7.721738383127853e-141, -2.6778481116847144e-201, 5.4549939087786e-185, 2.6262147541951724e-56,
  4.3586098528497133e-305, -6.327698622061087e-283, -2.779159629220219e-43, 4.2946404636885165e-54, 2.993145842133461e-69, 2.561994342505612e-167, 2.0616597908357216e-145,
  -2.468172046012748e78, -4.264361482129004e-303, 2.0883122799537524e-267, -2.4772596932287883e-280, -2.7698860581243716e-73, 3.808570361452906e-234, -4.91677016018046e253,
  1.9714198897814308e-150, 8.329452408236093e-224,
];
const LOOPED_X = [
  -6.255001391409592e-141, 3.616097194833638e-163, -3.560962701507611e-133, -7.951068358744959e-211, 7.90375629376303e-111, 1.4155542179860837e-101, -9.709187639220131e-241,
  1.266719475186969e-16, 9.994564156945145e-255, 5.842843520091683e-119, -1.7171827628325773e-260, 5.692733709985054e-228, 1.3927232050551893e-182, 3.42508718252453e-278,
  -6.127148528386538e-57, -3.1701585529480026e-220, 3.949671810240811e-184, 2.2472951395779728e-77, 1.0917592113924487e-189, -7.176184563791879e-79, 3.578296948065927e-105,
  -2.8703706642280122e-201, -1.824136657172645e-298,
];
const LOOPED_GROUPS = "BCBCACCAABACCCABBBCCAAC";
