import { afterEach, beforeAll, describe, expect, it } from "vitest";
import { createRandom } from "../src/engine/random";
import { partlyExactRows } from "./support/partlyExact";
import { SkeinError } from "../src/engine/errors";
import { check, fit, labels, membership, predict, scan } from "../src/functions/functions";
import { engineCallCounts } from "../src/service/engineRunner";
import { engineService } from "../src/service/engineService";
import { SETTING_NAMES } from "../src/functions/settings";
import { describeFailure, toWorksheetError } from "../src/functions/toWorksheetError";
import { installCustomFunctionsDouble, WorksheetErrorDouble, worksheetError } from "./support/customFunctionsDouble";

/*
 * The worksheet functions called as Excel calls them: ranges as arrays of rows holding
 * numbers, null, "", text and booleans; optional arguments as null; an invocation object with
 * the cell address and an onCanceled slot. Excel's CustomFunctions global does not exist in
 * Node, so a stand-in with the same shape (an Error class with code and message, the ErrorCode
 * strings) is installed here; the product code looks it up when it makes an error.
 */

beforeAll(() => {
  installCustomFunctionsDouble();
});

afterEach(() => {
  engineService.clear();
});

type Range = unknown[][];

/**
 * Invented demo data: two straight lines through a cloud of x in [0, 10], y = 1 + 2x in group
 * 0 and y = 8 − 1.5x in group 1, noise SD 0.3, from the engine's seeded generator. The lines
 * are many noise SDs apart except near their crossing (x = 2), so a fit with k = 2 should find
 * them and put almost every row in its own group.
 */
function twoLines(groupSizes: [number, number], seed = 11, header = true): { y: Range; x: Range; group: number[] } {
  const random = createRandom(seed);
  const y: Range = header ? [["sales"]] : [];
  const x: Range = header ? [["price"]] : [];
  const group: number[] = [];
  groupSizes.forEach((size, g) => {
    for (let i = 0; i < size; i++) {
      const xv = 10 * random.next();
      const line = g === 0 ? 1 + 2 * xv : 8 - 1.5 * xv;
      y.push([line + 0.3 * random.normal()]);
      x.push([xv]);
      group.push(g);
    }
  });
  return { y, x, group };
}


function invocationAt(address: string): { address: string; onCanceled?: () => void } {
  return { address };
}

describe("SKEIN.FIT", () => {
  it("spills one row per component under a header row, and finds the two invented lines", async () => {
    const { y, x } = twoLines([60, 40]);
    const result = await fit(y, x, 2);
    expect(result).toHaveLength(3);
    expect(result[0]).toEqual(["component", "weight (%)", "noise SD", "intercept", "price"]);
    const rows = result.slice(1);
    expect(rows.map((r) => r[0])).toEqual([1, 2]);
    expect(rows.every((r) => r.length === 5)).toBe(true);
    // Weights are percentages.
    expect((rows[0][1] as number) + (rows[1][1] as number)).toBeCloseTo(100, 10);
    // The invented truth: intercepts 1 and 8, slopes 2 and −1.5, noise 0.3 (to within sampling error).
    const bySlope = [...rows].sort((a, b) => (b[4] as number) - (a[4] as number));
    expect(bySlope[0][3]).toBeCloseTo(1, 0);
    expect(bySlope[0][4]).toBeCloseTo(2, 1);
    expect(bySlope[1][3]).toBeCloseTo(8, 0);
    expect(bySlope[1][4]).toBeCloseTo(-1.5, 1);
    for (const row of rows) expect(Math.abs((row[2] as number) - 0.3)).toBeLessThan(0.1);
  });

  it("without k, fits the K the scan suggests (2 for the two invented lines), and CHECK says so", async () => {
    const { y, x } = twoLines([30, 30], 3, false);
    const result = await fit(y, x);
    const scanned = await scan(y, x);
    const suggested = scanned.find((r) => r[7] === true)![0];
    expect(suggested).toBe(2);
    expect(result).toHaveLength(2);
    expect(result).toEqual(await fit(y, x, 2));
    const checks = await check(y, x);
    expect(checks.find((r) => r[0] === "components (K)")![1]).toBe(2);
    expect(checks.some((r) => r[0] === "note" && /the scan suggests \(no k was given\)/.test(String(r[1])))).toBe(true);
    expect((await check(y, x, 2)).some((r) => r[0] === "note" && /no k was given/.test(String(r[1])))).toBe(false);
  });

  it("leaves the intercept column empty with intercept=no, and the header follows headers=no", async () => {
    const { y, x } = twoLines([50, 50], 5);
    const result = await fit(y, x, 2, [["intercept=no; headers=no"]]);
    expect(result).toHaveLength(2);
    expect(result.map((r) => r[3])).toEqual(["", ""]);
  });

  it("adds a header row with headers=yes when the ranges have none", async () => {
    const { y, x } = twoLines([40, 40], 6, false);
    const result = await fit(y, x, 2, [["headers=yes"]]);
    expect(result[0]).toEqual(["component", "weight (%)", "noise SD", "intercept", "x1"]);
    expect(result).toHaveLength(3);
  });
});

