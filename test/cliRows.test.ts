import { afterAll, describe, expect, it } from "vitest";
import { mkdtempSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import ExcelJS from "exceljs";
import { fitProgress, PROGRESS_AFTER_MS, scanProgress } from "../src/cli/progressLines";
import { fitModel } from "../src/cli/fitCommand";
import { buildDesign } from "../src/engine/design";
import { partlyExactRows } from "./support/partlyExact";
import { runCli } from "./support/runCli";

const root = join(__dirname, "..");
const SHOPS = join(root, "sample-workbooks", "shop-chain.csv");
const out = mkdtempSync(join(tmpdir(), "skein-rows-"));
afterAll(() => rmSync(out, { recursive: true, force: true }));

const run = runCli;

describe("skein fit: every row's component", () => {
  it("without --k fits the suggested K, says so, and shows the first rows' components", async () => {
    const result = await run("fit", SHOPS, "--y", "Units sold", "--x", "Price,Promotion");
    expect(result.status).toBe(0);
    // The invented shop chain has two kinds of neighbourhood (sample-workbooks/truth.json).
    expect(result.stdout).toMatch(/^K = 2, the number the scan of K = 1 to 5 suggests/m);
    expect(result.stdout).toMatch(/Component of each row \(data rows 1 to 10 of 480; --out FILE writes them all\)/);
    const rowLines = result.stdout.slice(result.stdout.indexOf("  data row   component")).trim().split("\n").slice(1);
    expect(rowLines).toHaveLength(10);
    for (const line of rowLines) expect(line).toMatch(/^\s+\d+\s+[12]$/);
    // The start method is detail: only with --verbose.
    expect(result.stdout).not.toMatch(/moment|random-partition|Starts: best from/);
    expect((await run("fit", SHOPS, "--y", "Units sold", "--x", "Price,Promotion", "--k", "2", "--verbose")).stdout).toMatch(/Starts: best from \S+, \d+ tried/);
  });

  it("--out FILE.csv writes every row with its component, fitted value, residual and memberships", async () => {
    const file = join(out, "shops.csv");
    const json = JSON.parse((await run("fit", SHOPS, "--y", "Units sold", "--x", "Price,Promotion", "--k", "2", "--json", "--out", file)).stdout);
    const lines = readFileSync(file, "utf8").trim().split("\n");
    expect(lines[0]).toBe("Shop,Week,Units sold,Price,Promotion,component,fitted value,residual,membership 1,membership 2");
    expect(lines).toHaveLength(481);
    lines.slice(1).forEach((line, r) => {
      const cells = line.split(",");
      expect(Number(cells[5])).toBe(json.labels[r]);
      // fitted + residual = the outcome; memberships add up to 1 (to the 10 digits written).
      expect(Number(cells[6]) + Number(cells[7])).toBeCloseTo(Number(cells[2]), 6);
      expect(Number(cells[8]) + Number(cells[9])).toBeCloseTo(1, 8);
    });
  });

  it("--out FILE.xlsx writes the rows, and a Checks sheet with every warning the command printed", async () => {
    const file = join(out, "shops.xlsx");
    const result = await run("fit", SHOPS, "--y", "Units sold", "--x", "Price,Promotion", "--k", "2", "--out", file);
    const json = JSON.parse((await run("fit", SHOPS, "--y", "Units sold", "--x", "Price,Promotion", "--k", "2", "--json")).stdout);
    expect(json.warnings.length).toBeGreaterThan(0);
    const workbook = new ExcelJS.Workbook();
    await workbook.xlsx.readFile(file);
    expect(workbook.getWorksheet("Rows")!.rowCount).toBe(481);
    const checks = workbook.getWorksheet("Checks")!;
    const warnings: string[] = [];
    checks.eachRow((row) => {
      if (row.getCell(1).value === "warning") warnings.push(String(row.getCell(2).value));
    });
    expect(warnings).toEqual(json.warnings);
    for (const warning of json.warnings) expect(result.stdout).toContain(warning);
    // Shares are numbers with a percentage format, not text.
    const weight = workbook.getWorksheet("Components")!.getRow(2).getCell(2);
    expect(typeof weight.value).toBe("number");
    expect(weight.numFmt).toBe("0.0%");
    // Noise SD, coefficients and their standard errors carry a number format in the one number
    // style (standard error to two significant digits, estimate to the same decimal place),
    // not General, which would show a raw double's ten digits.
    const components = workbook.getWorksheet("Components")!;
    const names = (components.getRow(1).values as unknown[]).slice(1).map(String);
    for (const name of ["noise SD", "intercept", "Price", "Promotion"]) {
      const column = names.indexOf(name) + 1;
      const errorColumn = names.indexOf(`standard error: ${name}`) + 1;
      expect(column).toBeGreaterThan(0);
      for (let r = 2; r <= 3; r++) {
        const estimate = components.getRow(r).getCell(column);
        expect(estimate.numFmt, `${name} row ${r}`).toMatch(/^0(\.0+)?$/);
        const decimals = (estimate.numFmt.split(".")[1] ?? "").length;
        if (errorColumn > 0) {
          const error = components.getRow(r).getCell(errorColumn);
          expect(error.numFmt).toBe(estimate.numFmt);
          expect(decimals).toBe(Math.max(0, 1 - Math.floor(Math.log10(Number(error.value)))));
        } else {
          // No standard error: four significant digits.
          expect(decimals).toBe(Math.max(0, 3 - Math.floor(Math.log10(Math.abs(Number(estimate.value))))));
        }
      }
    }
  });

  it("refuses an --out file that is neither .csv nor .xlsx, before fitting", async () => {
    const result = await run("fit", SHOPS, "--y", "Units sold", "--out", join(out, "rows.txt"));
    expect(result.status).toBe(2);
    expect(result.stderr).toMatch(/--out must name a \.csv or \.xlsx file/);
  });
});

describe("scan progress on stderr", () => {
  it("stays quiet for a quick scan and when stderr is not a terminal", () => {
    let clock = 0;
    const written: string[] = [];
    const quiet = scanProgress({ stderr: (s) => written.push(s), progress: true }, () => clock);
    clock = PROGRESS_AFTER_MS - 1;
    quiet.onProgress(1, 3);
    quiet.finish();
    const piped = scanProgress({ stderr: (s) => written.push(s), progress: false }, () => clock);
    clock += 10 * PROGRESS_AFTER_MS;
    piped.onProgress(2, 3);
    piped.finish();
    expect(written).toEqual([]);
  });

  it("after about 1.5 s rewrites one line per K on a terminal, and ends it", () => {
    let clock = 0;
    const written: string[] = [];
    const progress = scanProgress({ stderr: (s) => written.push(s), progress: true }, () => clock);
    clock = 2000;
    progress.onProgress(2, 5);
    clock = 3100;
    progress.onProgress(5, 5);
    progress.finish();
    expect(written[0]).toMatch(/^\rscan: K = 1 to 2 of 5 done in 2\.0 s, fitting K = 3/);
    expect(written[1]).toMatch(/^\rscan: K = 1 to 5 of 5 done in 3\.1 s/);
    expect(written[2]).toBe("\n");
  });
});

describe("fit progress on stderr", () => {
  it("never cancels, stays quiet before about 1.5 s or off a terminal, then rewrites one line at most once a second, and ends it", () => {
    let clock = 0;
    const written: string[] = [];
    const piped = fitProgress({ stderr: (s) => written.push(s), progress: false }, 3, () => clock);
    clock = 10 * PROGRESS_AFTER_MS;
    expect(piped.signal.aborted).toBe(false);
    piped.finish();
    expect(written).toEqual([]);

    clock = 0;
    const progress = fitProgress({ stderr: (s) => written.push(s), progress: true }, 7, () => clock);
    clock = PROGRESS_AFTER_MS - 1;
    expect(progress.signal.aborted).toBe(false);
    expect(written).toEqual([]);
    clock = 2000;
    expect(progress.signal.aborted).toBe(false);
    clock = 2500;
    expect(progress.signal.aborted).toBe(false);
    clock = 3100;
    expect(progress.signal.aborted).toBe(false);
    progress.finish();
    expect(written).toHaveLength(3);
    expect(written[0]).toMatch(/^\rfit: K = 7, 2 s so far…/);
    expect(written[1]).toMatch(/^\rfit: K = 7, 3 s so far…/);
    expect(written[2]).toMatch(/^\rfit: K = 7 done in 3\.1 s\. *\n$/);
  });

  it("is asked by the engine while it fits", () => {
    const { x, y } = partlyExactRows();
    const design = buildDesign(Array.from(y, (v) => [v]), Array.from(x, (v) => [v]));
    let questions = 0;
    const signal = {
      get aborted() {
        questions++;
        return false;
      },
    };
    fitModel(design, { k: 2, seed: 1, intercept: true, model: "plain", restarts: 10, tolerance: 1e-8, maxIterations: 500, bootstrap: undefined }, signal);
    expect(questions).toBeGreaterThan(10);
  });
});
