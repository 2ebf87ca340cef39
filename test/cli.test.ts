import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { promises as fs } from "fs";
import * as os from "os";
import * as path from "path";
import ExcelJS from "exceljs";
import certifiedFile from "./fixtures/longley-certified.json";
import { runCli, type CliRun as Run } from "./support/runCli";
import { partlyExactRows } from "./support/partlyExact";

const LONGLEY = path.join(__dirname, "fixtures", "longley.csv");
const LONGLEY_PREDICTORS = "GNPDEFL,GNP,UNEMP,ARMED,POP,YEAR";

const run = runCli;

/** A user mistake: exit 2, nothing on stdout, exactly one line on stderr, no stack trace. */
function expectOneLineError(result: Run, pattern: RegExp): void {
  expect(result.status).toBe(2);
  expect(result.stdout).toBe("");
  expect(result.stderr.endsWith("\n")).toBe(true);
  expect(result.stderr.trimEnd().split("\n")).toHaveLength(1);
  expect(result.stderr).not.toMatch(/\n\s+at /);
  expect(result.stderr).toMatch(/^skein: /);
  expect(result.stderr).toMatch(pattern);
}

/** Log relative error, the accuracy measure NIST StRD uses: about the number of matching significant digits. */
function logRelativeError(estimate: number, certified: number): number {
  if (estimate === certified) return Infinity;
  return -Math.log10(Math.abs(estimate - certified) / Math.abs(certified));
}

let dir: string;
async function writeFile(name: string, text: string): Promise<string> {
  const file = path.join(dir, name);
  await fs.writeFile(file, text);
  return file;
}

beforeAll(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), "skein-cli-"));
});

afterAll(async () => {
  await fs.rm(dir, { recursive: true, force: true });
});