describe("per-row results line up with the input rows", () => {
  /** The demo data with messy cells: each makes its row skipped, as the data layer rules. */
  function messy() {
    const data = twoLines([60, 40], 13);
    const skippedRows = [3, 8, 15, 22, 40];
    data.y[3] = [""];
    data.y[8] = [null];
    data.x[15] = ["n/a"];
    data.x[22] = [true];
    data.y[40] = ["#N/A"];
    return { ...data, skippedRows };
  }

  it("LABELS: one value per input row, the header row labelled, skipped rows empty", async () => {
    const { y, x, group, skippedRows } = messy();
    const result = await labels(y, x, 2);
    expect(result).toHaveLength(y.length);
    expect(result[0]).toEqual(["component"]);
    for (const r of skippedRows) expect(result[r]).toEqual([""]);
    // Every other row holds 1 or 2, and the labels split the rows as the invented groups do.
    const agreement = [0, 0];
    for (let r = 1; r < y.length; r++) {
      if (skippedRows.includes(r)) continue;
      const label = result[r][0];
      expect([1, 2]).toContain(label);
      if (label === group[r - 1] + 1) agreement[0]++;
      else agreement[1]++;
    }
    const used = y.length - 1 - skippedRows.length;
    expect(Math.max(...agreement) / used).toBeGreaterThan(0.95);
  });

  it("MEMBERSHIP: one row per input row, k columns summing to 1, skipped rows empty", async () => {
    const { y, x, skippedRows } = messy();
    const result = await membership(y, x, 2);
    expect(result).toHaveLength(y.length);
    expect(result[0]).toEqual(["membership 1", "membership 2"]);
    for (let r = 1; r < y.length; r++) {
      expect(result[r]).toHaveLength(2);
      if (skippedRows.includes(r)) {
        expect(result[r]).toEqual(["", ""]);
      } else {
        const [a, b] = result[r] as number[];
        expect(a + b).toBeCloseTo(1, 12);
      }
    }
  });

  it("headers=no beside a header row starts at the first data row", async () => {
    const { y, x, skippedRows } = messy();
    const result = await labels(y, x, 2, [["headers", "no"]]);
    expect(result).toHaveLength(y.length - 1);
    for (const r of skippedRows) expect(result[r - 1]).toEqual([""]);
  });

  it("LABELS agree with the most probable column of MEMBERSHIP", async () => {
    const { y, x } = messy();
    const [labelRows, membershipRows] = await Promise.all([labels(y, x, 2), membership(y, x, 2)]);
    for (let r = 1; r < y.length; r++) {
      if (labelRows[r][0] === "") continue;
      const [a, b] = membershipRows[r] as number[];
      expect(labelRows[r][0]).toBe(a >= b ? 1 : 2);
    }
  });
});

