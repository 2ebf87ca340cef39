/**
 * The committed sample workbooks (sample-workbooks/*.xlsx, *.csv, truth.json) are
 * what scripts/makeSampleWorkbooks.ts makes, hold the three sheets, point their
 * SKEIN formulas at the data with the right row counts, and state the same hidden
 * structure on the About sheet as in truth.json.
 *
 * Source of every expected number: invented demo data; the truth is the generator's
 * own (scripts/sampleScenarios.ts), and statistical tolerances are derived below.
 */
import { promises as fs } from "fs";
import * as path from "path";
import ExcelJS from "exceljs";
import JSZip from "jszip";
import { describe, expect, it } from "vitest";
import { readTable } from "../src/io/readTable";
import { ABOUT_SHEET, DATA_SHEET, FORMULA_SHEET, toCsv } from "../scripts/makeSampleWorkbooks";
import { allScenarios } from "../scripts/sampleScenarios";
import type { ScenarioTruth } from "../src/cli/demoCommand";

const SAMPLES = path.resolve(__dirname, "..", "sample-workbooks");
const FUNCTIONS = ["SCAN", "FIT", "CHECK", "PREDICT", "LABELS", "MEMBERSHIP"];

async function loadTruth(): Promise<ScenarioTruth[]> {
  return (JSON.parse(await fs.readFile(path.join(SAMPLES, "truth.json"), "utf8")) as { scenarios: ScenarioTruth[] }).scenarios;
}

async function loadWorkbook(file: string): Promise<ExcelJS.Workbook> {
  const workbook = new ExcelJS.Workbook();
  await workbook.xlsx.readFile(path.join(SAMPLES, file));
  return workbook;
}

/** Rows in an A1 range such as "Data!B2:B601". */
function rangeRows(range: string): number {
  const match = /^(?:[^!]+!)?[A-Z]+(\d+):[A-Z]+(\d+)$/.exec(range);
  if (!match) throw new Error(`not a range: ${range}`);
  return Number(match[2]) - Number(match[1]) + 1;
}

/** The arguments of a formula's outer call, split at top-level commas. */
function callArguments(formula: string): string[] {
  const inner = formula.slice(formula.indexOf("(") + 1, formula.lastIndexOf(")"));
  const parts: string[] = [];
  let depth = 0;
  let quoted = false;
  let start = 0;
  for (let i = 0; i < inner.length; i++) {
    const ch = inner[i];
    if (ch === '"') quoted = !quoted;
    else if (!quoted && ch === "(") depth++;
    else if (!quoted && ch === ")") depth--;
    else if (!quoted && depth === 0 && ch === ",") {
      parts.push(inner.slice(start, i).trim());
      start = i + 1;
    }
  }
  parts.push(inner.slice(start).trim());
  return parts;
}

