import { describe, expect, it } from "vitest";
import { buildDesign } from "../src/engine/design";
import { designMatrix } from "../src/engine/designMatrix";
import { SkeinError } from "../src/engine/errors";

/** Runs fn, expecting a SkeinError with the given code; returns its message. */
function errorMessage(fn: () => unknown, code = "bad-input"): string {
  try {
    fn();
  } catch (error) {
    expect(error).toBeInstanceOf(SkeinError);
    expect((error as SkeinError).code).toBe(code);
    return (error as SkeinError).message;
  }
  throw new Error("expected a SkeinError, but the call returned");
}

// Small invented demo data; every expected number below is read off these
// arrays by hand (derivation in this test).
const yWithHeader = [["sales"], [1], [2], [4], [3], [7]];
const xWithHeader = [
  ["price", "ads"],
  [10, 1],
  [11, 0],
  [9, 2],
  [12, 5],
  [8, 3],
];

describe("buildDesign: headers and names", () => {
  it("takes a first row of text in y and every x column as headers", () => {
    const d = buildDesign(yWithHeader, xWithHeader);
    expect(d.hasHeaderRow).toBe(true);
    expect(d.yName).toBe("sales");
    expect(d.predictorNames).toEqual(["price", "ads"]);
    expect(d.inputRows).toBe(5);
    expect(d.n).toBe(5);
    expect(d.p).toBe(2);
    expect(Array.from(d.y)).toEqual([1, 2, 4, 3, 7]);
    expect(Array.from(d.x)).toEqual([10, 1, 11, 0, 9, 2, 12, 5, 8, 3]);
    expect(Array.from(d.rowIndex)).toEqual([0, 1, 2, 3, 4]);
    expect(d.skipped).toEqual([]);
  });

  it("uses default names when the first row holds numbers", () => {
    const d = buildDesign(yWithHeader.slice(1), xWithHeader.slice(1));
    expect(d.hasHeaderRow).toBe(false);
    expect(d.yName).toBe("y");
    expect(d.predictorNames).toEqual(["x1", "x2"]);
    expect(d.inputRows).toBe(5);
    expect(d.n).toBe(5);
  });

  it("does not take a first row as headers when only some x cells are text", () => {
    // The first data row then holds text, so it is skipped as a data row.
    const d = buildDesign([["sales"], [1], [2], [4], [3], [7]], [["price", 5], [10, 1], [11, 0], [9, 2], [12, 5], [8, 3]]);
    expect(d.hasHeaderRow).toBe(false);
    expect(d.inputRows).toBe(6);
    expect(d.skipped).toEqual([{ row: 0, column: "y", reason: "text" }]);
  });

  it("does not take error texts for names", () => {
    const d = buildDesign([["#N/A"], [1], [2], [4], [3], [7]], [["#N/A"], [10], [11], [9], [12], [8]]);
    expect(d.hasHeaderRow).toBe(false);
    expect(d.skipped).toEqual([{ row: 0, column: "y", reason: "error value" }]);
  });

  it("honours headers: false and headers: true", () => {
    const asData = buildDesign(yWithHeader, xWithHeader, { headers: false, minRows: 3 });
    expect(asData.hasHeaderRow).toBe(false);
    expect(asData.inputRows).toBe(6);
    expect(asData.skipped).toEqual([{ row: 0, column: "y", reason: "text" }]);
    // headers: true with a numeric first row: that row is dropped and the names default.
    const forced = buildDesign([[0], [1], [2], [4], [3], [7]], [[0], [10], [11], [9], [12], [8]], { headers: true });
    expect(forced.hasHeaderRow).toBe(true);
    expect(forced.yName).toBe("y");
    expect(forced.predictorNames).toEqual(["x1"]);
    expect(forced.inputRows).toBe(5);
  });

  it("trims whitespace around names", () => {
    const d = buildDesign([["  sales "], [1], [2], [4]], [[" price"], [10], [11], [9]]);
    expect(d.yName).toBe("sales");
    expect(d.predictorNames).toEqual(["price"]);
  });
});

