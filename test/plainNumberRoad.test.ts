import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { designOfTable, type LoadedDesign } from "../src/cli/loadDesign";
import { SkeinError } from "../src/engine/errors";
import type { DataTable } from "../src/io/dataTable";
import { decodeText } from "../src/io/decodeText";
import { csvTable, csvTableOfFields, plainNumberCsv } from "../src/io/readCsv";
import { longDecimalValue } from "../src/io/longDecimal";
import { createRandom } from "../src/engine/random";

// A file of plain numbers is read straight from its bytes into columns of doubles and built into
// a design without rows of cells (the one-pass road). It must give exactly what the field
// splitter and the range design builder give for the same text. Invented texts, mostly plain
// numbers with the things that must leave the road or change the table mixed in: blanks, spaces,
// line ends of every kind, empty lines, numbers of every form and length, text, quotes,
// percentages, non-ASCII bytes, rows of another width, header names of every kind.

const plainNumber = fc.oneof(
  fc.double({ noNaN: true, noDefaultInfinity: true }).map(String),
  fc.double({ min: -1e6, max: 1e6, noNaN: true }).map((v) => v.toPrecision(10)),
  fc.integer({ min: -100000, max: 100000 }).map(String),
  fc.integer({ min: 0, max: 999 }).map((v) => `0${v}.${v}00`),
  fc.constantFrom("-0", "+4", ".5", "5.", "-.25", "1e3", "2E-2", "1e+2", "0e999", "1e-400", "123456789012345678", "0.30000000000000004", "9007199254740993", "1e22", "1e23", "4.35e-22", "000000000000000000001", `1${"0".repeat(70)}`),
);
const intruder = fc.constantFrom("1e400", "abc", "12%", '"3"', "1,5", "\u00bd", "1e", ".", "-", "1.2.3", "#N/A", "TRUE", "$4", " 7 x", "2024-03-01", "\r", "NaN");
const cell = fc.oneof(
  { weight: 30, arbitrary: plainNumber },
  { weight: 4, arbitrary: plainNumber.map((v) => ` ${v}\t`) },
  { weight: 2, arbitrary: fc.constantFrom("", " ", "\t") },
  { weight: 1, arbitrary: intruder },
);
/** Half the tables hold no intruder, so that many stay on the road as far as a design. */
const cleanCell = fc.oneof({ weight: 30, arbitrary: plainNumber }, { weight: 1, arbitrary: fc.constantFrom("", " ") });
const name = fc.constantFrom("y", "x", "Price", " Price ", "id", "Trip ID", "x1", "x2", "12", "#N/A", "Gr\u00f6\u00dfe", '"a,b"', "a;b", "", "\ufeffz", "a\tb");
const lineEnd = fc.constantFrom("\n", "\r\n", "\r", "\n\n", "\r\n \r\n");

/** A table of invented text: a header, rows of cells (mostly one per name), then line ends. */
const csvText = fc
  .integer({ min: 1, max: 4 })
  .chain((width) => fc.tuple(fc.constant(width), fc.boolean()))
  .chain(([width, clean]) =>
    fc.tuple(
      fc.array(name, { minLength: width, maxLength: width }),
      fc.array(
        clean ? fc.array(cleanCell, { minLength: width, maxLength: width })
        : fc.oneof({ weight: 12, arbitrary: fc.array(cell, { minLength: width, maxLength: width }) }, { weight: 1, arbitrary: fc.array(cell, { minLength: 0, maxLength: width + 1 }) }),
        { minLength: 2, maxLength: 30 },
      ),
      // One line end throughout, or any mix of them.
      fc.oneof({ weight: 4, arbitrary: lineEnd.map((end) => [end]) }, { weight: 1, arbitrary: fc.array(lineEnd, { minLength: 16, maxLength: 16 }) }),
      fc.boolean(),
      fc.constantFrom("", "\ufeff"),
      // A counter column (rising whole numbers: an identifier) or a constant one, sometimes.
      fc.constantFrom("none", "counter", "constant"),
    ),
  )
  .map(([names, rows, ends, finalEnd, mark, extra]) => {
    const lines = [names.join(","), ...rows.map((row, i) => [...row, ...(extra === "none" ? [] : [extra === "counter" ? String(i + 3) : "5"])].join(","))];
    if (extra !== "none") lines[0] += ",n";
    let text = mark;
    lines.forEach((line, i) => (text += line + (i < lines.length - 1 || finalEnd ? ends[i % ends.length] : "")));
    return text;
  });

/** plainNumberCsv on bytes held in memory, handed over at most `piece` bytes a call, its buffer `pieceBytes` long. */
function readInPieces(bytes: Uint8Array, piece: number, pieceBytes: number, where = "invented.csv"): ReturnType<typeof plainNumberCsv> {
  let at = 0;
  const readMore = async (buffer: Uint8Array, offset: number, length: number): Promise<number> => {
    const count = Math.min(length, piece, bytes.length - at);
    buffer.set(bytes.subarray(at, at + count), offset);
    at += count;
    return count;
  };
  return plainNumberCsv(readMore, bytes.length, where, pieceBytes);
}

