import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createRandom } from "../src/engine/random";
import { fit } from "../src/functions/functions";
import { engineCallCounts } from "../src/service/engineRunner";
import { engineService } from "../src/service/engineService";
import { installCustomFunctionsDouble } from "./support/customFunctionsDouble";

/*
 * The ribbon's refit command, with a stand-in for Excel's calculate(): it must make every
 * formula really refit (the engine service's cache would otherwise answer the recalculation)
 * and keep each formula's component numbers (the service keeps its last fit).
 */

const calculations: unknown[] = [];
let refitAll: (event: Office.AddinCommands.Event) => Promise<void>;

beforeAll(async () => {
  installCustomFunctionsDouble();
  (globalThis as Record<string, unknown>).Excel = {
    CalculationType: { full: "Full" },
    run: async (batch: (context: unknown) => Promise<void>) => batch({ workbook: { application: { calculate: (type: unknown) => calculations.push(type) } }, sync: async () => undefined }),
  };
  ({ refitAll } = await import("../src/commands/commands"));
});

afterAll(() => {
  delete (globalThis as Record<string, unknown>).Excel;
  engineService.clear();
});

/** Invented demo data: y = 2 + 3x (two thirds of the rows) or y = −1 − 2x, noise SD 0.3. */
function demo(rows: number, seed: number): { y: number[][]; x: number[][] } {
  const random = createRandom(seed);
  const y: number[][] = [];
  const x: number[][] = [];
  for (let i = 0; i < rows; i++) {
    const xv = 10 * random.next() - 5;
    y.push([(i % 3 !== 0 ? 2 + 3 * xv : -1 - 2 * xv) + 0.3 * random.normal()]);
    x.push([xv]);
  }
  return { y, x };
}

describe("the ribbon's refit command", () => {
  it("empties the cache, asks Excel for a full recalculation, and the formulas refit with their numbers kept", async () => {
    const { y, x } = demo(90, 3);
    const invocation = { address: "Sheet1!E1" };
    const first = await fit(y, x, 2, null as never, invocation);
    const fitsBefore = engineCallCounts.fits;
    await fit(y, x, 2, null as never, invocation);
    expect(engineCallCounts.fits - fitsBefore).toBe(0);

    let completed = 0;
    await refitAll({ completed: () => completed++ } as unknown as Office.AddinCommands.Event);
    expect(calculations).toEqual(["Full"]);
    expect(completed).toBe(1);
    expect(engineService.results.statistics().entries).toBe(0);

    // Excel recalculates the formula: a real refit, warm-started from and numbered like the last fit.
    const again = await fit(y, x, 2, null as never, invocation);
    expect(engineCallCounts.fits - fitsBefore).toBe(1);
    expect(again.map((row) => row[0])).toEqual(first.map((row) => row[0]));
    for (let r = 0; r < first.length; r++) {
      for (let c = 1; c < first[r].length; c++) expect(again[r][c] as number).toBeCloseTo(first[r][c] as number, 6);
    }
  });
});