describe("buildDesign: skipped rows", () => {
  it("skips blanks, text, logical values and error values, with their data-row index and column", () => {
    const y = [["y"], [1], [null], [3], [""], [5], [6], ["   "], [8], [9], [10], [11], [12]];
    const x = [
      ["a", "b"],
      [1, 2], // row 0 used
      [2, 1], // row 1: y null
      [3, 5], // row 2 used
      [4, 3], // row 3: y ""
      [5, undefined], // row 4: b undefined
      ["seven", 1], // row 5: a is text
      [7, 2], // row 6: y whitespace only
      [8, true], // row 7: b logical
      [9, "#DIV/0!"], // row 8: b error text
      [{ type: "Error", code: "#N/A" }, 4], // row 9: a error object
      [11, 9], // row 10 used
      [12, 7], // row 11 used
    ];
    const d = buildDesign(y, x);
    expect(d.inputRows).toBe(12);
    expect(d.n).toBe(4);
    expect(Array.from(d.rowIndex)).toEqual([0, 2, 10, 11]);
    expect(Array.from(d.y)).toEqual([1, 3, 11, 12]);
    expect(Array.from(d.x)).toEqual([1, 2, 3, 5, 11, 9, 12, 7]);
    expect(d.skipped).toEqual([
      { row: 1, column: "y", reason: "blank" },
      { row: 3, column: "y", reason: "blank" },
      { row: 4, column: "b", reason: "blank" },
      { row: 5, column: "a", reason: "text" },
      { row: 6, column: "y", reason: "blank" },
      { row: 7, column: "b", reason: "logical value" },
      { row: 8, column: "b", reason: "error value" },
      { row: 9, column: "a", reason: "error value" },
    ]);
  });

  it("reads numbers written as text by the file readers' rule and says so in a notice", () => {
    // Invented ranges as Excel hands them: Share typed as "12.3%" text, Price as "$1,234.50"
    // text, y with one number stored as text. Before, each such row was skipped as text (and a
    // column of percent text became a category column, one indicator per value).
    const y = [["Sales"], [10], ["12"], [14], [15], [17], [18]];
    const x = [
      ["Share", "Price"],
      ["12.3%", "$1,234.50"],
      ["4%", "$980.00"],
      ["7.5%", "$1,010.25"],
      ["10%", "$1,100.00"],
      ["11%", "$1,150.00"],
      ["15%", "$1,300.00"],
    ];
    const d = buildDesign(y, x);
    expect(d.n).toBe(6);
    expect(d.predictorNames).toEqual(["Share", "Price"]);
    expect(Array.from(d.x.subarray(0, 2))).toEqual([0.123, 1234.5]);
    expect(d.y[1]).toBe(12);
    expect(d.notices).toEqual([
      "Read as numbers: Sales (numbers stored as text).",
      "Read as numbers: Share (percent, 12.3% read as 0.123), Price (currency $, thousands separator \",\").",
    ]);
    // Mixed styles stay text, with the readers' notice; those rows are skipped as text.
    const mixed = buildDesign([[1], [2], [3], [4], [5]], [["5%"], ["0.2"], [3], [4], [6]]);
    expect(mixed.notices[0]).toMatch(/^x1 writes numbers in more than one way \("5%", "0.2"\); its cells are kept as text/);
    expect(mixed.n).toBe(3);
    // A caller whose reader already applied the rule turns it off: the text stays text.
    const asText = buildDesign(y, [["Week"], [1], [2], [3], [4], [5], [6]], { numberText: false });
    expect(asText.notices).toEqual([]);
    expect(asText.skipped).toEqual([{ row: 1, column: "Sales", reason: "text" }]);
  });

  it("reports the first unusable column of a row (y before x, then x in order)", () => {
    const d = buildDesign([[1], ["n/a"], [3], [4], [5]], [[1, 2], [null, "x"], [2, 2], [3, 7], [5, 1]]);
    expect(d.skipped).toEqual([{ row: 1, column: "y", reason: "text" }]);
  });

  it("uses real zeros as data (older Excel builds pass 0 for blanks; they cannot be told apart)", () => {
    const d = buildDesign([[0], [1], [0], [4]], [[0], [2], [1], [3]]);
    expect(d.n).toBe(4);
    expect(d.skipped).toEqual([]);
  });
});

