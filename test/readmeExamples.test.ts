import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { readFileSync } from "node:fs";
import { join } from "node:path";
import ExcelJS from "exceljs";
import { check, fit, labels, membership, predict, scan } from "../src/functions/functions";
import { engineService } from "../src/service/engineService";
import { main } from "../src/cli/main";
import { installCustomFunctionsDouble } from "./support/customFunctionsDouble";

/*
 * The README's worksheet-function examples must stand, letter for letter, on the Skein sheet
 * of sample-workbooks/delivery-fleet.xlsx (invented demo data) and give what the README says
 * they give. The formulas are evaluated here through the same adapters Excel calls, with the
 * ranges read from the workbook. Expected values: the README's own table (invented demo).
 */

const root = join(__dirname, "..");
const readme = readFileSync(join(root, "README.md"), "utf8");
const formulas = [...readme.matchAll(/^\| `(=SKEIN\.[A-Z]+\([^`]*\))` \|/gm)].map((match) => match[1]);

type Sheet = Map<string, unknown>;

async function loadSheets(): Promise<{ data: Sheet; skein: Sheet; skeinFormulas: string[] }> {
  const workbook = new ExcelJS.Workbook();
  await workbook.xlsx.readFile(join(root, "sample-workbooks", "delivery-fleet.xlsx"));
  const read = (name: string): { cells: Sheet; formulas: string[] } => {
    const cells: Sheet = new Map();
    const found: string[] = [];
    workbook.getWorksheet(name)!.eachRow((row) =>
      row.eachCell((cell) => {
        const value = cell.value as unknown;
        if (value && typeof value === "object" && "formula" in (value as object)) found.push(`=${(value as { formula: string }).formula}`);
        else cells.set(cell.address, value);
      }),
    );
    return { cells, formulas: found };
  };
  const data = read("Data");
  const skein = read("Skein");
  return { data: data.cells, skein: skein.cells, skeinFormulas: skein.formulas };
}

function columnNumber(letters: string): number {
  return [...letters].reduce((n, ch) => n * 26 + ch.charCodeAt(0) - 64, 0);
}

function columnLetters(n: number): string {
  let letters = "";
  for (; n > 0; n = Math.floor((n - 1) / 26)) letters = String.fromCharCode(65 + ((n - 1) % 26)) + letters;
  return letters;
}

/** A range such as Data!B2:B601 or A43:B45 as Excel would pass it: rows of cell values, blanks null. */
function range(reference: string, sheets: Record<string, Sheet>, home: string): unknown[][] {
  const [sheetName, area] = reference.includes("!") ? reference.split("!") : [home, reference];
  const [from, to] = area.split(":");
  const [, c1, r1] = /^([A-Z]+)(\d+)$/.exec(from)!;
  const [, c2, r2] = /^([A-Z]+)(\d+)$/.exec(to)!;
  const rows: unknown[][] = [];
  for (let r = Number(r1); r <= Number(r2); r++) {
    const row: unknown[] = [];
    for (let c = columnNumber(c1); c <= columnNumber(c2); c++) row.push(sheets[sheetName].get(`${columnLetters(c)}${r}`) ?? null);
    rows.push(row);
  }
  return rows;
}

/** Evaluates the one formula shape the examples use: SKEIN.NAME(range, range, [range,] number, "text"). */
async function evaluate(formula: string, sheets: Record<string, Sheet>): Promise<unknown[][]> {
  const [, name, argumentText] = /^=SKEIN\.([A-Z]+)\((.*)\)$/.exec(formula)!;
  const args = argumentText.split(",").map((text): unknown => {
    if (/^".*"$/.test(text)) return [[text.slice(1, -1)]];
    if (/^\d+$/.test(text)) return Number(text);
    return range(text, sheets, "Skein");
  });
  const functions: Record<string, (...a: any[]) => Promise<any[][]>> = { SCAN: scan, FIT: fit, LABELS: labels, MEMBERSHIP: membership, CHECK: check, PREDICT: predict };
  return functions[name](...args);
}

describe("README worksheet-function examples on the delivery-fleet workbook", async () => {
  beforeAll(() => {
    installCustomFunctionsDouble();
  });
  afterAll(() => {
    engineService.clear();
  });
  const { data, skein, skeinFormulas } = await loadSheets();
  const sheets = { Data: data, Skein: skein };
  const byName = (name: string): string => formulas.find((f) => f.startsWith(`=SKEIN.${name}(`))!;

  it("lists one example per function, each standing on the Skein sheet", () => {
    expect(formulas.map((f) => /^=SKEIN\.([A-Z]+)/.exec(f)![1]).sort()).toEqual(["CHECK", "FIT", "LABELS", "MEMBERSHIP", "PREDICT", "SCAN"]);
    for (const formula of formulas) expect(skeinFormulas, formula).toContain(formula);
  });

  it("SCAN: one row per K = 1..5 and K = 3 suggested", async () => {
    const result = await evaluate(byName("SCAN"), sheets);
    const numeric = result.filter((row) => typeof row[0] === "number");
    expect(numeric.map((row) => row[0])).toEqual([1, 2, 3, 4, 5]);
    // Column order as the README lists it: K, BIC, ICL, log-likelihood, smallest gap (noise SDs),
    // starts agree, converged, suggested, note.
    const suggestedColumn = 7;
    for (const row of numeric) expect(row).toHaveLength(9);
    expect(numeric.filter((row) => row[suggestedColumn] === true).map((row) => row[0])).toEqual([3]);
    // Every other K, the smaller ones too, carries a note saying why it is not suggested.
    for (const row of numeric) expect(row[8] === "").toBe(row[0] === 3);
  });

  it("FIT: three components with weights about 50%, 30% and 20%", async () => {
    const rows = (await evaluate(byName("FIT"), sheets)).filter((row) => typeof row[0] === "number");
    expect(rows).toHaveLength(3);
    expect(rows[0]).toHaveLength(6); // component, weight (%), noise SD, intercept, 2 coefficients
    const weights = rows.map((row) => row[1] as number);
    [50, 30, 20].forEach((expected, c) => expect(Math.abs(weights[c] - expected)).toBeLessThan(2));
  });

  it("LABELS: 600 component numbers; MEMBERSHIP: 600 rows that sum to 1", async () => {
    const labelRows = (await evaluate(byName("LABELS"), sheets)).filter((row) => typeof row[0] === "number");
    expect(labelRows).toHaveLength(600);
    for (const [label] of labelRows) expect([1, 2, 3]).toContain(label);
    const memberships = (await evaluate(byName("MEMBERSHIP"), sheets)).filter((row) => typeof row[0] === "number");
    expect(memberships).toHaveLength(600);
    for (const row of memberships) expect((row as number[]).reduce((a, b) => a + b, 0)).toBeCloseTo(1, 9);
  });

  it("CHECK: a two-column table naming the checks; PREDICT: three rows of four numbers", async () => {
    const table = await evaluate(byName("CHECK"), sheets);
    for (const row of table) expect(row).toHaveLength(2);
    const names = table.map((row) => String(row[0]).toLowerCase()).join(" | ");
    for (const item of ["components (k)", "starts agree", "converged", "iterations", "smallest gap (noise sds)", "misassigned rows (%)", "membership clarity", "smallest weight (%)", "rows used", "rows skipped"]) expect(names).toContain(item);
    const predictions = (await evaluate(byName("PREDICT"), sheets)).filter((row) => typeof row[0] === "number");
    expect(predictions).toHaveLength(3);
    for (const row of predictions) {
      expect(row).toHaveLength(4);
      for (const value of row) expect(Number.isFinite(value)).toBe(true);
    }
  });
});

/** Splits a shell line into words, honouring double quotes (all the README's lines need). */
function shellWords(line: string): string[] {
  return [...line.matchAll(/"([^"]*)"|(\S+)/g)].map((match) => match[1] ?? match[2]);
}

describe("README command-line examples", () => {
  const section = readme.slice(readme.indexOf("## The command line"), readme.indexOf("## Loading the add-in"));
  const block = /```sh\n([\s\S]*?)```/.exec(section)![1];
  // `skein demo` has its own test (test/demo.test.ts); the others run here as written.
  const lines = block.trim().split("\n").filter((line) => line.startsWith("npx skein ") && !line.startsWith("npx skein demo"));

  it("has fit, scan and predict examples", () => {
    expect(lines.map((line) => shellWords(line)[2]).sort()).toEqual(["fit", "fit", "predict", "scan"]);
  });

  it.each(lines)("%s exits 0 with output", async (line) => {
    let stdout = "";
    let stderr = "";
    const status = await main(shellWords(line).slice(2), { stdout: (text) => (stdout += text), stderr: (text) => (stderr += text) });
    expect(stderr).toBe("");
    expect(status).toBe(0);
    expect(stdout.length).toBeGreaterThan(100);
  });
});
