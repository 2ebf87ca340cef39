import { describe, expect, it } from "vitest";
import { columnIndexOfLetters, columnLetter, typeColumns, type RawCell } from "../src/io/columnTypes";
import { readDateText } from "../src/io/dateText";
import { decodeText } from "../src/io/decodeText";
import { readNumberText } from "../src/io/numberText";

// Every table here is invented for the rule it checks; expected values are read off the cells.

/** The column rule on a header and one column of cells. */
function one(name: string, cells: RawCell[], options = {}) {
  const typed = typeColumns([name], cells.map((c) => [c]), options);
  return { column: typed.columns[0], values: typed.rows.map((r) => r[0]), notices: typed.notices };
}

describe("number styles", () => {
  it("reads plain, percent, thousands, currency and decimal-comma numbers, and nothing else", () => {
    expect(readNumberText("12.3%", ".")).toEqual({ value: 0.123, percent: true, currency: "", group: "" });
    expect(readNumberText("1,234.5", ".")?.value).toBe(1234.5);
    expect(readNumberText("1.234,5", ",")?.value).toBe(1234.5);
    expect(readNumberText("1 234,5", ",")?.group).toBe(" ");
    expect(readNumberText("$3.50", ".")).toEqual({ value: 3.5, percent: false, currency: "$", group: "" });
    expect(readNumberText("-$1,234.00", ".")?.value).toBe(-1234);
    expect(readNumberText("3,50 €", ",")?.value).toBe(3.5);
    expect(readNumberText("−2", ".")?.value).toBe(-2); // a typographic minus
    for (const text of ["abc", "1.2.3", "0x1F", "NaN", "Infinity", "1e400", "$", "%", "12,34", "$5%", "1,5"]) {
      expect(readNumberText(text, "."), text).toBeUndefined();
    }
    // With a decimal comma a lone point is a thousands separator, so "1.5" is no number.
    expect(readNumberText("1.5", ",")).toBeUndefined();
  });
});