/** A table, or the message it was refused with. */
function outcome<T>(run: () => T): T | string {
  try {
    return run();
  } catch (error) {
    if (error instanceof SkeinError) return error.message;
    throw error;
  }
}

/** Same length and the same doubles bit for bit (-0 apart from 0), NaN for blanks alike. */
function expectSameNumbers(a: ArrayLike<number>, b: ArrayLike<number>): void {
  expect(a.length).toBe(b.length);
  for (let i = 0; i < a.length; i++) if (!Object.is(a[i], b[i])) expect([i, a[i]]).toEqual([i, b[i]]);
}

function expectSameTable(road: DataTable | string, fields: DataTable | string): void {
  if (typeof road === "string" || typeof fields === "string") {
    expect(road).toEqual(fields);
    return;
  }
  const plain = (t: DataTable) => ({ names: t.names, columns: t.columns, notices: t.notices, headerRow: t.headerRow, dataRowNumbers: t.dataRowNumbers, where: t.where, sheetName: t.sheetName });
  expect(plain(road)).toEqual(plain(fields));
  expect(road.rows.length).toBe(fields.rows.length);
  road.rows.forEach((row, i) => {
    expect(row.map((c) => typeof c)).toEqual(fields.rows[i].map((c) => typeof c));
    expectSameNumbers(row.map((c) => (c === null ? NaN : (c as number))), fields.rows[i].map((c) => (c === null ? NaN : (c as number))));
  });
}

function expectSameDesign(road: LoadedDesign | string, fields: LoadedDesign | string): void {
  if (typeof road === "string" || typeof fields === "string") {
    expect(road).toEqual(fields);
    return;
  }
  const { design: a, ...restA } = road;
  const { design: b, ...restB } = fields;
  expect(restA).toEqual(restB);
  expectSameNumbers(a.y, b.y);
  expectSameNumbers(a.x, b.x);
  expect(Array.from(a.rowIndex)).toEqual(Array.from(b.rowIndex));
  expect({ ...a, x: null, y: null, rowIndex: null }).toEqual({ ...b, x: null, y: null, rowIndex: null });
}

