import { describe, expect, it } from "vitest";
import { csvTable, parseCsv, splitCsv } from "../src/io/readCsv";
import { SkeinError } from "../src/engine/errors";

// Expected rows are read off each input string by hand (derivation in this
// test, following the CSV rules of RFC 4180).
describe("parseCsv", () => {
  it("splits fields and lines and converts plain decimal numbers", () => {
    expect(parseCsv("name,value\na,1\nb,2.5\n")).toEqual([["name", "value"], ["a", 1], ["b", 2.5]]);
  });

  it("accepts signs, exponents and bare decimal points", () => {
    expect(parseCsv("v\n-3\n+4\n1e3\n-2.5E-2\n.5\n7.\n")).toEqual([["v"], [-3], [4], [1000], [-0.025], [0.5], [7]]);
  });

  it("keeps text that only looks partly numeric as text", () => {
    // Unquoted, a thousands separator is a delimiter: two fields.
    expect(parseCsv("v\n1,000\n")).toEqual([["v"], [1, 0]]);
    expect(parseCsv('v\n"1,000"\n12%\n$5\nNaN\nInfinity\n1.2.3\n0x1F\n- 3\n')).toEqual([
      ["v"], ["1,000"], ["12%"], ["$5"], ["NaN"], ["Infinity"], ["1.2.3"], ["0x1F"], ["- 3"],
    ]);
  });

  it("turns empty cells into null and keeps the row's width", () => {
    expect(parseCsv("a,b,c\n1,,3\n,,\n4,5,\n")).toEqual([["a", "b", "c"], [1, null, 3], [null, null, null], [4, 5, null]]);
  });

  it("trims whitespace around numbers but keeps text as written", () => {
    expect(parseCsv("a,b\n  12 , hello \n")).toEqual([["a", "b"], [12, " hello "]]);
  });

  it("handles quoted fields with delimiters, escaped quotes and line breaks", () => {
    const text = 'id,comment\n1,"red, green"\n2,"she said ""hi"""\n3,"two\nlines"\n4,""\n';
    expect(parseCsv(text)).toEqual([["id", "comment"], [1, "red, green"], [2, 'she said "hi"'], [3, "two\nlines"], [4, null]]);
  });

  it("reads lines with quotes or lone carriage returns like plain lines around them, with each row's line", () => {
    // Plain lines take a quicker road than lines holding a quote or a lone CR; the fields and
    // the 1-based lines (counted by hand here) must not depend on which.
    const text = 'a,b\r\n1,2\r"x,\ny",3\n4, 5 \r\n\r\n\n6,"7"\n8,\n';
    const fields = splitCsv(text);
    expect(fields.rows).toEqual([["a", "b"], ["1", "2"], ["x,\ny", "3"], ["4", " 5 "], ["6", "7"], ["8", null]]);
    expect(fields.lines).toEqual([1, 2, 3, 5, 8, 9]);
  });

  it("converts quoted numbers too (quotes only protect characters in CSV)", () => {
    expect(parseCsv('a,b\n"12","-1.5"\n')).toEqual([["a", "b"], [12, -1.5]]);
  });

  it("accepts CRLF and lone CR line ends and a byte-order mark", () => {
    expect(parseCsv("\uFEFFa,b\r\n1,2\r\n3,4\r\n")).toEqual([["a", "b"], [1, 2], [3, 4]]);
    expect(parseCsv("a,b\r1,2\r")).toEqual([["a", "b"], [1, 2]]);
  });

  it("handles a last line without a line end", () => {
    expect(parseCsv("a,b\n1,2")).toEqual([["a", "b"], [1, 2]]);
    expect(parseCsv("a,b\n1,")).toEqual([["a", "b"], [1, null]]);
  });

  it("drops empty lines and trailing rows of empty cells", () => {
    expect(parseCsv("a,b\n\n1,2\n\r\n3,4\n,\n,\n\n")).toEqual([["a", "b"], [1, 2], [3, 4]]);
  });

  it("returns no rows for empty text", () => {
    expect(parseCsv("")).toEqual([]);
    expect(parseCsv("\uFEFF\n\n")).toEqual([]);
  });

  it("detects semicolon delimiters and then reads decimal commas", () => {
    expect(parseCsv("a;b\n1,5;2\n-0,25;3e2\n")).toEqual([["a", "b"], [1.5, 2], [-0.25, 300]]);
  });

  it("detects tab delimiters", () => {
    expect(parseCsv("a\tb\n1\t2\n")).toEqual([["a", "b"], [1, 2]]);
  });

  it("ignores delimiters inside quotes when detecting the delimiter", () => {
    expect(parseCsv('"a;b;c",d\n1,2\n')).toEqual([["a;b;c", "d"], [1, 2]]);
  });

  it("keeps rows of different lengths as they are (the caller decides)", () => {
    expect(parseCsv("a,b\n1,2,3\n4\n")).toEqual([["a", "b"], [1, 2, 3], [4]]);
  });

  it("reports a quoted field that never ends, with its line", () => {
    try {
      parseCsv('a,b\n1,2\n3,"oops\n4,5\n');
      throw new Error("expected a SkeinError");
    } catch (error) {
      expect(error).toBeInstanceOf(SkeinError);
      expect((error as SkeinError).code).toBe("bad-input");
      expect((error as SkeinError).message).toMatch(/starts on line 3.*never ends/);
    }
  });
});