describe("one fit per data version", () => {
  it("FIT, LABELS, MEMBERSHIP and CHECK recalculated together run one engine fit", async () => {
    const { y, x } = twoLines([60, 40], 17);
    const before = engineCallCounts.fits;
    const settings = [["seed=4"]];
    await Promise.all([
      fit(y, x, 2, settings, invocationAt("Sheet1!D2")),
      labels(y, x, 2, settings, invocationAt("Sheet1!J2")),
      membership(y, x, 2, settings, invocationAt("Sheet1!K2")),
      check(y, x, 2, settings, invocationAt("Sheet1!D8")),
    ]);
    expect(engineCallCounts.fits - before).toBe(1);
  });

  it("later calls on equal cells (new arrays, as Excel passes them) reuse the fit, in the same numbering", async () => {
    const first = twoLines([60, 40], 19);
    const again = twoLines([60, 40], 19);
    const before = engineCallCounts.fits;
    const components = await fit(first.y, first.x, 2);
    const labelRows = await labels(again.y, again.x, 2);
    expect(engineCallCounts.fits - before).toBe(1);
    // Row r's label is the component whose line is closer to the row's point.
    for (let r = 1; r < again.y.length; r++) {
      const xv = again.x[r][0] as number;
      const yv = again.y[r][0] as number;
      const distance = (row: unknown[]) => Math.abs(yv - (row[3] as number) - (row[4] as number) * xv);
      const closer = distance(components[1]) <= distance(components[2]) ? 1 : 2;
      if (Math.abs(distance(components[1]) - distance(components[2])) > 1) expect(labelRows[r][0]).toBe(closer);
    }
  });

  it("a different k, seed or model is a different fit; headers alone is not", async () => {
    const { y, x } = twoLines([60, 40], 23);
    const before = engineCallCounts.fits;
    await fit(y, x, 2);
    await fit(y, x, 2, [["headers=no"]]);
    expect(engineCallCounts.fits - before).toBe(1);
    await fit(y, x, 3);
    await fit(y, x, 2, [["seed=9"]]);
    expect(engineCallCounts.fits - before).toBe(3);
  });
});

describe("labels stay put when the data change", () => {
  it("a formula keeps its numbering although the new data alone would number the groups the other way", async () => {
    // Before: group 0 (60 rows) outnumbers group 1 (40 rows). After: 60 more rows of group 1
    // are added, so group 1 becomes the larger one; a fresh fit numbers by decreasing weight
    // (alignComponents.ts, canonical order), which would swap the numbers.
    const before = twoLines([60, 40], 29, false);
    const extra = twoLines([0, 60], 31, false);
    const after = { y: [...before.y, ...extra.y], x: [...before.x, ...extra.x] };
    const address = "Sheet1!E2";

    const first = await fit(before.y, before.x, 2, null as never, invocationAt(address));
    const slopeOfComponent1 = first[1][4] as number;
    const refit = await fit(after.y, after.x, 2, null as never, invocationAt(address));
    expect(Math.sign(refit[1][4] as number)).toBe(Math.sign(slopeOfComponent1));

    const fresh = await fit(after.y, after.x, 2, [["seed=1; restarts=3"]], invocationAt("Sheet2!A1"));
    expect(Math.sign(fresh[1][4] as number)).toBe(-Math.sign(slopeOfComponent1));
  });

  it("a small edit keeps every row's label", async () => {
    const data = twoLines([60, 40], 37);
    const address = "Sheet1!F2";
    const firstLabels = await labels(data.y, data.x, 2, null as never, invocationAt(address));
    const edited = data.y.map((row) => [...row]);
    edited[10] = [(edited[10][0] as number) + 0.01];
    const before = engineCallCounts.fits;
    const secondLabels = await labels(edited, data.x, 2, null as never, invocationAt(address));
    expect(engineCallCounts.fits - before).toBe(1);
    expect(secondLabels).toEqual(firstLabels);
  });
});

