import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { promises as fs } from "fs";
import * as os from "os";
import * as path from "path";
import ExcelJS from "exceljs";
import { readTable } from "../src/io/readTable";
import { SkeinError } from "../src/engine/errors";

let dir: string;

beforeAll(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), "skein-readTable-"));
  // Invented demo workbook; every expected cell below is what this code writes.
  const workbook = new ExcelJS.Workbook();
  const data = workbook.addWorksheet("Data");
  // The block starts at B2 so the reader must find it.
  data.getCell("B2").value = "y";
  data.getCell("C2").value = { richText: [{ text: "do" }, { text: "se" }] };
  data.getCell("D2").value = "when";
  data.getCell("B3").value = 1.5;
  data.getCell("C3").value = { formula: "1+1", result: 2 };
  data.getCell("D3").value = new Date(Date.UTC(2020, 0, 1));
  data.getCell("B4").value = { error: "#N/A" };
  data.getCell("C4").value = { text: "a link", hyperlink: "https://example.org" };
  data.getCell("D4").value = true;
  // Row 5 left empty: it stays as a blank row inside the block.
  data.getCell("B6").value = { formula: "1/0", result: { error: "#DIV/0!" } };
  data.getCell("C6").value = "   ";
  data.getCell("D6").value = -3;
  const second = workbook.addWorksheet("Second Sheet");
  second.getCell("A1").value = "only";
  workbook.addWorksheet("Blank");
  await workbook.xlsx.writeFile(path.join(dir, "demo.xlsx"));

  await fs.writeFile(path.join(dir, "demo.csv"), "a,b\n1,x\n2,\n");
  await fs.writeFile(path.join(dir, "empty.csv"), "");
  await fs.writeFile(path.join(dir, "blank-lines.csv"), "\n\n\n");
  await fs.writeFile(path.join(dir, "notes.docx"), "hello");
  await fs.writeFile(path.join(dir, "old.xls"), "hello");
  await fs.writeFile(path.join(dir, "fake.xlsx"), "this is not a zip file");
});

afterAll(async () => {
  await fs.rm(dir, { recursive: true, force: true });
});

async function expectBadInput(promise: Promise<unknown>, pattern: RegExp): Promise<void> {
  try {
    await promise;
  } catch (error) {
    expect(error).toBeInstanceOf(SkeinError);
    expect((error as SkeinError).code).toBe("bad-input");
    expect((error as SkeinError).message).toMatch(pattern);
    return;
  }
  throw new Error("expected a SkeinError, but the read succeeded");
}

describe("readTable: xlsx", () => {
  it("reads the first sheet's used block with cells as a worksheet range gives them", async () => {
    const table = await readTable(path.join(dir, "demo.xlsx"));
    expect(table.sheetName).toBe("Data");
    expect(table.rows).toEqual([
      ["y", "dose", "when"],
      // 2020-01-01 is day 43831 of Excel's 1900 date system (common practice: Excel's own DATE(2020,1,1)).
      [1.5, 2, 43831],
      ["#N/A", "a link", true],
      [null, null, null],
      ["#DIV/0!", null, -3],
    ]);
  });

  it("reads a named sheet, also when the case differs", async () => {
    expect((await readTable(path.join(dir, "demo.xlsx"), "Second Sheet")).rows).toEqual([["only"]]);
    const table = await readTable(path.join(dir, "demo.xlsx"), "second sheet");
    expect(table.sheetName).toBe("Second Sheet");
  });

  it("lists the sheets when the sheet name is unknown", async () => {
    await expectBadInput(readTable(path.join(dir, "demo.xlsx"), "Sheet1"), /no sheet named "Sheet1"; its sheets are "Data", "Second Sheet", "Blank"/);
  });

  it("reports an empty sheet", async () => {
    await expectBadInput(readTable(path.join(dir, "demo.xlsx"), "Blank"), /Sheet "Blank" of demo.xlsx is empty/);
  });

  it("reports a file that is not a workbook", async () => {
    await expectBadInput(readTable(path.join(dir, "fake.xlsx")), /could not be read as an Excel workbook/);
  });
});

describe("readTable: csv and errors", () => {
  it("reads CSV through parseCsv", async () => {
    const table = await readTable(path.join(dir, "demo.csv"));
    expect(table.rows).toEqual([["a", "b"], [1, "x"], [2, null]]);
    expect(table.sheetName).toBeUndefined();
  });

  it("rejects a sheet name for a CSV file", async () => {
    await expectBadInput(readTable(path.join(dir, "demo.csv"), "Data"), /no sheets/);
  });

  it("reports a missing file", async () => {
    await expectBadInput(readTable(path.join(dir, "nothing-here.csv")), /No file at .*nothing-here.csv/);
  });

  it("reports empty files", async () => {
    await expectBadInput(readTable(path.join(dir, "empty.csv")), /empty.csv is empty/);
    await expectBadInput(readTable(path.join(dir, "blank-lines.csv")), /holds no data/);
  });

  it("reports unsupported file types, with a hint for old workbooks", async () => {
    await expectBadInput(readTable(path.join(dir, "notes.docx")), /reads \.csv, \.tsv and \.xlsx files\.$/);
    await expectBadInput(readTable(path.join(dir, "old.xls")), /Save it as \.xlsx or \.csv first/);
  });

  it("reports a folder given as the file", async () => {
    await expectBadInput(readTable(dir), /reads \.csv/);
    await fs.mkdir(path.join(dir, "folder.csv"));
    await expectBadInput(readTable(path.join(dir, "folder.csv")), /is a folder/);
  });
});
