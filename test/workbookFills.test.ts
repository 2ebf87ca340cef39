import { beforeAll, describe, expect, it } from "vitest";
import type { Workbook } from "exceljs";
import { buildDesign } from "../src/engine/design";
import { fitMixture } from "../src/engine/fitMixture";
import { resultsWorkbook } from "../src/io/resultsWorkbook";
import { WORKBOOK_FILLS } from "../src/report/componentStyle";

/**
 * Result workbooks take their header colours from the shared style module: the
 * input's columns one fill, the columns Skein adds another, white text on both.
 * Data: invented, two lines y = 1 + 2x and y = 20 − x over x = 0..19 (no noise but a
 * small alternating offset so neither component is an exact fit).
 */
describe("result workbook fills", () => {
  const rows: unknown[][] = [["x", "y"]];
  for (let i = 0; i < 40; i++) {
    const x = i % 20;
    const wobble = i % 4 < 2 ? 0.3 : -0.3;
    rows.push([x, i < 20 ? 1 + 2 * x + wobble : 20 - x + wobble]);
  }
  const design = buildDesign(rows.map((r) => [r[1]]), rows.map((r) => [r[0]]), { headers: true });
  const fit = fitMixture(design, { k: 2, seed: 1 });
  let workbook: Workbook;
  beforeAll(async () => {
    workbook = await resultsWorkbook({ rows, design, fit });
  });

  const fillOf = (sheet: string, column: number) => {
    const cell = workbook.getWorksheet(sheet)!.getRow(1).getCell(column);
    return { fill: (cell.fill as { fgColor?: { argb?: string } }).fgColor?.argb, text: cell.font?.color?.argb };
  };

  it("colours the input's header cells and Skein's header cells from the style module", () => {
    expect(fillOf("Rows", 1)).toEqual({ fill: WORKBOOK_FILLS.data, text: WORKBOOK_FILLS.headerText });
    expect(fillOf("Rows", 2)).toEqual({ fill: WORKBOOK_FILLS.data, text: WORKBOOK_FILLS.headerText });
    // Column 3 onwards: component, fitted value, residual, memberships.
    for (let column = 3; column <= 3 + 3 + fit.k - 1; column++) expect(fillOf("Rows", column).fill, `column ${column}`).toBe(WORKBOOK_FILLS.result);
    expect(fillOf("Components", 1).fill).toBe(WORKBOOK_FILLS.result);
    expect(WORKBOOK_FILLS.data).not.toBe(WORKBOOK_FILLS.result);
  });
});
