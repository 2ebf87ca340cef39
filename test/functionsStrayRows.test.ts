import { afterEach, beforeAll, describe, expect, it } from "vitest";
import { check, fit, scan } from "../src/functions/functions";
import { engineService } from "../src/service/engineService";
import { createRandom } from "../src/engine/random";
import { installCustomFunctionsDouble } from "./support/customFunctionsDouble";

beforeAll(() => {
  installCustomFunctionsDouble();
});

afterEach(() => {
  engineService.clear();
});

/** Range row (header = row 1) of the typo. */
const TYPO_RANGE_ROW = 139;

/** Invented: 300 rows from two groups (y = 2 + 3x, y = 20 − x), one y typed as 1,000,000, under a header row. */
function typoRanges(): { y: unknown[][]; x: unknown[][] } {
  const random = createRandom(11);
  const y: unknown[][] = [["cost"]];
  const x: unknown[][] = [["distance"]];
  for (let i = 0; i < 300; i++) {
    const xv = 10 * random.next();
    const noise = (random.next() + random.next() + random.next() - 1.5) * 0.8;
    y.push([i + 2 === TYPO_RANGE_ROW ? 1_000_000 : i % 2 === 1 ? 2 + 3 * xv + noise : 20 - xv + noise]);
    x.push([xv]);
  }
  return { y, x };
}

describe("stray rows and the background component in the worksheet functions", () => {
  it("SKEIN.SCAN suggests K = 2 by default (background=auto), K = 1 with background=no", async () => {
    const { y, x } = typoRanges();
    const suggested = (table: unknown[][]) => (table.slice(1).find((row) => row[7] === true) as unknown[])[0];
    expect(suggested(await scan(y, x, 4))).toBe(2);
    expect(suggested(await scan(y, x, 4, [["background=no"]]))).toBe(1);
  });

  it("SKEIN.SCAN lists the suggested K's stray rows in its note, by row of the ranges, as CHECK does", async () => {
    const { y, x } = typoRanges();
    const table = await scan(y, x, 3);
    const suggestedRow = table.slice(1).find((row) => row[7] === true) as unknown[];
    expect(suggestedRow[0]).toBe(2);
    // Before, the suggested K's note was empty and only CHECK named the row.
    expect(suggestedRow[8]).toMatch(new RegExp(`^Stray rows at K = 2: row ${TYPO_RANGE_ROW} of the ranges \\(.+ noise SDs from component [12]\\); a row is stray when .*Bonferroni.*\\. A blank outcome cell leaves a row out\\.$`));
    // Clean data: no stray rows, and the suggested K's note stays empty.
    const clean = typoRanges();
    clean.y[TYPO_RANGE_ROW - 1] = [20 - (clean.x[TYPO_RANGE_ROW - 1][0] as number)];
    const cleanTable = await scan(clean.y, clean.x, 3);
    expect((cleanTable.slice(1).find((row) => row[7] === true) as unknown[])[8]).toBe("");
  });

  it("SKEIN.CHECK names the stray row by its row in the ranges, with the rule", async () => {
    const { y, x } = typoRanges();
    const table = await check(y, x, 2);
    const value = (name: string) => table.filter((row) => row[0] === name).map((row) => row[1]);
    expect(value("stray rows")).toEqual([1]);
    expect(value("stray row")[0]).toMatch(new RegExp(`^row ${TYPO_RANGE_ROW} of the ranges: \\d+(\\.\\d+)?e?\\+?\\d* noise SDs from component [12], the nearest$`));
    expect(value("stray row rule")[0]).toContain("Bonferroni");
    expect(value("background weight (%)")[0]).toBeGreaterThan(0);
    // The components are the two invented groups, not the typo.
    const components = await fit(y, x, 2);
    const slopes = components.slice(1).map((row) => row[4] as number).sort((a, b) => a - b);
    expect(slopes[0]).toBeCloseTo(-1, 1);
    expect(slopes[1]).toBeCloseTo(3, 1);
  });

  it("SKEIN.CHECK shows 0 stray rows on clean data", async () => {
    const { y, x } = typoRanges();
    y[TYPO_RANGE_ROW - 1] = [20 - (x[TYPO_RANGE_ROW - 1][0] as number)];
    const table = await check(y, x, 2);
    expect(table.find((row) => row[0] === "stray rows")).toEqual(["stray rows", 0]);
    expect(table.some((row) => row[0] === "background weight (%)")).toBe(false);
  });

  it("SKEIN.SCAN without kmax says when the rows cut the default kmax", async () => {
    // Invented: 8 rows on two lines; K = 3 would need 9.
    const y = [[2], [4.1], [5.9], [8.2], [5], [4], [3.1], [1.8]];
    const x = [[1], [2], [3], [4], [1], [2], [3], [4]];
    const table = await scan(y, x);
    expect(table).toHaveLength(2);
    expect(table[1][8]).toContain("Tried K = 1 to 2, not up to 5: K = 3 needs at least 9 usable rows");
  });
});