describe("buildDesign: errors with clear messages", () => {
  it("rejects empty ranges", () => {
    expect(errorMessage(() => buildDesign([], [[1]]))).toMatch(/y range is empty/);
    expect(errorMessage(() => buildDesign([[1]], []))).toMatch(/x range is empty/);
    expect(errorMessage(() => buildDesign([[1], [2]], [[], []]))).toMatch(/no columns/);
  });

  it("rejects a header row with no data below it", () => {
    expect(errorMessage(() => buildDesign([["y"]], [["a"]]))).toMatch(/only a header row/);
  });

  it("rejects a y range with more than one column", () => {
    const message = errorMessage(() => buildDesign([[1, 2], [3, 4]], [[1], [2]]));
    expect(message).toMatch(/y range has 2 columns/);
    expect(message).toMatch(/single column/);
  });

  it("rejects y and x with different row counts, giving both counts", () => {
    const message = errorMessage(() => buildDesign([[1], [2], [3]], [[1], [2]]));
    expect(message).toMatch(/y range has 3 rows but the x range has 2/);
    expect(message).toMatch(/same rows/);
  });

  it("rejects ragged x rows, naming the row", () => {
    const message = errorMessage(() => buildDesign([[1], [2], [3]], [[1, 2], [2, 3], [4]]));
    expect(message).toMatch(/Row 3 of the x range has 1 cells but row 1 has 2/);
  });

  it("rejects a constant predictor by name and suggests removing it", () => {
    const message = errorMessage(() => buildDesign([["y"], [1], [2], [5], [4]], [["a", "level"], [1, 7], [2, 7], [3, 7], [5, 7]]));
    expect(message).toMatch(/Predictor level has the same value \(7\)/);
    expect(message).toMatch(/remove it/);
    expect(message).toMatch(/intercept/);
  });

  it("judges constancy over the used rows only", () => {
    // Column b varies only through the skipped row 2.
    const message = errorMessage(() => buildDesign([[1], [2], [null], [4], [6]], [[1, 3], [2, 3], [4, 9], [3, 3], [8, 3]]));
    expect(message).toMatch(/Predictor x2 has the same value \(3\)/);
  });

  it("rejects a duplicated predictor, naming both", () => {
    const message = errorMessage(() => buildDesign([["y"], [1], [2], [5], [4], [6]], [["a", "b", "c"], [1, 4, 4], [2, 3, 3], [3, 9, 9], [5, 1, 1], [4, 2, 2]]));
    expect(message).toMatch(/Predictor c is a duplicate of b/);
    expect(message).toMatch(/Remove one/);
  });

  it("rejects a predictor that is an exact multiple of another, giving the factor", () => {
    // Column "kg" = 1000 × "tonnes" except rounding in the last digit of doubles.
    const tonnes = [0.1, 0.2, 0.3, 0.7, 0.05];
    const x: unknown[][] = [["tonnes", "kg"], ...tonnes.map((t) => [t, t * 1000])];
    const message = errorMessage(() => buildDesign([["y"], [1], [2], [5], [4], [2]], x));
    expect(message).toMatch(/Predictor kg is an exact multiple \(1000 times\) of tonnes/);
  });

  it("with an intercept, rejects a predictor that is a shifted multiple of another", () => {
    // YEAR = 1946 + 1 × counter, as in the Longley data's Obs and YEAR columns (derivation in this test).
    const x: unknown[][] = [["counter", "YEAR"], [1, 1947], [2, 1948], [3, 1949], [4, 1950], [5, 1951]];
    const y = [["y"], [3], [1], [4], [1], [5]];
    expect(errorMessage(() => buildDesign(y, x))).toMatch(/Predictor YEAR equals 1946 \+ 1 × counter in every used row; with an intercept/);
    // Without an intercept the two columns are not proportional, so both can stay.
    expect(buildDesign(y, x, { intercept: false }).p).toBe(2);
    // A pure multiple is rejected with or without an intercept.
    const doubled: unknown[][] = [["a", "b"], [1, -2], [2, -4], [3, -6], [4, -8], [5, -10]];
    expect(errorMessage(() => buildDesign(y, doubled, { intercept: false }))).toMatch(/exact multiple \(-2 times\) of a/);
  });

  it("does not mistake nearly proportional columns for multiples", () => {
    const d = buildDesign([[1], [2], [5], [4]], [[1, 2], [2, 4], [3, 6], [4, 8.001]]);
    expect(d.p).toBe(2);
  });

  it("rejects a constant outcome", () => {
    expect(errorMessage(() => buildDesign([[3], [3], [3], [3]], [[1], [2], [3], [4]]))).toMatch(/outcome y has the same value \(3\)/);
  });

  it("rejects too few usable rows, saying how many are usable, how many skipped and the commonest reason", () => {
    // Default minRows = p + 2 = 4 (common practice: intercept, p slopes, one residual degree of freedom).
    const y = [["y"], [1], [2], ["x"], [4], [5], [6]];
    const x = [["a", "b"], [1, 2], ["?", 1], [3, 1], [4, "-"], ["none", 3], [2, 5]];
    const message = errorMessage(() => buildDesign(y, x));
    expect(message).toMatch(/Only 2 usable rows/);
    expect(message).toMatch(/at least 4 are needed for 2 predictors/);
    expect(message).toMatch(/4 rows were skipped/);
    expect(message).toMatch(/most often for text in column a \(2 rows\)/);
  });

  it("honours minRows", () => {
    const y = [[1], [2], [3], [5]];
    const x = [[1], [2], [4], [3]];
    expect(buildDesign(y, x, { minRows: 4 }).n).toBe(4);
    expect(errorMessage(() => buildDesign(y, x, { minRows: 5 }))).toMatch(/Only 4 usable rows, but at least 5/);
  });

  it("rejects Infinity and NaN, naming the column and row", () => {
    const withHeader = errorMessage(() => buildDesign([["y"], [1], [2], [3]], [["dose"], [1], [Infinity], [3]]));
    expect(withHeader).toMatch(/Column dose holds Infinity in data row 2/);
    const noHeader = errorMessage(() => buildDesign([[1], [NaN], [3]], [[1], [2], [3]]));
    expect(noHeader).toMatch(/Column y holds NaN in row 2/);
  });
});

