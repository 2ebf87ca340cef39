import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { promises as fs } from "fs";
import * as os from "os";
import * as path from "path";
import ExcelJS from "exceljs";
import { SkeinError } from "../src/engine/errors";
import { readDataTable } from "../src/io/readTable";
import { readDataFile } from "../taskpane/readWorkbookFile";

// The files under test/fixtures/reading are invented, written by hand (or by a few lines of
// script) for these checks; the workbooks below are built here. Expected cells are read off them.
const FIXTURES = path.join(__dirname, "fixtures", "reading");
const fixture = (name: string) => path.join(FIXTURES, name);

let dir: string;

async function expectBadInput(promise: Promise<unknown>, pattern: RegExp): Promise<void> {
  const error = await promise.then(() => undefined, (e: unknown) => e);
  expect(error).toBeInstanceOf(SkeinError);
  expect((error as SkeinError).code).toBe("bad-input");
  expect((error as SkeinError).message).toMatch(pattern);
}

beforeAll(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), "skein-readData-"));

  const covers = new ExcelJS.Workbook();
  covers.addWorksheet("Cover").getCell("B2").value = "Quarterly fleet report (invented)";
  covers.getWorksheet("Cover")!.getCell("B3").value = "Prepared by the planning desk";
  covers.addWorksheet("Contents").getCell("A1").value = "1. Summary";
  covers.addWorksheet("Blank");
  await covers.xlsx.writeFile(path.join(dir, "covers.xlsx"));

  const book = new ExcelJS.Workbook();
  const cover = book.addWorksheet("Cover");
  cover.getCell("A1").value = "Read me first";
  cover.getCell("A2").value = "Version";
  cover.getCell("B2").value = 3;
  const data = book.addWorksheet("Trips");
  // A grouping header merged over B1:C1 above the real names in row 2.
  data.getCell("B1").value = "Inputs";
  data.mergeCells("B1:C1");
  data.getRow(2).values = ["Date", "Distance", "Load", "Fuel", "Depot"];
  const days = [1, 2, 3, 4, 5, 6];
  days.forEach((day, i) => {
    const row = data.getRow(3 + i);
    row.getCell(1).value = new Date(Date.UTC(2026, 2, day));
    // Distance typed as numbers, two of them stored as text.
    row.getCell(2).value = i % 3 === 0 ? String(40 + 10 * i) : 40 + 10 * i;
    row.getCell(3).value = { formula: `${i}/10`, result: i / 10 };
    row.getCell(4).value = 5 + 0.1 * (40 + 10 * i) + (i % 2);
  });
  // Depot merged down E3:E5 and E6:E8: only the first cell of each holds the value.
  data.getCell("E3").value = "North";
  data.mergeCells("E3:E5");
  data.getCell("E6").value = "South";
  data.mergeCells("E6:E8");
  await book.xlsx.writeFile(path.join(dir, "report.xlsx"));
});

afterAll(async () => {
  await fs.rm(dir, { recursive: true, force: true });
});