describe("the column rule", () => {
  it("turns a percent column into fractions and says so", () => {
    const { column, values } = one("Share", ["12.3%", "50%", null, "7.25 %"]);
    expect(values).toEqual([0.123, 0.5, null, 0.0725]);
    expect(column).toMatchObject({ kind: "number", defaultPredictor: true, converted: "percent, 12.3% read as 0.123" });
  });

  it("reads thousands separators and currency when the whole column uses one style", () => {
    expect(one("Revenue", ["1,234.5", "999", "12,000"]).values).toEqual([1234.5, 999, 12000]);
    expect(one("Revenue", ["1,234.5", "999", "12,000"]).column.converted).toBe('thousands separator ","');
    const price = one("Price", ["$3.50", "$12", "$1,000.25"]);
    expect(price.values).toEqual([3.5, 12, 1000.25]);
    expect(price.column.converted).toBe('currency $, thousands separator ","');
  });

  it("keeps a column that mixes styles as text and names the styles", () => {
    const { column, values, notices } = one("Price", ["$3.50", "€2.10", "$4.00", "3"]);
    expect(values).toEqual(["$3.50", "€2.10", "$4.00", "3"]);
    expect(column).toMatchObject({ kind: "text", defaultPredictor: false, reason: "numbers written in more than one way" });
    expect(notices[0]).toMatch(/^Price writes numbers in more than one way \("\$3\.50", "€2\.10", "3"\)/);
  });

  it("reads a decimal comma only when asked (semicolon or tab files)", () => {
    expect(one("x", ["1,5", "2,25"], { decimalComma: true }).values).toEqual([1.5, 2.25]);
    expect(one("x", ["1,5", "2,25"]).values).toEqual(["1,5", "2,25"]);
  });

  it("says when a workbook stored numbers as text, and reads them as a CSV's", () => {
    const { column, values } = one("Units", ["12", 13, "14.5"], { fromWorkbook: true });
    expect(values).toEqual([12, 13, 14.5]);
    expect(column.converted).toBe("numbers stored as text");
    expect(one("Units", ["12", "13", "14.5"]).column.converted).toBeUndefined();
  });

  it("marks date columns (workbook dates and date text) and gives serial day numbers", () => {
    // 2020-01-01 is serial 43831 in the 1900 date system (Excel's day numbering: 1900-01-01 is 1, with its
    // phantom 1900-02-29, so 1970-01-01 is 25569; 25569 + 18262 days = 43831).
    const workbook = one("When", [new Date(Date.UTC(2020, 0, 1)), new Date(Date.UTC(2020, 0, 2, 12))]);
    expect(workbook.values).toEqual([43831, 43832.5]);
    expect(workbook.column).toMatchObject({ kind: "date", defaultPredictor: false, reason: "dates" });
    expect(one("When", [new Date(Date.UTC(2020, 0, 1))], { date1904: true }).values).toEqual([43831 - 1462]);
    expect(one("Date", ["2020-01-01", "2020-01-02", "2020-01-03"]).values).toEqual([43831, 43832, 43833]);
    // 13/01/2020 can only be day first, so 02/01/2020 is 2 January.
    expect(one("Date", ["13/01/2020", "02/01/2020"]).values).toEqual([43843, 43832]);
    expect(one("Date", ["01/13/2020", "01/02/2020"]).values).toEqual([43843, 43832]);
    const unclear = one("Date", ["01/02/2020", "03/04/2020"]);
    expect(unclear.values).toEqual(["01/02/2020", "03/04/2020"]);
    expect(unclear.column.reason).toBe("dates; day and month order unclear, kept as text");
    expect(one("Date", ["1 Mar 2024", "March 2, 2024"]).values).toEqual([45352, 45353]);
  });

  it("marks identifier columns by name or by values", () => {
    expect(one("Trip ID", [5.5, 7, 7]).column).toMatchObject({ kind: "identifier", defaultPredictor: false, reason: "identifier, by its name" });
    for (const name of ["ID", "customer_id", "TripId", "Order no.", "Invoice number", "Key"]) expect(one(name, [1, 2, 2]).column.kind, name).toBe("identifier");
    for (const name of ["Paid", "Video", "Idle time", "Number of stops", "Width"]) expect(one(name, [1, 2, 2]).column.kind, name).toBe("number");
    const counter = Array.from({ length: 12 }, (_, i) => 1001 + i * 2);
    expect(one("Row", counter).column).toMatchObject({ kind: "identifier", reason: "identifier: every value a different whole number, as a counter" });
    // Different whole numbers spread wide are measurements, not a counter.
    expect(one("Population", counter.map((v) => v * 97)).column.kind).toBe("number");
    // Fewer than ten rows prove nothing.
    expect(one("Row", counter.slice(0, 9)).column.kind).toBe("number");
    // Invented measurements: different whole numbers close together but in no order down the
    // rows (distances in km, doses in mg) are predictors. Before, any close-together distinct
    // whole numbers were left out as an identifier.
    const distances = [12, 7, 19, 3, 15, 22, 9, 4, 17, 11, 6, 20];
    expect(one("Distance", distances).column).toMatchObject({ kind: "number", defaultPredictor: true, reason: "numbers" });
    expect(one("Dose", [40, 10, 30, 20, 50, 25, 35, 15, 45, 5]).column.kind).toBe("number");
    // The same values rising down the rows read as a counter.
    expect(one("Distance", [...distances].sort((a, b) => a - b)).column.kind).toBe("identifier");
    // A counter with blank cells between its values is still a counter.
    expect(one("Row", [1, 2, null, 3, 4, 5, 6, 7, 8, 9, 10]).column.kind).toBe("identifier");
    expect(one("Trip", ["T1", "T2", "T3"]).column).toMatchObject({ kind: "identifier", reason: "identifier: every value different" });
  });

  it("keeps text and yes/no columns as categories, as text, for the design", () => {
    const region = one("Region", ["North", "South", "North", "East", null, "#N/A"]);
    expect(region.values).toEqual(["North", "South", "North", "East", null, "#N/A"]);
    expect(region.column).toMatchObject({ kind: "category", defaultPredictor: true, levels: 3, reason: "categories (3 values)" });
    expect(one("Member", [true, false, true]).column).toMatchObject({ kind: "category", levels: 2 });
    expect(one("Member", ["yes", "no", "no"]).column.kind).toBe("category");
    const many = Array.from({ length: 50 }, (_, i) => `level ${i % 25}`);
    expect(one("Code", many).column).toMatchObject({ kind: "text", defaultPredictor: false, reason: "text with 25 different values" });
  });

  it("leaves out constant and empty columns, keeps a mostly-number column with a typo as numbers", () => {
    expect(one("Site", [5, 5, 5]).column).toMatchObject({ kind: "number", defaultPredictor: false, reason: "the same number in every row" });
    expect(one("Note", ["x", "x"]).column).toMatchObject({ kind: "text", defaultPredictor: false });
    expect(one("Blank", [null, "  "]).column).toMatchObject({ kind: "empty", defaultPredictor: false });
    expect(one("Errors", ["#N/A", "#DIV/0!"]).column).toMatchObject({ kind: "text", reason: "error values only" });
    expect(one("Weight", [1.5, "n/a", 2.5, 3]).column.kind).toBe("number");
  });

  it("renames a duplicated header with column letters, never silently using the first", () => {
    const typed = typeColumns(["Price", "Units", "Price", null], [[1, 2, 3, 4]], { firstColumn: 1 });
    expect(typed.names).toEqual(["Price (B)", "Units", "Price (D)", "column E"]);
    expect(typed.notices[0]).toBe('The header "Price" names 2 columns (B, D); they are called "Price (B)", "Price (D)" here. Rename them in the file to choose names.');
  });

  it("letters and indexes", () => {
    expect([0, 25, 26, 701, 702].map(columnLetter)).toEqual(["A", "Z", "AA", "ZZ", "AAA"]);
    expect(["A", "z", "AA", "ZZ", "AAA", "A1", "", "ABCD"].map(columnIndexOfLetters)).toEqual([0, 25, 26, 701, 702, undefined, undefined, undefined]);
  });
});