describe("cell errors with messages", () => {
  it("#VALUE! for k out of range or not whole, saying what k accepts", async () => {
    const { y, x } = twoLines([30, 30], 41);
    for (const k of [0, 2.5, 51, -1]) {
      const error = await worksheetError(fit(y, x, k));
      expect(error.code).toBe("#VALUE!");
      expect(error.message).toContain("k must be a whole number from 1 to 50");
    }
  });

  it("#VALUE! for too few rows for k, counting the skipped rows", async () => {
    const { y, x } = twoLines([10, 10], 43);
    y[2] = ["text"];
    const error = await worksheetError(labels(y, x, 7));
    expect(error.code).toBe("#VALUE!");
    // 7 components x (2 coefficients + 1) = 21 rows needed; 19 usable.
    // The engine's own row check, with the skipped rows added.
    expect(error.message).toContain("need at least 21 rows");
    expect(error.message).toContain("the data has 19");
    expect(error.message).toContain("1 row was skipped");
  });

  it("#VALUE! for an unknown setting, listing every setting", async () => {
    const { y, x } = twoLines([30, 30], 47);
    const error = await worksheetError(fit(y, x, 2, [["colour=red"]]));
    expect(error.code).toBe("#VALUE!");
    expect(error.message).toContain('Unknown setting "colour"');
    for (const name of SETTING_NAMES) expect(error.message).toContain(name);
  });

  it("#VALUE! for a bad setting value, saying what it accepts", async () => {
    const { y, x } = twoLines([30, 30], 53);
    const error = await worksheetError(membership(y, x, 2, [["model", "curvy"]]));
    expect(error.code).toBe("#VALUE!");
    expect(error.message).toContain("model must be plain");
    expect(error.message).toContain('"curvy"');
  });

  it("#VALUE! for ragged or mismatched ranges", async () => {
    const { y, x } = twoLines([30, 30], 59, false);
    const ragged = x.map((row, r) => (r === 5 ? [row[0]] : [row[0], r * r]));
    expect((await worksheetError(fit(y, ragged, 1))).message).toContain("Row 6 of the x range has 1 cells but row 1 has 2");
    const short = x.slice(0, 40);
    expect((await worksheetError(fit(y, short, 1))).message).toContain("the x range has 40");
    const wide = y.map((row) => [row[0], 1]);
    expect((await worksheetError(check(wide, x, 1))).code).toBe("#VALUE!");
  });

  it("#VALUE! when every row holds text", async () => {
    const y = [["a"], ["b"], ["c"], ["d"]];
    const x = [[1], [2], [3], [4]];
    const error = await worksheetError(fit(y, x, 1));
    expect(error.code).toBe("#VALUE!");
  });

  it("maps engine errors: numeric to #NUM! (no message in Excel), not-found to #N/A, bugs to #VALUE!", () => {
    expect(describeFailure(new SkeinError("numeric", "singular"))).toEqual({ code: "#NUM!", message: "singular" });
    expect(describeFailure(new SkeinError("not-found", "no such component"))).toEqual({ code: "#N/A", message: "no such component" });
    const numeric = toWorksheetError(new SkeinError("numeric", "singular")) as unknown as WorksheetErrorDouble;
    expect([numeric.code, numeric.message]).toEqual(["#NUM!", undefined]);
    const missing = toWorksheetError(new SkeinError("not-found", "no such component")) as unknown as WorksheetErrorDouble;
    expect([missing.code, missing.message]).toEqual(["#N/A", "no such component"]);
    const bug = toWorksheetError(new TypeError("x is undefined")) as unknown as WorksheetErrorDouble;
    expect(bug.code).toBe("#VALUE!");
    expect(bug.message).toContain("x is undefined");
  });
});

describe("cancellation", () => {
  it("a call cancelled before its fit starts rejects, and no engine fit runs", async () => {
    const { y, x } = twoLines([60, 40], 61);
    const invocation = invocationAt("Sheet1!B2");
    const before = engineCallCounts.fits;
    const pending = fit(y, x, 2, null as never, invocation);
    invocation.onCanceled!();
    const error = await worksheetError(pending);
    expect(error.code).toBe("#N/A");
    await new Promise((resolve) => setTimeout(resolve, 5));
    expect(engineCallCounts.fits - before).toBe(0);
    expect(engineService.results.statistics().entries).toBe(0);
  });

  it("when one of two formulas sharing a fit is cancelled, the other still gets it", async () => {
    const { y, x } = twoLines([60, 40], 67);
    const cancelled = invocationAt("Sheet1!B2");
    const kept = invocationAt("Sheet1!C2");
    const first = fit(y, x, 2, null as never, cancelled);
    const second = labels(y, x, 2, null as never, kept);
    cancelled.onCanceled!();
    expect((await worksheetError(first)).code).toBe("#N/A");
    expect(await second).toHaveLength(y.length);
  });
});

