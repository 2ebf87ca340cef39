import { afterEach, beforeAll, describe, expect, it } from "vitest";
import fc from "fast-check";
import { check, fit, labels, membership, predict, scan } from "../src/functions/functions";
import { engineService } from "../src/service/engineService";
import { installCustomFunctionsDouble, WorksheetErrorDouble } from "./support/customFunctionsDouble";

/*
 * Property-based tests of the worksheet adapters: whatever 2-D arrays Excel could pass
 * (numbers, blanks, text, booleans, error text, extreme values, ragged rows), each function
 * either spills a table whose every cell is a finite number, a text or a logical value, or
 * throws a worksheet error that carries its reason. Never an unhandled exception, never an
 * internal error ("Skein could not finish"), never NaN or Infinity in a spilled cell.
 */

beforeAll(() => {
  installCustomFunctionsDouble();
});

afterEach(() => {
  engineService.clear();
});

const extreme = fc.constantFrom(1e300, -1e300, 1e-300, -1e-300, 5e-324, Number.MAX_VALUE, -Number.MAX_VALUE, 1e154, 0, -0);
const ordinary = fc.double({ min: -1000, max: 1000, noNaN: true });
const cellValue: fc.Arbitrary<unknown> = fc.oneof(
  { weight: 40, arbitrary: ordinary },
  { weight: 3, arbitrary: fc.integer({ min: -5, max: 5 }) },
  { weight: 2, arbitrary: extreme },
  { weight: 1, arbitrary: fc.constantFrom(null, "", "  ") },
  { weight: 1, arbitrary: fc.constantFrom("North", "South", "yes", "no", "East", "n/a", "12", "Price") },
  { weight: 1, arbitrary: fc.boolean() },
  { weight: 1, arbitrary: fc.constantFrom("#N/A", "#DIV/0!", "#VALUE!", "#REF!") },
  { weight: 1, arbitrary: fc.constantFrom(Number.NaN, Number.POSITIVE_INFINITY, undefined) },
);

/** A y range and an x range over (mostly) the same rows; sometimes ragged or mismatched. */
const ranges = fc
  .record({
    rows: fc.oneof({ weight: 1, arbitrary: fc.integer({ min: 0, max: 5 }) }, { weight: 4, arbitrary: fc.integer({ min: 8, max: 24 }) }),
    columns: fc.oneof({ weight: 1, arbitrary: fc.constant(0) }, { weight: 6, arbitrary: fc.integer({ min: 1, max: 3 }) }),
    ragged: fc.integer({ min: 0, max: 14 }),
    seed: fc.integer(),
  })
  .chain(({ rows, columns, ragged }) =>
    fc.record({
      y: fc.array(fc.array(cellValue, { minLength: ragged === 0 ? 0 : 1, maxLength: ragged === 1 ? 2 : 1 }), { minLength: rows, maxLength: ragged === 2 ? rows + 2 : rows }),
      x: fc.array(fc.array(cellValue, { minLength: ragged === 3 ? 0 : columns, maxLength: ragged === 3 ? columns + 1 : columns }), { minLength: rows, maxLength: rows }),
      newX: fc.array(fc.array(cellValue, { minLength: columns, maxLength: ragged === 4 ? columns + 1 : columns }), { minLength: 0, maxLength: 4 }),
      k: fc.oneof({ weight: 6, arbitrary: fc.constantFrom(null, 1, 2) }, { weight: 1, arbitrary: fc.integer({ min: 0, max: 4 }) }, { weight: 1, arbitrary: fc.constantFrom(1.5, "2", "two", true) }),
      settings: fc.oneof(
        { weight: 6, arbitrary: fc.constantFrom(null, [["seed=3"]], [["background=yes"]], [["background=no; intercept=no"]], [["model=joint"]], [["headers=yes"]]) },
        { weight: 1, arbitrary: fc.constantFrom([["colour=red"]], [["seed", -1]]) },
      ),
    }),
  );

/** The answer's shape: a table of finite numbers, texts and logical values, or a worksheet error with its reason. */
async function outcome(call: () => Promise<unknown[][]>): Promise<"table" | "error"> {
  let result: unknown[][];
  try {
    result = await call();
  } catch (error) {
    expect(error).toBeInstanceOf(WorksheetErrorDouble);
    const failure = error as WorksheetErrorDouble & { cause?: string };
    expect(["#VALUE!", "#NUM!", "#N/A"]).toContain(failure.code);
    const reason = failure.code === "#NUM!" ? failure.cause : failure.message;
    expect(typeof reason === "string" && reason.length > 10, `no reason given: ${String(reason)}`).toBe(true);
    expect(reason).not.toMatch(/could not finish/);
    return "error";
  }
  expect(Array.isArray(result)).toBe(true);
  for (const row of result) {
    expect(Array.isArray(row)).toBe(true);
    for (const value of row) {
      if (typeof value === "number") expect(Number.isFinite(value), `spilled ${value}`).toBe(true);
      else expect(["string", "boolean"]).toContain(typeof value);
    }
  }
  return "table";
}

const RUNS = Number(process.env.PROPERTY_RUNS ?? 40);

describe("worksheet functions on arbitrary ranges (fast-check)", () => {
  it("FIT, LABELS, MEMBERSHIP and CHECK give a clean table or an error with its reason", async () => {
    let tables = 0;
    await fc.assert(
      fc.asyncProperty(ranges, async ({ y, x, k, settings }) => {
        for (const f of [fit, labels, membership, check]) {
          if ((await outcome(() => f(y as never, x as never, k as never, settings as never))) === "table") tables++;
        }
        engineService.clear();
      }),
      { numRuns: RUNS, seed: 20261202 },
    );
    // The generator must reach the fit, not only the input checks.
    expect(tables).toBeGreaterThan((4 * RUNS) / 10);
  }, 120_000);

  it("SCAN and PREDICT give a clean table or an error with its reason", async () => {
    await fc.assert(
      fc.asyncProperty(ranges, async ({ y, x, newX, k, settings }) => {
        await outcome(() => scan(y as never, x as never, (typeof k === "number" ? Math.min(k, 3) : k) as never, settings as never));
        await outcome(() => predict(y as never, x as never, newX as never, k as never, settings as never));
        engineService.clear();
      }),
      { numRuns: RUNS, seed: 7 },
    );
  }, 120_000);

  it("mostly numeric tables with a category column and extreme values fit without a crash", async () => {
    const numericRanges = fc.record({
      values: fc.array(fc.tuple(ordinary, ordinary, fc.constantFrom("A", "B", "C"), fc.oneof({ weight: 9, arbitrary: fc.constant(1) }, { weight: 1, arbitrary: extreme })), { minLength: 12, maxLength: 30 }),
      k: fc.integer({ min: 1, max: 3 }),
    });
    await fc.assert(
      fc.asyncProperty(numericRanges, async ({ values, k }) => {
        const y = values.map(([a, , , scale]) => [a * (scale === 0 ? 1 : scale)]);
        const x = values.map(([, b, group]) => [b, group]);
        for (const f of [fit, check, labels]) await outcome(() => f(y, x, k));
        await outcome(() => predict(y, x, [[1, "A"], [2, "C"]], k));
        engineService.clear();
      }),
      { numRuns: RUNS, seed: 99 },
    );
  }, 120_000);
});