describe("the one-pass road for files of plain numbers", () => {
  it("gives the field splitter's table and design, bit for bit, from text and from bytes read in pieces", async () => {
    let road = 0;
    let designs = 0;
    await fc.assert(
      fc.asyncProperty(csvText, fc.boolean(), fc.option(fc.integer({ min: 1, max: 30 }), { nil: undefined }), fc.boolean(), fc.constantFrom(1, 2), fc.integer({ min: 1, max: 40 }), fc.integer({ min: 1, max: 64 }), async (text, intercept, leaveOutRow, someX, k, piece, pieceBytes) => {
        const fields = outcome(() => csvTableOfFields({ text }, "invented.csv"));
        const fromText = outcome(() => csvTable(text, "invented.csv"));
        expectSameTable(fromText, fields);
        // From bytes in pieces of every size (lines cut anywhere, buffers smaller than a line): only the
        // header line is decoded on the road, and the encoding must be the whole file's.
        const bytes = new TextEncoder().encode(text);
        const decoded = decodeText(bytes);
        const fromBytes = await readInPieces(bytes, piece, pieceBytes);
        const wanted = outcome(() => csvTableOfFields({ text: decoded.text }, "invented.csv"));
        if (fromBytes !== null) {
          expectSameTable(fromBytes.table, wanted);
          expect(fromBytes.encoding).toEqual({ encoding: decoded.encoding, noteworthy: decoded.noteworthy });
        }
        // The road from bytes is taken exactly when the one from text is.
        expect(fromBytes !== null).toBe(typeof fromText !== "string" && fromText.numberColumns !== undefined);
        if (typeof fromText === "string" || typeof fields === "string") return;
        if (fromText.numberColumns) road++;
        // Every column in turn as y, the others (or the first of them) as x, a row left out now and then.
        for (const y of fromText.names) {
          const others = fromText.names.filter((n) => n !== y);
          const source = { y, x: someX && others.length > 0 ? [others[others.length - 1]] : undefined, intercept, k, leaveOut: leaveOutRow === undefined ? undefined : [leaveOutRow] };
          const built = outcome(() => designOfTable(fromText, source));
          expectSameDesign(built, outcome(() => designOfTable(fields, source)));
          if (typeof built !== "string" && fromText.numberColumns) designs++;
        }
      }),
      { numRuns: 2000, seed: 20261202 },
    );
    // The road must have been taken, and designs built on it, not only refusals.
    expect(road).toBeGreaterThan(300);
    expect(designs).toBeGreaterThan(100);
  });

  it("reads a header in Windows-1252 over plain numbers as the whole file's decoding does", async () => {
    // Invented bytes: "Größe" in Windows-1252 (not valid UTF-8), then plain numbers.
    const bytes = Uint8Array.from([...Array.from("Gr"), 0xf6, 0xdf, ...Array.from("e,y\n1,2\n3,4.5\n2,7\n")].map((c) => (typeof c === "number" ? c : c.charCodeAt(0))));
    const { table, encoding } = (await readInPieces(bytes, 5, 8, "latin.csv"))!;
    expect(table.numberColumns).toBeDefined();
    expect(encoding).toEqual({ encoding: "Windows-1252", noteworthy: true });
    expectSameTable(table, csvTableOfFields({ text: decodeText(bytes).text }, "latin.csv"));
    expect(table.names).toEqual(["Größe", "y"]);
  });

  it("makes room for more rows than the first line's length foretells", () => {
    // Invented: a long first line, then 500 short ones (the columns grow several times), blanks between.
    const text = `a,b\n${"1.000000001,".repeat(1)}2.0000000002\n${Array.from({ length: 500 }, (_, i) => (i % 7 === 0 ? "\n" : `${i},${i % 3 === 0 ? "" : 2 * i}\n`)).join("")}`;
    const road = csvTable(text, "growing.csv");
    expect(road.numberColumns).toBeDefined();
    expectSameTable(road, csvTableOfFields({ text }, "growing.csv"));
    expect(road.dataRowNumbers.length).toBe(1 + 500 - Math.ceil(500 / 7));
  });

  it("reads numbers of 16 and more significant digits, and exponents past 22, as Number() does", () => {
    // Invented cells beyond the exact whole-number and power-of-ten range, read through Number().
    const cells = ["0.30000000000000004", "9007199254740993", "1e23", "4.35e-22", "123456789.123456789", "-1.7976931348623157e308", "5e-324", "0.1e-30"];
    const table = csvTable(`a\n${cells.join("\n")}\n`, "long.csv");
    expect(table.numberColumns).toBeDefined();
    expectSameNumbers(table.numberColumns![0], cells.map(Number));
  });

  it("reads full-precision exports (16 to 19 significant digits) as Number() does, near halfway points too", () => {
    // Reference: Number(), the ECMAScript conversion of decimal text to the nearest double
    // (round half to even). Invented doubles written with 16-19 significant digits, and the
    // exact halfway points between neighbouring doubles written with 17-19 digits, cut and
    // rounded: the texts nearest to a rounding boundary that such digits can come.
    const random = createRandom(20261204);
    const cells: string[] = [];
    for (let t = 0; t < 20000; t++) {
      const magnitude = 10 ** Math.floor(70 * random.next() - 35);
      const value = (random.next() - 0.5) * magnitude;
      cells.push(value.toPrecision(16 + (t % 4)), String(value));
      const [cut, rounded] = halfwayTexts(Math.abs(value), 17 + (t % 3));
      cells.push(cut, rounded);
    }
    const table = csvTable(`a\n${cells.join("\n")}\n`, "full-precision.csv");
    expect(table.numberColumns).toBeDefined();
    expectSameNumbers(table.numberColumns![0], cells.map(Number));
  });

  it("decides every full-precision export of a double between 1e-45 and 1e14 without reading its text", () => {
    // NaN sends a number to Number(), which would hide a road that never decides. Invented
    // doubles, written as 17 significant digits (toExponential(16)); below 2^53 no such decimal
    // is a halfway point between doubles, so the bracket decides each unless one lies within
    // 2^-90 of one (about one in 2^37).
    const random = createRandom(7);
    for (let t = 0; t < 50000; t++) {
      const value = (random.next() + 0.05) * 10 ** Math.floor(59 * random.next() - 45);
      const [, first, rest, exponent] = /^(\d)\.(\d{16})e([+-]\d+)$/.exec(value.toExponential(16))!;
      const digits = first + rest;
      const read = longDecimalValue(Number(digits.slice(0, 15)), Number(digits.slice(15)), 2, Number(exponent) - 16);
      if (read !== value) expect([value.toExponential(16), read]).toEqual([value.toExponential(16), value]);
    }
  });
});

/**
 * The halfway point between `value` (a positive finite double) and the next double up, as its
 * exact decimal cut to `digits` significant digits, and the same rounded up in its last digit.
 */
function halfwayTexts(value: number, digits: number): [string, string] {
  const view = new DataView(new ArrayBuffer(8));
  view.setFloat64(0, value);
  const bits = view.getBigUint64(0);
  const exponentBits = Number((bits >> 52n) & 0x7ffn);
  const fraction = bits & ((1n << 52n) - 1n);
  // value = mantissa · 2^exponent exactly; the halfway point is (2·mantissa + 1) · 2^(exponent − 1).
  const mantissa = exponentBits === 0 ? fraction : fraction | (1n << 52n);
  const exponent = (exponentBits === 0 ? 1 : exponentBits) - 1075;
  const odd = 2n * mantissa + 1n;
  const shift = exponent - 1;
  // As a whole number of decimal digits times 10^scale.
  const [whole, scale] = shift >= 0 ? [odd << BigInt(shift), 0] : [odd * 5n ** BigInt(-shift), shift];
  const text = whole.toString();
  const kept = text.slice(0, digits);
  const power = scale + text.length - kept.length;
  const up = (BigInt(kept) + 1n).toString();
  return [`${kept}e${power}`, `${up}e${power}`];
}