describe("SKEIN.SCAN", () => {
  it("spills one row per K with exactly one suggested K, and suggests 2 for the two invented lines", async () => {
    const { y, x } = twoLines([60, 40], 71);
    const result = await scan(y, x, 3);
    expect(result[0]).toEqual(["K", "BIC", "ICL", "log-likelihood", "smallest gap (noise SDs)", "starts agree", "converged", "suggested", "note"]);
    expect(result.slice(1).map((r) => r[0])).toEqual([1, 2, 3]);
    expect(result.slice(1).filter((r) => r[7] === true)).toHaveLength(1);
    expect(result.slice(1).find((r) => r[7] === true)![0]).toBe(2);
    // K = 1 has no pair of components: its gap cell is empty rather than Infinity.
    expect(result[1][4]).toBe("");
    // Every K but the suggested one says why it is not suggested, the smaller K = 1 included.
    for (const row of result.slice(1)) expect(row[8] === "").toBe(row[7] === true);
    expect(String(result[1][8])).toMatch(/^Not suggested: lost on BIC/);
  });

  it("without kmax tries up to 5, or fewer when the rows allow fewer", async () => {
    const { y, x } = twoLines([5, 5], 73, false);
    // 10 rows, 2 coefficients: at most floor(10 / 3) = 3 components.
    const result = await scan(y, x);
    expect(result.map((r) => r[0])).toEqual([1, 2, 3]);
  });
});

describe("SKEIN.CHECK", () => {
  it("reports starts agree and converged apart, and its advice names the settings it has", async () => {
    // Invented overlapping data: three lines 1.5 noise SDs apart, stopped after one iteration.
    const random = createRandom(5);
    const y: Range = [];
    const x: Range = [];
    for (let i = 0; i < 200; i++) {
      const xv = 10 * random.next();
      y.push([(i % 3 === 0 ? 1 + 0.5 * xv : i % 3 === 1 ? 2 + 0.3 * xv : 3) + 1.5 * random.normal()]);
      x.push([xv]);
    }
    const result = await check(y, x, 3, [["max_iterations=1; tolerance=1e-12"]]);
    expect(result.find((r) => r[0] === "converged")![1]).toBe(false);
    expect(typeof result.find((r) => r[0] === "starts agree")![1]).toBe("boolean");
    const notConverged = result.find((r) => r[0] === "warning" && /^Not converged/.test(String(r[1])));
    expect(notConverged![1]).toMatch(/stopped after 1 iteration while .* or allow more iterations with the max_iterations setting\.$/);
  });

  it("says when the fit is exact on some components only, naming the restarts setting", async () => {
    const { x: xs, y: ys } = partlyExactRows();
    const result = await check(Array.from(ys, (v) => [v]), Array.from(xs, (v) => [v]), 2);
    const warnings = result.filter((r) => r[0] === "warning").map((r) => String(r[1]));
    const partly = warnings.find((w) => w.startsWith("Partly exact:"));
    expect(partly).toMatch(/^Partly exact: 1 component fits 120 rows exactly, .* try another seed, or more restarts with the restarts setting\.$/);
    expect(warnings.some((w) => /Try fewer components/.test(w))).toBe(false);
  });

  it("returns name/value pairs in a fixed order, then the warnings", async () => {
    const { y, x } = twoLines([60, 40], 79);
    const result = await check(y, x, 2);
    expect(result.every((r) => r.length === 2)).toBe(true);
    expect(result.slice(0, 11).map((r) => r[0])).toEqual([
      "check",
      "components (K)",
      "starts agree",
      "converged",
      "iterations",
      "smallest gap (noise SDs)",
      "misassigned rows (%)",
      "membership clarity",
      "smallest weight (%)",
      "rows used",
      "rows skipped",
    ]);
    expect(result[1][1]).toBe(2);
    expect(result[9][1]).toBe(100);
    expect(result[10][1]).toBe(0);
    // Shares are percentages: the smaller of two components of 60 and 40 rows holds about 40%.
    expect(result[8][1]).toBeGreaterThan(30);
    // Then the stray rows (a count, the rows one by one and their rule when there are any), then the warnings.
    expect(result[11][0]).toBe("stray rows");
    const strayCount = result[11][1] as number;
    const after = result.slice(12).map((r) => r[0]);
    expect(after.slice(0, strayCount === 0 ? 0 : strayCount + 1)).toEqual(strayCount === 0 ? [] : [...Array(strayCount).fill("stray row"), "stray row rule"]);
    expect(after.slice(strayCount === 0 ? 0 : strayCount + 1).every((name) => name === "warning")).toBe(true);
    expect(result.length).toBeGreaterThan(12);
  });
});

