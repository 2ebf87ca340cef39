/**
 * skein demo, run in-process on sample scenarios with output to a temporary folder:
 * the recovered K, components and labels against the scenario's truth, and the files.
 *
 * Source of every expected number: invented demo, truth from the generator
 * (sample-workbooks/truth.json, written by scripts/makeSampleWorkbooks.ts).
 * Tolerances are stated beside each check.
 */
import { promises as fs } from "fs";
import * as os from "os";
import * as path from "path";
import ExcelJS from "exceljs";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { readTruth, runDemoScenario, type DemoScenarioResult, type ScenarioTruth } from "../src/cli/demoCommand";
import { main } from "../src/cli/main";

const SAMPLES = path.resolve(__dirname, "..", "sample-workbooks");
/**
 * A correct fit's estimate lies within 4 standard errors of the truth with probability
 * 1 − 6e-5 per number (two-sided normal tail), so a dozen numbers per scenario fail by
 * chance far less than once in a thousand runs.
 */
const STANDARD_ERRORS_ALLOWED = 4;

let out: string;
let truths: ScenarioTruth[];

beforeAll(async () => {
  out = await fs.mkdtemp(path.join(os.tmpdir(), "skein-demo-"));
  truths = await readTruth(SAMPLES);
});

afterAll(async () => {
  await fs.rm(out, { recursive: true, force: true });
});

function scenario(name: string): ScenarioTruth {
  const found = truths.find((t) => t.name === name);
  if (!found) throw new Error(`no scenario ${name}`);
  return found;
}

async function checkFiles(result: DemoScenarioResult): Promise<void> {
  const [workbookFile, svgFile] = result.files;
  const workbook = new ExcelJS.Workbook();
  await workbook.xlsx.readFile(workbookFile);
  const rows = workbook.getWorksheet("Rows") as ExcelJS.Worksheet;
  const header = (rows.getRow(1).values as unknown[]).slice(1);
  const k = result.fit.k;
  expect(header.slice(-(k + 3))).toEqual(["component", "fitted value", "residual", ...Array.from({ length: k }, (_, c) => `membership ${c + 1}`)]);
  expect(rows.rowCount).toBe(result.truth.rows + 1);
  // Row 2 of the sheet is used row 0: its label and memberships are the fit's.
  const second = (rows.getRow(2).values as unknown[]).slice(1);
  expect(second[header.indexOf("component")]).toBe(result.fit.labels[0] + 1);
  expect(second[header.indexOf("membership 1")]).toBeCloseTo(result.fit.memberships[0], 12);

  const svg = await fs.readFile(svgFile, "utf8");
  expect(svg.startsWith("<svg")).toBe(true);
  expect([...svg.matchAll(/class="legend-entry"/g)]).toHaveLength(k);
  const shapes = new Set([...svg.matchAll(/class="marker marker-([a-z-]+)"/g)].map((m) => m[1]));
  expect(shapes.size).toBe(Math.min(k, 6));
}

describe("skein demo", () => {
  it("finds the three vehicle classes of the delivery fleet within the standard errors", async () => {
    const truth = scenario("delivery-fleet");
    const result = await runDemoScenario(truth, { samples: SAMPLES, out, seed: 1 });
    expect(result.scan.chosenK).toBe(truth.components.length);
    const { fit, errors, comparison } = result;
    expect(new Set(comparison.match).size).toBe(3);
    truth.components.forEach((component, t) => {
      const c = comparison.match[t];
      const trueVector = [component.intercept, ...component.coefficients];
      trueVector.forEach((value, j) => {
        expect(Math.abs(fit.components[c].coefficients[j] - value)).toBeLessThan(STANDARD_ERRORS_ALLOWED * errors.coefficients[c][j]);
      });
      expect(Math.abs(fit.components[c].weight - component.weight)).toBeLessThan(STANDARD_ERRORS_ALLOWED * errors.weights[c]);
      expect(Math.abs(fit.components[c].sigma - component.noiseSD)).toBeLessThan(STANDARD_ERRORS_ALLOWED * errors.sigmas[c]);
    });
    // The closest pair of true classes is about 7 noise SDs apart, so with the true
    // parameters almost every row is assigned correctly (two-class Bayes error
    // Φ(−gap/2) ≈ 2e-4); short trips, where the lines meet, blur a little more.
    // Allow 5% of rows.
    expect(comparison.labelAgreement).toBeGreaterThan(0.95);
    // Labels and memberships describe the components they are reported with: each
    // component's membership total is its weight times the rows (the EM fixed point
    // π_k = mean_i τ_ik, Dempster, Laird & Rubin 1977), to the refinement tolerance.
    for (let c = 0; c < fit.k; c++) {
      let total = 0;
      for (let i = 0; i < fit.n; i++) total += fit.memberships[i * fit.k + c];
      expect(total / fit.n).toBeCloseTo(fit.components[c].weight, 2);
    }
    await checkFiles(result);
    expect(result.report).toContain("How many components: K = 3");
    expect(result.report).toContain("Against the invented truth: K = 3 found");
  });

  it("recovers the four noiseless lab batches exactly with the joint model", async () => {
    const truth = scenario("lab-calibration");
    const result = await runDemoScenario(truth, { samples: SAMPLES, out, seed: 1 });
    expect(result.scan.chosenK).toBe(4);
    expect(result.fit.model).toBe("joint");
    // Noiseless data: exact recovery is expected; the bar is a relative error of 1e-6.
    truth.components.forEach((component, t) => {
      const c = result.comparison.match[t];
      const trueVector = [component.intercept, ...component.coefficients];
      const scale = Math.max(...trueVector.map(Math.abs));
      expect(result.comparison.coefficientError[t] / scale).toBeLessThan(1e-6);
      expect(result.fit.components[c].weight).toBeCloseTo(component.weight, 9);
    });
    expect(result.comparison.labelAgreement).toBe(1);
    await checkFiles(result);
  });

  it("runs through the command line and reports every stage of one scenario", async () => {
    const printed: string[] = [];
    const errors: string[] = [];
    const status = await main(["demo", "--only", "shop-chain", "--out", out, "--samples", SAMPLES], {
      stdout: (s) => printed.push(s),
      stderr: (s) => errors.push(s),
    });
    expect(errors.join("")).toBe("");
    expect(status).toBe(0);
    const text = printed.join("");
    expect(text).toMatch(/invented data/);
    for (const part of ["How many components: K = 2", "Components (estimate ± standard error", "Checks:", "Warnings", "Starts agree:", "Against the invented truth", "Time:", "shop-chain-results.xlsx", "shop-chain.svg"]) {
      expect(text).toContain(part);
    }
    await expect(fs.stat(path.join(out, "shop-chain.svg"))).resolves.toBeTruthy();
  });

  it("names the scenarios when asked for one that does not exist", async () => {
    const errors: string[] = [];
    const status = await main(["demo", "--only", "bakery", "--samples", SAMPLES, "--out", out], { stdout: () => undefined, stderr: (s) => errors.push(s) });
    expect(status).toBe(2);
    expect(errors.join("")).toContain("delivery-fleet, shop-chain, lab-calibration");
  });
});