describe("date text", () => {
  it("refuses what is no calendar date", () => {
    for (const text of ["2020-02-30", "2020-13-01", "32/01/2020", "13/13/2020", "hello", "12", "1 Foo 2020", "2020-01-01 25:00"]) {
      expect(readDateText(text), text).toBeUndefined();
    }
    expect(readDateText("2020-01-01T06:00:00")).toEqual({ order: "known", year: 2020, month: 1, day: 1, dayFraction: 0.25 });
  });
});

describe("decodeText", () => {
  const text = "Réponse,Coût\n1,2\n";
  it("reads UTF-8 with and without a byte-order mark, UTF-16 with one, Windows-1252 otherwise", () => {
    const utf8 = new TextEncoder().encode(text);
    expect(decodeText(utf8)).toEqual({ text, encoding: "UTF-8", noteworthy: false });
    expect(decodeText(Uint8Array.from([0xef, 0xbb, 0xbf, ...utf8])).text).toBe(text);
    const le = Uint8Array.from([0xff, 0xfe, ...Array.from(text).flatMap((c) => [c.charCodeAt(0) & 255, c.charCodeAt(0) >> 8])]);
    expect(decodeText(le)).toEqual({ text, encoding: "UTF-16 LE", noteworthy: true });
    const be = Uint8Array.from([0xfe, 0xff, ...Array.from(text).flatMap((c) => [c.charCodeAt(0) >> 8, c.charCodeAt(0) & 255])]);
    expect(decodeText(be)).toEqual({ text, encoding: "UTF-16 BE", noteworthy: true });
    // é = E9 and û = FB in Windows-1252: not valid UTF-8 on their own.
    const latin = Uint8Array.from(Array.from(text).map((c) => c.charCodeAt(0)));
    expect(decodeText(latin)).toEqual({ text, encoding: "Windows-1252", noteworthy: true });
  });
});