describe("SKEIN.PREDICT", () => {
  it("predicts each component's line and the weighted mean for new rows, leaving unusable rows empty", async () => {
    const { y, x } = twoLines([60, 40], 83);
    const components = await fit(y, x, 2);
    const newRows = [["price"], [1], [""], [5], ["abc"], [9.5]];
    const result = await predict(y, x, newRows, 2);
    expect(result).toHaveLength(newRows.length);
    expect(result[0]).toEqual(["component 1 prediction", "component 2 prediction", "weighted prediction"]);
    expect(result[2]).toEqual(["", "", ""]);
    expect(result[4]).toEqual(["", "", ""]);
    for (const r of [1, 3, 5]) {
      const xv = newRows[r][0] as number;
      const [c1, c2] = [components[1], components[2]].map((row) => (row[3] as number) + (row[4] as number) * xv);
      expect(result[r][0]).toBeCloseTo(c1, 10);
      expect(result[r][1]).toBeCloseTo(c2, 10);
      // Plain model: weighted by the component weights (FIT shows them as percentages).
      expect(result[r][2]).toBeCloseTo(((components[1][1] as number) * c1 + (components[2][1] as number) * c2) / 100, 10);
    }
  });

  it("#VALUE! when new_rows has a different number of columns than x", async () => {
    const { y, x } = twoLines([40, 40], 89);
    const error = await worksheetError(predict(y, x, [[1, 2]], 2));
    expect(error.code).toBe("#VALUE!");
    expect(error.message).toContain("new_rows has 2 columns in row 1 but x has 1");
  });
});

describe("whole-column references", () => {
  it("per-row results stop at the last row with data instead of spilling down the blank rest", async () => {
    const { y, x } = twoLines([40, 40], 97);
    const blankTail = 5000;
    for (let r = 0; r < blankTail; r++) {
      y.push([null]);
      x.push([r % 2 === 0 ? null : ""]);
    }
    const result = await labels(y, x, 2);
    expect(result).toHaveLength(81);
    const newRows = [[1], [2], [null], [""]];
    expect(await predict(y, x, newRows, 2)).toHaveLength(2);
  });
});

describe("SKEIN.PREDICT under model=joint", () => {
  it("weights the components by where the new x lies", async () => {
    // Invented demo data: group 0 has x in [0, 4] on y = 1 + 2x, group 1 has x in [6, 10] on
    // y = 30 − x; noise SD 0.3. A new row at x = 2 lies among group 0's rows only.
    const random = createRandom(101);
    const y: Range = [];
    const x: Range = [];
    for (let i = 0; i < 120; i++) {
      const inFirst = i % 2 === 0;
      const xv = inFirst ? 4 * random.next() : 6 + 4 * random.next();
      y.push([(inFirst ? 1 + 2 * xv : 30 - xv) + 0.3 * random.normal()]);
      x.push([xv]);
    }
    const settings = [["model=joint"]];
    const components = await fit(y, x, 2, settings);
    const first = components.findIndex((row) => (row[4] as number) > 0);
    const result = await predict(y, x, [[2], [8]], 2, settings);
    // Near x = 2 the weighted prediction is the first group's line; near x = 8, the other's.
    expect(result[0][2]).toBeCloseTo(result[0][first] as number, 3);
    expect(result[1][2]).toBeCloseTo(result[1][1 - first] as number, 3);
  });
});
