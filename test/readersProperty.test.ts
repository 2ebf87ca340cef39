import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { buildDesign } from "../src/engine/design";
import { SkeinError } from "../src/engine/errors";
import { typeColumns, type RawCell } from "../src/io/columnTypes";
import { tableFromGrid } from "../src/io/dataTable";
import { decodeText } from "../src/io/decodeText";
import { csvTable, parseCsv } from "../src/io/readCsv";

// Property-based checks of the data layer: whatever cells or text arrive (numbers from tiny to
// huge, blanks, text, booleans, error values, dates, ragged rows), the readers and the design
// builder either answer with finite numbers or stop with a SkeinError that carries a message;
// they never crash. Runs are kept small so the suite takes a few seconds.
const RUNS = { numRuns: 150, seed: 20261202 };

/** Either a normal result or a SkeinError with a message; anything else fails the property. */
function outcome<T>(run: () => T): T | SkeinError {
  try {
    return run();
  } catch (error) {
    if (error instanceof SkeinError && error.message.trim().length > 10) return error;
    throw error;
  }
}

const extremeNumber = fc.oneof(
  fc.double({ noNaN: true, noDefaultInfinity: true }),
  fc.constantFrom(0, -0, 1e-300, -1e-300, 1e300, -1e300, Number.MAX_VALUE, Number.MIN_VALUE, 5e-324, 1e154, 2 ** 53),
  fc.integer({ min: -1000, max: 1000 }),
);
const errorText = fc.constantFrom("#N/A", "#DIV/0!", "#VALUE!", "#REF!", "#NAME?", "#NUM!", "#NULL!", "#SPILL!");
const numberText = fc.oneof(
  extremeNumber.map((v) => String(v)),
  fc.double({ min: -1e6, max: 1e6, noNaN: true }).map((v) => `${v.toFixed(2)}%`),
  fc.integer({ min: 0, max: 1e9 }).map((v) => v.toLocaleString("en-US")),
  fc.integer({ min: 0, max: 1e7 }).map((v) => `$${(v / 100).toFixed(2)}`),
  fc.integer({ min: 0, max: 1e7 }).map((v) => `${(v / 100).toFixed(2).replace(".", ",")} €`),
  fc.constantFrom("1e400", "-1e400", "NaN", "Infinity", "1,5", "1.234,5", "12 %", "(3)", "--1", "1e-400"),
);
const dateText = fc.constantFrom("2024-03-01", "01/02/2024", "13/02/2024", "1 Mar 2024", "2024-02-30", "March 5, 2024", "99/99/99");
const cell: fc.Arbitrary<RawCell> = fc.oneof(
  extremeNumber,
  fc.constant(null),
  fc.constantFrom("", "  ", "yes", "no", "North", "South", "ID"),
  fc.string({ maxLength: 8 }),
  fc.boolean(),
  errorText,
  numberText,
  dateText,
  fc.date({ min: new Date(Date.UTC(1900, 0, 1)), max: new Date(Date.UTC(2100, 0, 1)), noInvalidDate: true }),
);
/** Ragged on purpose: rows of 0 to 6 cells. */
const grid = fc.array(fc.array(cell, { maxLength: 6 }), { minLength: 0, maxLength: 14 });
/** Rectangular and mostly numbers, so that many draws get as far as a design. */
const numericGrid = fc.integer({ min: 2, max: 4 }).chain((width) =>
  fc.array(fc.array(fc.oneof({ weight: 12, arbitrary: extremeNumber }, { weight: 1, arbitrary: cell }), { minLength: width, maxLength: width }), { minLength: 3, maxLength: 20 }),
);

function expectCellsFinite(rows: readonly (readonly unknown[])[]): void {
  for (const row of rows) {
    for (const value of row) {
      const kind = typeof value;
      expect(value === null || kind === "string" || kind === "boolean" || kind === "number").toBe(true);
      if (kind === "number") expect(Number.isFinite(value)).toBe(true);
    }
  }
}

describe("the column rule and the grid reader", () => {
  it("type any grid into rectangular rows of finite numbers, text, booleans and blanks, with a kind per column", () => {
    fc.assert(
      fc.property(grid, fc.boolean(), fc.boolean(), (rows, decimalComma, fromWorkbook) => {
        const header = rows[0] ?? [];
        const typed = typeColumns(header, rows.slice(1), { decimalComma, fromWorkbook });
        expect(typed.names).toHaveLength(header.length);
        expect(new Set(typed.names).size).toBe(header.length);
        for (const row of typed.rows) expect(row).toHaveLength(header.length);
        expectCellsFinite(typed.rows);
        for (const column of typed.columns) {
          expect(["number", "category", "date", "identifier", "text", "empty"]).toContain(column.kind);
          expect(column.defaultPredictor).toBe(column.kind === "number" || column.kind === "category" ? column.defaultPredictor : false);
        }
      }),
      RUNS,
    );
  });

  it("tableFromGrid answers or refuses with a message, for any header row asked for", () => {
    let answered = 0;
    fc.assert(
      fc.property(grid, fc.option(fc.integer({ min: 1, max: 20 }), { nil: undefined }), fc.boolean(), (rows, headerRow, strictWidth) => {
        const result = outcome(() =>
          tableFromGrid({ rows, rowNumbers: rows.map((_, i) => i + 1), rowWord: "row", strictWidth, rule: { fromWorkbook: true }, where: "invented.xlsx" }, { headerRow }),
        );
        if (result instanceof SkeinError) return;
        answered++;
        expect(result.rows).toHaveLength(result.dataRowNumbers.length);
        for (const row of result.rows) expect(row).toHaveLength(result.names.length);
        expectCellsFinite(result.rows);
      }),
      RUNS,
    );
    // The property must also have seen tables, not only refusals.
    expect(answered).toBeGreaterThan(10);
  });
});