describe("sample workbooks", async () => {
  const truths = await loadTruth();

  it("truth.json lists the three invented scenarios and says the data are invented", async () => {
    const text = await fs.readFile(path.join(SAMPLES, "truth.json"), "utf8");
    expect(JSON.parse(text).source).toMatch(/invented/i);
    expect(truths.map((t) => t.name)).toEqual(["delivery-fleet", "shop-chain", "lab-calibration"]);
    // The issue's scenarios: three vehicle classes, two shop segments, four sensor batches with eight settings.
    expect(truths.map((t) => t.components.length)).toEqual([3, 2, 4]);
    expect(truths[2].predictors).toHaveLength(8);
    expect(truths[2].model).toBe("joint");
  });

  it("the committed CSVs and truth are exactly what the seeded generator makes", async () => {
    const scenarios = allScenarios();
    for (const scenario of scenarios) {
      const csv = await fs.readFile(path.join(SAMPLES, `${scenario.name}.csv`), "utf8");
      expect(csv).toBe(toCsv(scenario.rows));
      const truth = truths.find((t) => t.name === scenario.name) as ScenarioTruth;
      expect(truth.trueComponents).toEqual(scenario.trueComponents);
      expect(truth.components).toEqual(scenario.components);
    }
  });

  for (const truth of truths) {
    describe(truth.name, () => {
      it("has the Data, Skein and About sheets, in that order", async () => {
        const workbook = await loadWorkbook(truth.workbook);
        expect(workbook.worksheets.map((sheet) => sheet.name)).toEqual([DATA_SHEET, FORMULA_SHEET, ABOUT_SHEET]);
      });

      it("holds the same data on its Data sheet as in its CSV, with a header row", async () => {
        const sheet = await readTable(path.join(SAMPLES, truth.workbook), DATA_SHEET);
        const csv = await readTable(path.join(SAMPLES, `${truth.name}.csv`));
        expect(sheet.rows).toEqual(csv.rows);
        expect(sheet.rows).toHaveLength(truth.rows + 1);
        expect(sheet.rows[0]).toEqual(expect.arrayContaining([truth.response, ...truth.predictors]));
      });

      it("has the six SKEIN formulas pointing at the data ranges with the right row counts", async () => {
        const workbook = await loadWorkbook(truth.workbook);
        const sheet = workbook.getWorksheet(FORMULA_SHEET) as ExcelJS.Worksheet;
        const formulas: string[] = [];
        sheet.eachRow((row) =>
          row.eachCell((cell) => {
            if (cell.formula) formulas.push(cell.formula);
          }),
        );
        expect(formulas.map((f) => /^SKEIN\.([A-Z]+)\(/.exec(f)?.[1]).sort()).toEqual([...FUNCTIONS].sort());
        const k = truth.components.length;
        const header = (await readTable(path.join(SAMPLES, truth.workbook), DATA_SHEET)).rows[0];
        const yColumn = String.fromCharCode(65 + header.indexOf(truth.response));
        for (const formula of formulas) {
          const args = callArguments(formula);
          expect(args[0]).toBe(truth.yRange);
          expect(args[1]).toBe(truth.xRange);
          expect(args[0]).toMatch(new RegExp(`^${DATA_SHEET}!${yColumn}2:${yColumn}\\d+$`));
          expect(rangeRows(args[0])).toBe(truth.rows);
          expect(rangeRows(args[1])).toBe(truth.rows);
          const settings = args[args.length - 1];
          expect(settings).toMatch(/^"seed=\d+/);
          expect(settings.includes("model=joint")).toBe(truth.model === "joint");
          const name = /^SKEIN\.([A-Z]+)/.exec(formula)?.[1];
          if (name === "SCAN") expect(Number(args[2])).toBe(truth.kMax);
          else if (name === "PREDICT") expect(Number(args[3])).toBe(k);
          else expect(Number(args[2])).toBe(k);
        }
      });

      it("marks every SKEIN formula as a dynamic array so it spills, and says #NAME? shows without the add-in", async () => {
        const zip = await JSZip.loadAsync(await fs.readFile(path.join(SAMPLES, truth.workbook)));
        const xml = await (zip.file("xl/worksheets/sheet2.xml") as JSZip.JSZipObject).async("string");
        const cells = xml.match(/<c [^>]*><f[^>]*>SKEIN\./g) ?? [];
        expect(cells).toHaveLength(FUNCTIONS.length);
        for (const cell of cells) expect(cell).toMatch(/cm="1"><f t="array" ref="[A-Z]+\d+">/);
        expect(zip.file("xl/metadata.xml")).not.toBeNull();
        const workbook = await loadWorkbook(truth.workbook);
        const texts: string[] = [];
        (workbook.getWorksheet(FORMULA_SHEET) as ExcelJS.Worksheet).eachRow((row) => row.eachCell((cell) => texts.push(String(cell.value))));
        expect(texts.some((t) => t.includes("#NAME?") && t.includes("add-in"))).toBe(true);
      });

      it("states on its About sheet that the data are invented, and the same truth as truth.json", async () => {
        const workbook = await loadWorkbook(truth.workbook);
        const sheet = workbook.getWorksheet(ABOUT_SHEET) as ExcelJS.Worksheet;
        const rows: unknown[][] = [];
        sheet.eachRow((row, r) => (rows[r] = (row.values as unknown[]).slice(1)));
        expect(rows.some((row) => row && String(row[0]).startsWith("INVENTED DATA"))).toBe(true);
        const headerAt = rows.findIndex((row) => row && row[0] === "Component");
        expect(rows[headerAt]).toEqual(["Component", "Name", "Weight", "Noise SD", "Intercept", ...truth.predictors]);
        truth.components.forEach((component, c) => {
          expect(rows[headerAt + 1 + c]).toEqual([c + 1, component.name, component.weight, component.noiseSD, component.intercept, ...component.coefficients]);
        });
      });

      it("has data that follow the stated truth: weights are the shares of rows, residuals have the stated noise SD", async () => {
        const table = await readTable(path.join(SAMPLES, `${truth.name}.csv`));
        const header = table.rows[0] as string[];
        const yColumn = header.indexOf(truth.response);
        const xColumns = truth.predictors.map((name) => header.indexOf(name));
        const n = truth.rows;
        truth.components.forEach((component, c) => {
          const rows = truth.trueComponents.map((t, i) => (t === c ? i : -1)).filter((i) => i >= 0);
          expect(rows.length / n).toBeCloseTo(component.weight, 12);
          let sumSquares = 0;
          let largest = 0;
          for (const i of rows) {
            const row = table.rows[i + 1] as number[];
            let fitted = component.intercept;
            xColumns.forEach((column, j) => (fitted += component.coefficients[j] * row[column]));
            const residual = row[yColumn] - fitted;
            sumSquares += residual * residual;
            largest = Math.max(largest, Math.abs(residual) / Math.max(1, Math.abs(row[yColumn])));
          }
          const sd = Math.sqrt(sumSquares / rows.length);
          if (component.noiseSD === 0) {
            // Noiseless: y is computed from the rounded settings the sheet holds; only double rounding remains.
            expect(largest).toBeLessThan(1e-12);
          } else {
            // The SD of a sample SD is about σ/sqrt(2m) (normal theory); allow 4 of those, plus the
            // rounding of the response (to 0.01 litres, or to whole units: 1/sqrt(12) ≈ 0.29 SD).
            const tolerance = 4 * component.noiseSD / Math.sqrt(2 * rows.length) + 0.3;
            expect(Math.abs(sd - component.noiseSD)).toBeLessThan(tolerance);
          }
        });
      });
    });
  }
});