describe("skein fit on NIST StRD Longley", () => {
  const certified = certifiedFile.certified as Record<string, { estimate: number; stdError: number }>;

  it("matches the certified coefficients and standard errors to at least 9 significant digits", async () => {
    const result = await run("fit", LONGLEY, "--y", "TOTEMP", "--x", LONGLEY_PREDICTORS, "--json");
    expect(result.stderr).toBe("");
    expect(result.status).toBe(0);
    const report = JSON.parse(result.stdout);
    expect(report.k).toBe(1);
    expect(report.n).toBe(16);
    expect(report.rowsUsed).toBe(16);
    expect(report.rowsSkipped).toBe(0);
    expect(report.skipped).toEqual([]);
    expect(report.predictors).toEqual(LONGLEY_PREDICTORS.split(","));
    expect(report.intercept).toBe(true);
    expect(report.components).toHaveLength(1);
    const component = report.components[0];
    expect(component.weight).toBe(1);
    expect(component.coefficients).toHaveLength(7);
    for (let j = 0; j < 7; j++) {
      // Source: NIST StRD Longley certified values (test/fixtures/longley-certified.json).
      const { estimate, stdError } = certified[`b${j}`];
      expect(logRelativeError(component.coefficients[j], estimate)).toBeGreaterThanOrEqual(9);
      expect(logRelativeError(component.stdErrors[j], stdError)).toBeGreaterThanOrEqual(9);
    }
    // sigma = sqrt(RSS/n) from NIST's certified residual sum of squares (derivation in this test).
    const rss = certifiedFile.residualSumOfSquares;
    expect(logRelativeError(component.sigma, Math.sqrt(rss / 16))).toBeGreaterThanOrEqual(9);
    // Gaussian log-likelihood at the ML SD, −n/2 (ln(2π RSS/n) + 1), from the certified RSS (derivation in this test).
    const logLikelihood = -8 * (Math.log((2 * Math.PI * rss) / 16) + 1);
    expect(logRelativeError(report.logLikelihood, logLikelihood)).toBeGreaterThanOrEqual(9);
    // BIC = −2 log L + ν ln n with ν = K(q + 2) − 1 = 8 for K = 1, q = 7 (Schwarz 1978; derivation in this test).
    expect(report.bic).toBeCloseTo(-2 * logLikelihood + 8 * Math.log(16), 6);
    expect(report.labels).toEqual(new Array(16).fill(1));
    expect(report.timings.readMs).toBeGreaterThanOrEqual(0);
    expect(report.timings.fitMs).toBeGreaterThanOrEqual(0);
  });

  it("prints a readable table without --json", async () => {
    const result = await run("fit", LONGLEY, "--y", "TOTEMP", "--x", LONGLEY_PREDICTORS);
    expect(result.status).toBe(0);
    expect(result.stdout).toMatch(/TOTEMP regressed on GNPDEFL, GNP, UNEMP, ARMED, POP, YEAR/);
    expect(result.stdout).toMatch(/16 rows used, 0 skipped/);
    // Certified b6 = 1829.15146461355 and its standard error 455.478499142212 (NIST StRD Longley),
    // rounded where the standard error says: two significant digits of it, whole units kept.
    expect(result.stdout).toMatch(/YEAR\s+1829\s+455\n/);
    expect(result.stdout).toMatch(/intercept\s+-3482259\s+890420/);
    // Certified b3 = -2.02022980381683, SE 0.488399681651699: two significant digits of the SE.
    expect(result.stdout).toMatch(/UNEMP\s+-2\.02\s+0\.49\n/);
    // Without --k, the K the scan suggests, said in a line.
    expect(result.stdout).toMatch(/K = 1, the number the scan of K = 1 to 2 suggests/);
    expect(result.stdout).toMatch(/Component of each row \(data rows 1 to 10 of 16; --out FILE writes them all\)/);
  });

  it("matches column names ignoring case when there is no exact match", async () => {
    const result = await run("fit", LONGLEY, "--y", "totemp", "--x", "gnpdefl,GNP,unemp,armed,pop,year", "--json");
    expect(result.status).toBe(0);
    const report = JSON.parse(result.stdout);
    expect(report.predictors).toEqual(LONGLEY_PREDICTORS.split(","));
    // Source: NIST StRD Longley certified b1.
    expect(logRelativeError(report.components[0].coefficients[1], certified.b1.estimate)).toBeGreaterThanOrEqual(9);
  });

  it("by default leaves out the columns of distinct whole numbers (Obs, YEAR) and says so", async () => {
    const result = await run("fit", LONGLEY, "--y", "TOTEMP", "--json");
    expect(result.stderr).toBe("");
    const report = JSON.parse(result.stdout);
    expect(report.predictors).toEqual(["GNPDEFL", "GNP", "UNEMP", "ARMED", "POP"]);
    expect(report.notices.join(" ")).toMatch(/Left out of the predictors: Obs \(identifier: every value a different whole number, as a counter\), YEAR \(identifier: every value a different whole number, as a counter\)/);
    expect(report.columns.find((c: { name: string }) => c.name === "YEAR")).toMatchObject({ letter: "H", kind: "identifier", role: "not used" });
    const text = await run("fit", LONGLEY, "--y", "TOTEMP");
    expect(text.stdout).toMatch(/How the file was read:\n {2}- Left out of the predictors: Obs .*YEAR/);
  });

  it("names the counter that duplicates YEAR when both are asked for", async () => {
    // Longley's Obs column is YEAR − 1946 (read off test/fixtures/longley.csv).
    expectOneLineError(await run("fit", LONGLEY, "--y", "TOTEMP", "--x", "Obs,GNP,YEAR"), /Predictor YEAR equals 1946 \+ 1 × Obs/);
  });
});

