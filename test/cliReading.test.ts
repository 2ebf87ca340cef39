import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { promises as fs } from "fs";
import * as os from "os";
import * as path from "path";
import ExcelJS from "exceljs";
import { runCli } from "./support/runCli";

// Invented files of test/fixtures/reading (see its README) through the command line: what the
// user reads about columns left out, converted, renamed, and the messages for files that fail.
const fixture = (name: string) => path.join(__dirname, "fixtures", "reading", name);
const TRIPS = fixture("trips.csv");

const run = runCli;

async function json(...argv: string[]) {
  const result = await run(...argv, "--json");
  expect(result.stderr).toBe("");
  expect(result.status).toBe(0);
  return JSON.parse(result.stdout);
}

async function failure(...argv: string[]): Promise<string> {
  const result = await run(...argv);
  expect(result.status).toBe(2);
  expect(result.stdout).toBe("");
  return result.stderr;
}

let dir: string;
beforeAll(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), "skein-cliReading-"));
  const covers = new ExcelJS.Workbook();
  covers.addWorksheet("Cover").getCell("A1").value = "Annual figures (invented)";
  covers.addWorksheet("Notes").getCell("A1").value = "See the appendix";
  await covers.xlsx.writeFile(path.join(dir, "covers.xlsx"));
  // A cover page, then the data with two numbers stored as text (invented: y = 1 + 2x + a wobble).
  const book = new ExcelJS.Workbook();
  book.addWorksheet("Cover").getCell("A1").value = "Read me";
  const data = book.addWorksheet("Data");
  data.addRow(["x", "y"]);
  for (let i = 1; i <= 8; i++) data.addRow([i === 3 || i === 6 ? String(i) : i, 1 + 2 * i + (i % 3) / 10]);
  await book.xlsx.writeFile(path.join(dir, "book.xlsx"));
});
afterAll(async () => {
  await fs.rm(dir, { recursive: true, force: true });
});

