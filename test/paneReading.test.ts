import { describe, expect, it } from "vitest";
import { promises as fs } from "fs";
import * as path from "path";
import { parseList } from "../src/cli/args";
import { SkeinError } from "../src/engine/errors";
import { guessRanges } from "../taskpane/browserMode";
import { readTextFile } from "../taskpane/readWorkbookFile";

// Invented files of test/fixtures/reading (see its README).
const fixture = (name: string) => path.join(__dirname, "fixtures", "reading", name);

async function bufferOf(file: string): Promise<ArrayBuffer> {
  const bytes = await fs.readFile(file);
  return bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer;
}

describe("the pane's file reading", () => {
  it("says in one line what it converted and which columns it does not guess, and guesses around them", async () => {
    const file = readTextFile("trips.csv", await bufferOf(fixture("trips.csv")));
    expect(file.notices).toEqual([
      'Read as numbers: Load share (percent, 12.3% read as 0.123), Toll (currency $), Distance (m) (thousands separator ",").',
      "Not guessed as columns to fit: Date (dates), Trip ID (identifier, by its name).",
    ]);
    // Date (A) and Trip ID (B) hold numbers after reading (serial days) or text; neither is guessed.
    expect(guessRanges(file.rows, "Data", file.columns)).toEqual({ yAddress: "Data!C1:C13", xAddress: "Data!D1:F13" });
    // Without the column rule's verdict the date serials in A would be taken for y, with no
    // numeric column beside them, and there would be no guess at all.
    expect(guessRanges(file.rows, "Data")).toBeNull();
  });

  it("guesses category columns as predictors beside the numbers, never as the outcome", () => {
    // Invented: a category column (Region) between two columns of numbers.
    const rows = [["Sales", "Region", "Price"], [1, "North", 2], [2, "South", 3], [3, "North", 5], [4, "East", 4]];
    const columns = [{ defaultPredictor: true, kind: "number" }, { defaultPredictor: true, kind: "category" }, { defaultPredictor: true, kind: "number" }];
    expect(guessRanges(rows, "Data", columns)).toEqual({ yAddress: "Data!A1:A5", xAddress: "Data!B1:C5" });
    expect(guessRanges(rows.map((r) => [r[1], r[0], r[2]]), "Data", [columns[1], columns[0], columns[2]])).toEqual({ yAddress: "Data!B1:B5", xAddress: "Data!C1:C5" });
  });

  it("loads a file without a header row as plain cells, and a UTF-16 file by its real names", async () => {
    const plain = readTextFile("numbers.csv", new TextEncoder().encode("1,2\n3,4\n").buffer as ArrayBuffer);
    expect(plain.rows).toEqual([[1, 2], [3, 4]]);
    expect(plain.columns).toBeUndefined();
    const utf16 = readTextFile("utf16le-bom.csv", await bufferOf(fixture("utf16le-bom.csv")));
    expect(utf16.rows[0]).toEqual(["Réponse", "Coût", "Größe"]);
    expect(utf16.notices[0]).toBe("Read utf16le-bom.csv as UTF-16 LE text.");
  });
});

describe("lists of columns on the command line", () => {
  it("splits on commas outside double quotes", () => {
    expect(parseList('"Cost, total",Units, "say ""hi""" ,#3', "x", "fit")).toEqual(["Cost, total", "Units", 'say "hi"', "#3"]);
    expect(parseList("a,b", "x", "fit")).toEqual(["a", "b"]);
  });

  it("refuses an unclosed quote, text after a closing quote and empty items", () => {
    expect(() => parseList('"Cost, total', "x", "fit")).toThrow(SkeinError);
    expect(() => parseList('"Cost, total', "x", "fit")).toThrow(/quote that never closes/);
    expect(() => parseList('"Cost" total,Units', "x", "fit")).toThrow(/text after the quoted name "Cost"/);
    expect(() => parseList("a,,b", "x", "fit")).toThrow(/empty name/);
    expect(() => parseList('"",b', "x", "fit")).toThrow(/empty name/);
  });
});