/** CSV text from random cells: quoted when needed, any delimiter, ragged rows, stray quotes. */
const csvText = fc
  .tuple(
    fc.array(fc.array(fc.oneof(numberText, dateText, errorText, fc.string({ maxLength: 6 }), fc.constantFrom("", "a,b", 'say "hi"', "two\nlines", "R\u00e9ponse")), { maxLength: 5 }), { maxLength: 12 }),
    fc.constantFrom(",", ";", "\t"),
    fc.constantFrom("\n", "\r\n", "\r"),
    fc.boolean(),
  )
  .map(([rows, delimiter, lineEnd, quoteAll]) =>
    rows
      .map((row) => row.map((text) => (quoteAll || /[",;\t\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text)).join(delimiter))
      .join(lineEnd),
  );

describe("CSV text and bytes", () => {
  it("csvTable and parseCsv answer or refuse with a message for any text", () => {
    let answered = 0;
    fc.assert(
      fc.property(fc.oneof(csvText, fc.string({ maxLength: 60 })), (text) => {
        const parsed = outcome(() => parseCsv(text));
        if (!(parsed instanceof SkeinError)) expectCellsFinite(parsed);
        const table = outcome(() => csvTable(text, "invented.csv"));
        if (table instanceof SkeinError) return;
        answered++;
        for (const row of table.rows) expect(row).toHaveLength(table.names.length);
        expectCellsFinite(table.rows);
      }),
      RUNS,
    );
    expect(answered).toBeGreaterThan(10);
  });

  it("decodeText turns any bytes into text without throwing", () => {
    fc.assert(
      fc.property(fc.uint8Array({ maxLength: 80 }), fc.constantFrom([], [0xef, 0xbb, 0xbf], [0xff, 0xfe], [0xfe, 0xff]), (bytes, mark) => {
        const decoded = decodeText(Uint8Array.from([...mark, ...bytes]));
        expect(typeof decoded.text).toBe("string");
        expect(["UTF-8", "UTF-16 LE", "UTF-16 BE", "Windows-1252"]).toContain(decoded.encoding);
      }),
      RUNS,
    );
  });
});

describe("the design builder on what the readers give", () => {
  it("builds a design of finite numbers or refuses with a message, from any grid or CSV table", () => {
    let built = 0;
    fc.assert(
      fc.property(fc.oneof(grid, numericGrid, numericGrid, csvText.map((text) => outcome(() => parseCsv(text))).filter((r): r is unknown[][] => !(r instanceof SkeinError)) as fc.Arbitrary<RawCell[][]>), fc.boolean(), fc.constantFrom<boolean | "auto">(true, false, "auto"), (rows, intercept, headers) => {
        // y is the first column, x the rest, each row cut or padded as a worksheet range would not be:
        // ragged input must be refused, not crash.
        const y = rows.map((row) => row.slice(0, 1));
        const x = rows.map((row) => row.slice(1));
        const design = outcome(() => buildDesign(y, x, { intercept, headers }));
        if (design instanceof SkeinError) return;
        built++;
        expect(design.n).toBeGreaterThan(0);
        expect(design.y).toHaveLength(design.n);
        for (const v of design.y) expect(Number.isFinite(v)).toBe(true);
        for (const v of design.x) expect(Number.isFinite(v)).toBe(true);
        expect(design.predictorNames).toHaveLength(design.p);
      }),
      RUNS,
    );
    expect(built).toBeGreaterThan(10);
  });

  it("gives the same design from a typed table as the range it came from, column rule applied", () => {
    let built = 0;
    fc.assert(
      fc.property(fc.array(fc.tuple(extremeNumber, extremeNumber, fc.oneof(extremeNumber, fc.constant(null), errorText)), { minLength: 1, maxLength: 20 }), (rows) => {
        const typed = typeColumns(["y", "a", "b"], rows);
        const design = outcome(() => buildDesign([["y"], ...typed.rows.map((r) => [r[0]])], [["a", "b"], ...typed.rows.map((r) => [r[1], r[2]])], { headers: true }));
        if (design instanceof SkeinError) return;
        built++;
        for (const v of design.x) expect(Number.isFinite(v)).toBe(true);
        expect(design.n + design.skipped.length).toBe(rows.length);
      }),
      RUNS,
    );
    expect(built).toBeGreaterThan(10);
  });
});