describe("csvTable decimal mark", () => {
  it("reads decimal points in a semicolon file whose points cannot separate thousands (invented values)", () => {
    // "2.501" alone could be 2501 with a thousands point, but "0.512" cannot: the
    // file writes decimal points. Before, every cell was read as thousands: 2501, 512, 13584.
    const table = csvTable("x;y\n2.501;5.708\n0.512;13.584\n", "points.csv");
    expect(table.rows).toEqual([[2.501, 5.708], [0.512, 13.584]]);
    expect(table.notices[0]).toBe("Fields are separated by semicolons; numbers use a decimal point.");
    // A file with decimal commas and thousands points still reads them so.
    expect(csvTable("x;y\n1.234,5;2\n2,25;3\n", "commas.csv").rows).toEqual([[1234.5, 2], [2.25, 3]]);
  });
});

describe("csvTable on files of plain numbers (the one-pass road)", () => {
  // Invented files; expected values read off the text by hand.
  it("reads blanks, CRLF line ends and empty lines as the field splitter does, with each row's line", () => {
    const text = "y,x\r\n1,2\r\n3, \r\n\r\n-0.5,1e3\r\n";
    const table = csvTable(text, "plain.csv");
    expect(table.numberColumns).toBeDefined();
    expect(table.rows).toEqual([[1, 2], [3, null], [-0.5, 1000]]);
    expect(table.dataRowNumbers).toEqual([2, 3, 5]);
    expect(table.columns.map((c) => c.kind)).toEqual(["number", "number"]);
  });

  it("leaves any other file to the field splitter, with the same table as before", () => {
    // A percentage three lines down: the column mixes styles and stays text (columnTypes rule).
    const mixed = "y,x\n1,2\n3,4\n5,12%\n";
    const table = csvTable(mixed, "mixed.csv");
    expect(table.numberColumns).toBeUndefined();
    expect(table.rows).toEqual([[1, "2"], [3, "4"], [5, "12%"]]);
    expect(table.notices.join(" ")).toMatch(/x writes numbers in more than one way/);
    // A quoted field, a blank header name: the splitter's road too.
    expect(csvTable('y,x\n1,"2"\n', "quoted.csv").numberColumns).toBeUndefined();
    expect(csvTable("y,\n1,2\n", "blank-name.csv").numberColumns).toBeUndefined();
  });
});