describe("skein fit on small files", () => {
  it("a one-component fit that stops after one iteration says '1 iteration' and no control the text does not offer", async () => {
    const shops = path.join(__dirname, "..", "sample-workbooks", "shop-chain.csv");
    const result = await run("fit", shops, "--y", "Units sold", "--x", "Price,Promotion", "--k", "1", "--background", "yes", "--max-iterations", "1");
    expect(result.status).toBe(0);
    expect(result.stdout).toContain("Converged: no (1 iteration).");
    expect(result.stdout).toMatch(/Not converged: .*allow more iterations with --max-iterations\./);
    expect(result.stdout).not.toMatch(/max_iterations|loosen tolerance/);
  });

  it("a fit exact on some components only says so, and its advice names --restarts", async () => {
    const { x, y } = partlyExactRows();
    const file = await writeFile("partly-exact.csv", `x,y\n${Array.from(x, (v, i) => `${v},${y[i]}`).join("\n")}\n`);
    const result = await run("fit", file, "--y", "y", "--k", "2", "--json");
    expect(result.status).toBe(0);
    const warnings: string[] = JSON.parse(result.stdout).warnings;
    const partly = warnings.find((w) => w.startsWith("Partly exact:"));
    expect(partly).toMatch(/^Partly exact: 1 component fits 120 rows exactly, .* try another seed, or more restarts with --restarts\.$/);
    expect(warnings.some((w) => /Try fewer components/.test(w))).toBe(false);
  });

  it("skips rows with text and blanks, reporting 1-based data rows, and labels them null", async () => {
    // Invented demo data: y = 1 + 2x exactly on the used rows, plus one outlier so the noise SD is not 0.
    const file = await writeFile("gaps.csv", "name,x,y\na,1,3\nb,n/a,5\nc,3,7\nd,,9\ne,5,11\nf,6,14\n");
    const result = await run("fit", file, "--y", "y", "--json");
    expect(result.status).toBe(0);
    const report = JSON.parse(result.stdout);
    // The text column "name" is not taken as a predictor by default.
    expect(report.predictors).toEqual(["x"]);
    expect(report.rowsUsed).toBe(4);
    expect(report.rowsSkipped).toBe(2);
    expect(report.skipped).toEqual([
      { row: 2, column: "x", reason: "text" },
      { row: 4, column: "x", reason: "blank" },
    ]);
    expect(report.labels).toEqual([1, null, 1, null, 1, 1]);
  });

  it("fits without an intercept, reporting it as 0 with standard error 0", async () => {
    const file = await writeFile("origin.csv", "x,y\n1,2\n2,3\n3,7\n4,8\n");
    const result = await run("fit", file, "--y", "y", "--x", "x", "--no-intercept", "--json");
    expect(result.status).toBe(0);
    const report = JSON.parse(result.stdout);
    expect(report.intercept).toBe(false);
    // Regression through the origin: b = Σxy / Σx² = 61/30 (derivation in this test).
    const slope = 61 / 30;
    const residuals = [2 - slope, 3 - 2 * slope, 7 - 3 * slope, 8 - 4 * slope];
    const rss = residuals.reduce((sum, r) => sum + r * r, 0);
    // Standard error of b: sqrt(RSS/(n − 1) / Σx²) (common practice for one regressor without intercept).
    const slopeSE = Math.sqrt(rss / 3 / 30);
    const [component] = report.components;
    expect(component.coefficients[0]).toBe(0);
    expect(component.stdErrors[0]).toBe(0);
    expect(component.coefficients[1]).toBeCloseTo(slope, 12);
    expect(component.stdErrors[1]).toBeCloseTo(slopeSE, 12);
    expect(component.sigma).toBeCloseTo(Math.sqrt(rss / 4), 12);
    // ν = K(q + 2) − 1 = 2 with q = 1 (Schwarz 1978; derivation in this test).
    expect(report.bic).toBeCloseTo(-2 * report.logLikelihood + 2 * Math.log(4), 10);
  });

  it("reads a named sheet of an xlsx workbook", async () => {
    const workbook = new ExcelJS.Workbook();
    workbook.addWorksheet("Notes").getCell("A1").value = "read me";
    const sheet = workbook.addWorksheet("Data");
    sheet.addRow(["x", "y"]);
    for (const [x, y] of [[1, 2], [2, 3], [3, 7], [4, 8]]) sheet.addRow([x, y]);
    sheet.addRow([5, { error: "#N/A" }]);
    const file = path.join(dir, "book.xlsx");
    await workbook.xlsx.writeFile(file);
    const result = await run("fit", file, "--sheet", "Data", "--y", "y", "--x", "x", "--no-intercept", "--json");
    expect(result.status).toBe(0);
    const report = JSON.parse(result.stdout);
    // Same rows as origin.csv above: b = 61/30 (derivation in this test).
    expect(report.components[0].coefficients[1]).toBeCloseTo(61 / 30, 12);
    expect(report.skipped).toEqual([{ row: 5, column: "y", reason: "error value" }]);
    expect((await run("fit", file, "--sheet", "Dta", "--y", "y")).stderr).toMatch(/no sheet named "Dta"; its sheets are "Notes", "Data"/);
  });

  it("lists skipped rows in the table", async () => {
    const file = await writeFile("skips.csv", "x,y\n1,3\n2,#N/A\n3,7\n4,9.5\n5,11\n");
    const result = await run("fit", file, "--y", "y");
    expect(result.status).toBe(0);
    expect(result.stdout).toMatch(/4 rows used, 1 skipped/);
    expect(result.stdout).toMatch(/data row 2: error value in y/);
  });
});