describe("skein fit/scan/predict say how the file was read", () => {
  it("names the columns left out and converted, in --json and in the text", async () => {
    const report = await json("fit", TRIPS, "--y", "Fuel used (L)");
    expect(report.predictors).toEqual(["Load share", "Toll", "Distance (m)"]);
    expect(report.notices).toEqual([
      "Left out of the predictors: Date (dates), Trip ID (identifier, by its name). Name a column in --x to use it.",
      'Read as numbers: Load share (percent, 12.3% read as 0.123), Toll (currency $), Distance (m) (thousands separator ",").',
    ]);
    expect(report.columns.map((c: { letter: string; kind: string; role: string }) => `${c.letter} ${c.kind} ${c.role}`)).toEqual([
      "A date not used", "B identifier not used", "C number predictor", "D number predictor", "E number predictor", "F number outcome",
    ]);
    // The fields every report had keep their meaning.
    expect(report.n).toBe(12);
    expect(report.rowsSkipped).toBe(0);
    const text = await run("fit", TRIPS, "--y", "Fuel used (L)");
    expect(text.stdout).toContain("How the file was read:\n  - Left out of the predictors: Date (dates), Trip ID (identifier, by its name).");
    const scan = await run("scan", TRIPS, "--y", "Fuel used (L)", "--k-max", "1");
    expect(scan.stdout).toContain("  - Read as numbers: Load share (percent, 12.3% read as 0.123)");
    expect((await json("scan", TRIPS, "--y", "Fuel used (L)", "--k-max", "1")).notices).toEqual(report.notices);
  });

  it("chooses columns by letter or #number as well as by name, to the same fit", async () => {
    const byName = await json("fit", TRIPS, "--y", "Fuel used (L)", "--x", "Load share,Toll");
    const byPosition = await json("fit", TRIPS, "--y", "F", "--x", "#3,d");
    expect(byPosition.predictors).toEqual(["Load share", "Toll"]);
    expect(byPosition.components).toEqual(byName.components);
    expect(await failure("fit", TRIPS, "--y", "F", "--x", "Q")).toMatch(/no column named "Q", and column Q lies outside its data \(columns A to F\)/);
  });

  it("chooses a name holding a comma by quoting it or by letter, and refuses a duplicated name", async () => {
    const file = fixture("duplicate-and-comma.csv");
    const quoted = await json("fit", file, "--y", "Units", "--x", '"Cost, total","Price (A)"');
    const lettered = await json("fit", file, "--y", "D", "--x", "B,A");
    expect(quoted.predictors).toEqual(["Cost, total", "Price (A)"]);
    expect(lettered.components).toEqual(quoted.components);
    expect(quoted.notices[0]).toMatch(/^The header "Price" names 2 columns \(A, C\)/);
    expect(await failure("fit", file, "--y", "Units", "--x", "Price")).toMatch(/The header "Price" names 2 columns of duplicate-and-comma.csv \(A, C\); choose one as "Price \(A\)" or "Price \(C\)", or by its letter/);
  });

  it("skips a grouping header with --header-row", async () => {
    const file = fixture("grouping-header.csv");
    const report = await json("fit", file, "--header-row", "2", "--y", "Yield");
    expect(report.predictors).toEqual(["Temperature", "Pressure"]);
    expect(report.notices[0]).toBe("Left out of the predictors: Batch (identifier: every value different). Name a column in --x to use it.");
    expect(await failure("fit", file, "--y", "Yield")).toMatch(/no column "Yield".* if line 2 holds the column names, read it as the header \(--header-row 2\)\.$/m);
    expect(await failure("fit", file, "--header-row", "0", "--y", "Yield")).toMatch(/--header-row must be a whole number from 1/);
  });

  it("explains rows skipped for a column whose numbers mix styles", async () => {
    expect(await failure("fit", fixture("mixed-styles.csv"), "--y", "Units", "--x", "Price")).toMatch(
      /most often for text in column Price .* Price writes numbers in more than one way \("\$3\.50", "€2\.10", "£1\.20"\); its cells are kept as text\./,
    );
  });

  it("reads a UTF-16 file and a Windows-1252 file by their real column names", async () => {
    for (const file of ["utf16le-bom.csv", "windows-1252.csv"]) {
      const report = await json("fit", fixture(file), "--y", "Réponse", "--x", "Coût");
      expect(report.predictors).toEqual(["Coût"]);
      expect(report.notices[0]).toMatch(/^Read .* as (UTF-16 LE|Windows-1252) text/);
    }
  });

  it("reads a workbook's first sheet of numbers, says which, and reads its numbers stored as text", async () => {
    const chosen = await json("fit", path.join(dir, "book.xlsx"), "--y", "y");
    const named = await json("fit", path.join(dir, "book.xlsx"), "--sheet", "Data", "--y", "y");
    expect(chosen.notices).toEqual([
      'Read sheet "Data", the first sheet holding a table of numbers (before it: "Cover" (0 data rows)).',
      "Read as numbers: x (numbers stored as text).",
    ]);
    expect(chosen.rowsUsed).toBe(8);
    expect(chosen.components).toEqual(named.components);
    expect((await run("fit", path.join(dir, "book.xlsx"), "--y", "y")).stdout).toMatch(/^Data: book\.xlsx, sheet Data; 8 rows used, 0 skipped$/m);
  });

  it("keeps a column of different whole numbers in no order (Distance) as a predictor; a counter is left out and can be named with --x", async () => {
    // Invented trips: Distance holds 40 different whole numbers in no order down the rows, a
    // measurement. Before, it was left out as an identifier and the fit refused the sheet.
    const book = new ExcelJS.Workbook();
    const trips = book.addWorksheet("Trips");
    trips.addRow(["Distance", "Cost"]);
    for (let i = 0; i < 40; i++) trips.addRow([1 + ((i * 37) % 50), 5 + 1.2 * (1 + ((i * 37) % 50)) + ((i % 5) - 2) * 0.4]);
    const file = path.join(dir, "distances.xlsx");
    await book.xlsx.writeFile(file);
    const fitted = await json("fit", file, "--y", "Cost", "--k", "1");
    expect(fitted.predictors).toEqual(["Distance"]);
    expect(fitted.rowsUsed).toBe(40);
    expect(fitted.notices.join(" ")).not.toMatch(/Left out/);
    // The same sheet with a trip counter (1, 2, ..., 40) as its only predictor: the counter is
    // left out as an identifier, the message says so and how to use it anyway.
    const counted = new ExcelJS.Workbook();
    const sheet = counted.addWorksheet("Trips");
    sheet.addRow(["Trip", "Cost"]);
    for (let i = 0; i < 40; i++) sheet.addRow([i + 1, 5 + ((i * 7) % 11)]);
    const counterFile = path.join(dir, "counter.xlsx");
    await counted.xlsx.writeFile(counterFile);
    const message = await failure("fit", counterFile, "--y", "Cost");
    expect(message).toMatch(/sheet "Trips" has no column of numbers or categories besides Cost \(left out: Trip \(identifier: every value a different whole number, as a counter\)\); name the predictors with --x/);
    expect((await json("fit", counterFile, "--y", "Cost", "--x", "Trip", "--k", "1")).rowsUsed).toBe(40);
  });

  it("names the sheets of a workbook that holds no table of numbers", async () => {
    expect(await failure("fit", path.join(dir, "covers.xlsx"), "--y", "y")).toMatch(/No sheet of covers.xlsx holds a table of numbers .*"Cover" \(0 data rows\), "Notes" \(0 data rows\)/);
  });

  it("says a new-rows file with a header only has nothing to predict", async () => {
    const stderr = await failure("predict", TRIPS, "--y", "Fuel used (L)", "--k", "1", "--new", fixture("no-rows.csv"));
    expect(stderr).toBe("skein: no-rows.csv (--new) has column names but no rows below them, so there is nothing to predict; add one row per prediction with the columns Load share, Toll, Distance (m).\n");
  });

  it("predict reads the new rows with the same rule and reports both files' notices", async () => {
    const newFile = path.join(dir, "new.csv");
    await fs.writeFile(newFile, 'Load share,Toll,Distance (m)\n50%,$5.00,"100,000"\n20%,$2.50,"20,000"\n');
    const report = await json("predict", TRIPS, "--y", "Fuel used (L)", "--k", "1", "--new", newFile);
    expect(report.rows).toHaveLength(2);
    expect(report.skipped).toEqual([]);
    expect(report.notices).toContain('Read as numbers in new.csv: Load share (percent, 12.3% read as 0.123), Toll (currency $), Distance (m) (thousands separator ",").');
    expect(report.columns).toHaveLength(6);
  });
});