describe("designMatrix", () => {
  it("puts a column of 1s first when there is an intercept", () => {
    const d = buildDesign(yWithHeader, xWithHeader);
    const { matrix, q } = designMatrix(d, true);
    expect(q).toBe(3);
    // Rows of xWithHeader with 1 in front (derivation in this test).
    expect(Array.from(matrix)).toEqual([1, 10, 1, 1, 11, 0, 1, 9, 2, 1, 12, 5, 1, 8, 3]);
  });

  it("is a copy of the predictors without an intercept", () => {
    const d = buildDesign(yWithHeader, xWithHeader);
    const { matrix, q } = designMatrix(d, false);
    expect(q).toBe(2);
    expect(Array.from(matrix)).toEqual(Array.from(d.x));
    matrix[0] = -1;
    expect(d.x[0]).toBe(10);
  });
});

// Its speed is a bench figure (npm run bench -- functions, the "data layer (buildDesign)" line),
// not a timed test: on a shared machine a wall-clock limit fails for reasons of load.
describe("buildDesign: size", () => {
  it("reads 100 000 rows of 5 predictors, every row used, values in place", () => {
    // Invented demo data from a fixed linear congruential sequence (no randomness needed).
    const rows = 100_000;
    const p = 5;
    let state = 12345;
    const next = () => {
      state = (state * 1103515245 + 12345) % 2147483648;
      return state / 2147483648;
    };
    const y: unknown[][] = [];
    const x: unknown[][] = [];
    for (let i = 0; i < rows; i++) {
      y.push([next()]);
      const row: number[] = [];
      for (let j = 0; j < p; j++) row.push(next());
      x.push(row);
    }
    const d = buildDesign(y, x);
    expect([d.n, d.p, d.skipped.length]).toEqual([rows, p, 0]);
    expect(d.y[rows - 1]).toBe(y[rows - 1][0]);
    expect(d.x[rows * p - 1]).toBe(x[rows - 1][p - 1]);
  });
});