describe("text files", () => {
  it("reads percent, currency, thousands, dates and an identifier the same way every time", async () => {
    const table = await readDataTable(fixture("trips.csv"));
    expect(table.names).toEqual(["Date", "Trip ID", "Load share", "Toll", "Distance (m)", "Fuel used (L)"]);
    // First data line: 2026-03-01,T-100,61.1%,$6.93,"209,455",20.86; 2026-03-01 is serial 46082 (43831 for
    // 2020-01-01 plus 2251 days).
    expect(table.rows[0]).toEqual([46082, "T-100", 0.611, 6.93, 209455, 20.86]);
    expect(table.columns.map((c) => c.kind)).toEqual(["date", "identifier", "number", "number", "number", "number"]);
    expect(table.headerRow).toBe(1);
    expect(table.dataRowNumbers.slice(0, 2)).toEqual([2, 3]);
  });

  it("detects semicolons and tabs, and the decimal mark they use", async () => {
    const comma = await readDataTable(fixture("semicolon-comma.csv"));
    expect(comma.rows[1]).toEqual([1253.4, 5.82, 0.505]);
    expect(comma.notices[0]).toBe("Fields are separated by semicolons; a comma in a number is its decimal mark (1,5 is 1.5).");
    const point = await readDataTable(fixture("semicolon-point.csv"));
    expect(point.columns.every((c) => c.kind === "number")).toBe(true);
    expect(point.notices[0]).toBe("Fields are separated by semicolons; numbers use a decimal point.");
    expect((await readDataTable(fixture("tab-comma.tsv"))).rows[1]).toEqual([1.5, 3.25]);
  });

  it("reads UTF-8 with a byte-order mark, UTF-16 LE/BE with one, and Windows-1252, to the same table", async () => {
    const expected = [["Réponse", "Coût", "Größe"], [1, 2.5, 3]];
    for (const [file, notice] of [
      ["utf8-bom.csv", undefined],
      ["utf16le-bom.csv", "Read utf16le-bom.csv as UTF-16 LE text."],
      ["utf16be-bom.csv", "Read utf16be-bom.csv as UTF-16 BE text."],
      ["windows-1252.csv", "Read windows-1252.csv as Windows-1252 text (its bytes are not valid UTF-8)."],
    ] as const) {
      const table = await readDataTable(fixture(file));
      expect([table.names, table.rows[0]], file).toEqual(expected);
      expect(table.notices[0], file).toBe(notice);
    }
  });

  it("hints at a grouping header, and reads the real one with a header row", async () => {
    const first = await readDataTable(fixture("grouping-header.csv"));
    expect(first.notices).toContain("Line 1 has blank names and line 2 holds only text: if line 2 holds the column names, read it as the header (--header-row 2).");
    const second = await readDataTable(fixture("grouping-header.csv"), { headerRow: 2 });
    expect(second.names).toEqual(["Batch", "Temperature", "Pressure", "Yield"]);
    expect(second.rows[0]).toEqual(["B1", 38.7, 1.63, 48.9]);
    expect(second.dataRowNumbers[0]).toBe(3);
    await expectBadInput(readDataTable(fixture("grouping-header.csv"), { headerRow: 40 }), /header line 40 of grouping-header.csv holds nothing \(the data end at line 10\)/);
  });

  it("keeps a name with a comma whole and renames a duplicated one", async () => {
    const table = await readDataTable(fixture("duplicate-and-comma.csv"));
    expect(table.names).toEqual(["Price (A)", "Cost, total", "Price (C)", "Units"]);
  });
});

describe("workbooks", () => {
  it("names every sheet when none holds a table of numbers", async () => {
    await expectBadInput(
      readDataTable(path.join(dir, "covers.xlsx")),
      /^No sheet of covers.xlsx holds a table of numbers .*: "Cover" \(1 data row\), "Contents" \(0 data rows\), "Blank" \(empty\)\. .*--sheet/,
    );
  });

  it("reads the first sheet holding numbers, says which, and treats dates, text numbers and merges one way", async () => {
    const table = await readDataTable(path.join(dir, "report.xlsx"), { headerRow: 2 });
    expect(table.sheetName).toBe("Trips");
    expect(table.notices[0]).toBe('Read sheet "Trips", the first sheet holding a table of numbers (before it: "Cover" (0 data rows)).');
    expect(table.names).toEqual(["Date", "Distance", "Load", "Fuel", "Depot"]);
    // 2026-03-01 is serial 46082 (see the CSV check); numbers stored as text read as numbers.
    expect(table.rows.map((r) => r[0])).toEqual([46082, 46083, 46084, 46085, 46086, 46087]);
    expect(table.rows.map((r) => r[1])).toEqual([40, 50, 60, 70, 80, 90]);
    expect(table.columns[1].converted).toBe("numbers stored as text");
    expect(table.columns[0]).toMatchObject({ kind: "date", letter: "A" });
    // Merged E3:E5 and E6:E8: the value in the first cell only.
    expect(table.rows.map((r) => r[4])).toEqual(["North", null, null, "South", null, null]);
    expect(table.notices).toContain('Sheet "Trips" has merged cells in the data (E3:E5, E6:E8); only the first cell of each holds the value, the others are read as blank. Unmerge them and fill the cells to use those rows.');
  });

  it("gives the pane the same cells and notices as the command line (one reader)", async () => {
    for (const file of [path.join(dir, "report.xlsx"), fixture("trips.csv"), fixture("utf16le-bom.csv")]) {
      const bytes = await fs.readFile(file);
      const buffer = bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer;
      const pane = await readDataFile(path.basename(file), buffer);
      const cli = await readDataTable(file);
      expect(pane.rows, file).toEqual([cli.names, ...cli.rows]);
      expect(pane.columns, file).toEqual(cli.columns);
      for (const notice of cli.notices) expect(pane.notices, file).toContain(notice);
    }
  });

  it("refuses an unknown sheet by listing the sheets", async () => {
    await expectBadInput(readDataTable(path.join(dir, "report.xlsx"), { sheet: "Data" }), /has no sheet named "Data"; its sheets are "Cover", "Trips"/);
  });
});