describe("skein fit: bad files and arguments as a new user would try them", () => {
  it("too few rows left after skipping text", async () => {
    const file = await writeFile("mostly-text.csv", "x,y\n1,2\ntwo,3\nthree,4\n4,x\n");
    expectOneLineError(await run("fit", file, "--y", "y", "--x", "x"), /Only 1 usable row, but at least 3 are needed.*3 rows were skipped, most often for text in column x \(2 rows\)/);
  });

  it("a ragged sheet", async () => {
    const file = await writeFile("ragged.csv", "a,b,y\n1,2,3\n4,5,6\n7,8\n9,10,11\n");
    expectOneLineError(await run("fit", file, "--y", "y"), /Line 4 of ragged.csv has 2 fields but the header \(line 1\) has 3/);
  });

  it("a constant column", async () => {
    const file = await writeFile("constant.csv", "a,site,y\n1,5,3\n2,5,4\n3,5,8\n4,5,9\n");
    expectOneLineError(await run("fit", file, "--y", "y", "--x", "a,site"), /Predictor site has the same value \(5\) in every used row; remove it/);
    // Not asked for, it is left out of the predictors by name.
    const result = await run("fit", file, "--y", "y", "--json");
    expect(result.stderr).toBe("");
    expect(JSON.parse(result.stdout).notices).toContain("Left out of the predictors: site (the same number in every row). Name a column in --x to use it.");
  });

  it("a missing column name lists the columns", async () => {
    expectOneLineError(await run("fit", LONGLEY, "--y", "EMPLOYMENT"), /no column "EMPLOYMENT"; its columns are A "Obs", B "TOTEMP", C "GNPDEFL", D "GNP", E "UNEMP", F "ARMED", G "POP", H "YEAR"/);
    expectOneLineError(await run("fit", LONGLEY, "--y", "TOTEMP", "--x", "GNP,POPULATION"), /no column "POPULATION"/);
  });

  it("an empty file, a file of blank lines, a missing file, an unknown type", async () => {
    expectOneLineError(await run("fit", await writeFile("empty.csv", ""), "--y", "y"), /empty.csv is empty/);
    expectOneLineError(await run("fit", await writeFile("blank.csv", "\n\n"), "--y", "y"), /holds no data/);
    expectOneLineError(await run("fit", path.join(dir, "nope.csv"), "--y", "y"), /No file at/);
    expectOneLineError(await run("fit", await writeFile("data.json", "{}"), "--y", "y"), /reads \.csv, \.tsv and \.xlsx/);
  });

  it("a header row only, and a file without a header row", async () => {
    expectOneLineError(await run("fit", await writeFile("header.csv", "x,y\n"), "--y", "y"), /header row but no data rows/);
    expectOneLineError(await run("fit", await writeFile("numbers.csv", "1,2\n3,4\n"), "--y", "y"), /first row of numbers.csv holds no column names/);
  });

  it("y listed among the predictors, or a predictor twice", async () => {
    expectOneLineError(await run("fit", LONGLEY, "--y", "TOTEMP", "--x", "GNP,TOTEMP"), /TOTEMP is the outcome \(--y\); leave it out of --x/);
    expectOneLineError(await run("fit", LONGLEY, "--y", "TOTEMP", "--x", "GNP,gnp"), /GNP appears twice in --x/);
  });

  it("fits a two-component mixture and reports convergence, separation and standard errors", async () => {
    // Invented data: two noiseless lines, y = 1 + 2x on even rows and y = 8 − x on odd rows,
    // x spread over [0, 10); exact recovery is expected (common practice: noiseless,
    // well-separated components are identifiable).
    const lines = ["x,y"];
    for (let i = 0; i < 60; i++) {
      const x = (i * 7.3) % 10;
      lines.push(`${x},${i % 2 === 0 ? 1 + 2 * x : 8 - x}`);
    }
    const file = await writeFile("two-lines.csv", lines.join("\n") + "\n");
    const result = await run("fit", file, "--y", "y", "--x", "x", "--k", "2", "--json");
    expect(result.status).toBe(0);
    const report = JSON.parse(result.stdout);
    expect(report.k).toBe(2);
    const found = report.components.map((c: { coefficients: number[] }) => c.coefficients).sort((a: number[], b: number[]) => a[0] - b[0]);
    expect(found[0][0]).toBeCloseTo(1, 6);
    expect(found[0][1]).toBeCloseTo(2, 6);
    expect(found[1][0]).toBeCloseTo(8, 6);
    expect(found[1][1]).toBeCloseTo(-1, 6);
    expect(report.labels.filter((label: number, i: number) => label === report.labels[i % 2])).toHaveLength(60);
    expect(report.labels[0]).not.toBe(report.labels[1]);
    expect(typeof report.warmStart.converged).toBe("boolean");
    expect(report.refinement.logLikelihoodPath.length).toBeGreaterThan(0);
    expect(report.icl).toBeGreaterThanOrEqual(report.bic - 1e-9);
    expect(report.separation.pairs).toHaveLength(1);
    expect(report.stdErrors.weights).toHaveLength(2);
    expect(Array.isArray(report.warnings)).toBe(true);
    // An exact fit says so: standard errors 0, no convergence or standard-error warning.
    expect(report.exactFit).toBe(true);
    expect(report.startsAgree).toBe(true);
    expect(report.converged).toBe(true);
    expect(report.warnings.filter((w: string) => /converge|Standard errors are not available|peak/.test(w))).toEqual([]);
    for (const component of report.components) expect(component.stdErrors).toEqual([0, 0]);
    const text = (await run("fit", file, "--y", "y", "--x", "x", "--k", "2")).stdout;
    expect(text).toContain("Exact fit (noise about 0)");
    expect(text).toMatch(/noise SD about 0 \(exact fit\)/);
    expect(text).toContain("no overlap between components (noise about 0)");
    expect(text).not.toMatch(/e-1\d/);
  });

  it("gives bootstrap standard errors of the same size as the observed-information ones", async () => {
    // Invented demo data (sample-workbooks/delivery-fleet.csv). Both methods estimate the same
    // sampling SD; with 20 replicates a bootstrap SD carries about 1/sqrt(40) = 16% Monte Carlo
    // error (normal theory), so a factor of 2 either way is a loose but failing-capable bound.
    const file = path.join(__dirname, "..", "sample-workbooks", "delivery-fleet.csv");
    const args = ["fit", file, "--y", "Fuel used (L)", "--k", "3", "--json"];
    const observed = JSON.parse((await run(...args)).stdout);
    const result = await run(...args, "--bootstrap", "20");
    expect(result.status).toBe(0);
    const bootstrap = JSON.parse(result.stdout);
    expect(observed.stdErrors.method).toBe("observed-information");
    expect(bootstrap.stdErrors.method).toBe("bootstrap");
    bootstrap.components.forEach((component: { stdErrors: number[] }, c: number) => {
      component.stdErrors.forEach((se, j) => {
        const ratio = se / observed.components[c].stdErrors[j];
        expect(ratio).toBeGreaterThan(0.5);
        expect(ratio).toBeLessThan(2);
      });
    });
    expectOneLineError(await run(...args, "--bootstrap", "3"), /--bootstrap must be a whole number from 10/);
  });

  it("rejects an unknown model", async () => {
    expectOneLineError(await run("fit", LONGLEY, "--y", "TOTEMP", "--k", "2", "--model", "mixed"), /--model must be plain or joint/);
  });

  it("bad option values and forms", async () => {
    expectOneLineError(await run("fit", LONGLEY, "--y", "TOTEMP", "--k", "two"), /--k must be a whole number from 1 to 50, not "two"/);
    expectOneLineError(await run("fit", LONGLEY, "--y", "TOTEMP", "--k", "0"), /--k must be a whole number/);
    expectOneLineError(await run("fit", LONGLEY, "--y", "TOTEMP", "--seed", "1.5"), /--seed must be a whole number/);
    expectOneLineError(await run("fit", LONGLEY, "--y"), /--y needs a value/);
    expectOneLineError(await run("fit", LONGLEY, "--y", "TOTEMP", "--components", "2"), /Unknown option --components for skein fit/);
    expectOneLineError(await run("fit", LONGLEY, "--y", "TOTEMP", "--json", "--json"), /--json is given twice/);
    expectOneLineError(await run("fit", LONGLEY, "--y", "TOTEMP", "--x", "GNP,,POP"), /--x has an empty name/);
    expectOneLineError(await run("fit", LONGLEY), /No outcome column given/);
    expectOneLineError(await run("fit", "--y", "TOTEMP"), /No data file given/);
    // "--x GNP, POP" typed with a space: POP becomes a second file name.
    expectOneLineError(await run("fit", LONGLEY, "--y", "TOTEMP", "--x", "GNP,", "POP"), /takes one data file but got 2 .*without spaces/);
    expectOneLineError(await run("fit", LONGLEY, "extra.csv", "--y", "TOTEMP"), /takes one data file but got 2/);
  });

  it("accepts --flag=value", async () => {
    const result = await run("fit", LONGLEY, `--y=TOTEMP`, `--x=${LONGLEY_PREDICTORS}`, "--k=1", "--seed=7", "--json");
    expect(result.status).toBe(0);
    // Source: NIST StRD Longley certified b6.
    expect(logRelativeError(JSON.parse(result.stdout).components[0].coefficients[6], 1829.15146461355)).toBeGreaterThanOrEqual(9);
  });
});

describe("skein: commands and help", () => {
  it("prints usage for --help and fit --help", async () => {
    const top = await run("--help");
    expect(top.status).toBe(0);
    expect(top.stdout).toMatch(/Usage: skein COMMAND/);
    expect(top.stdout).toMatch(/fit\s+fit the regressions/);
    const fit = await run("fit", "--help");
    expect(fit.status).toBe(0);
    expect(fit.stdout).toMatch(/Usage: skein fit FILE --y COLUMN/);
    expect(fit.stdout).toMatch(/--no-intercept/);
  });

  it("rejects an unknown command, listing the commands", async () => {
    expectOneLineError(await run("fitt", "data.csv"), /unknown command "fitt"; the commands are fit, scan, predict, demo/);
  });

  it("answers an unknown option of scan, predict and demo with one line naming the options", async () => {
    for (const command of ["scan", "predict", "demo"]) {
      expectOneLineError(await run(command, "--nonsense"), new RegExp(`Unknown option --nonsense for skein ${command}; the options are`));
    }
  });

  it("asks for a command when none is given", async () => {
    expectOneLineError(await run(), /no command given/);
  });
});
