import { afterAll, describe, expect, it } from "vitest";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { createRandom } from "../src/engine/random";
import { runCli, type CliRun } from "./support/runCli";

/** Invented demo data: two regressions far apart (intercepts 1 and −3, different slopes, noise SD 0.3). */
function writeTwoGroupFile(dir: string): string {
  const random = createRandom(31);
  const lines = ["y,x1,x2,note"];
  for (let i = 0; i < 240; i++) {
    const x1 = random.normal();
    const x2 = random.normal();
    const first = random.next() < 0.5;
    const y = (first ? 1 + 2 * x1 - x2 : -3 + 0.5 * x1 + 2 * x2) + 0.3 * random.normal();
    lines.push(`${y},${x1},${x2},text`);
  }
  const file = join(dir, "two.csv");
  writeFileSync(file, lines.join("\n") + "\n");
  return file;
}

function run(argv: string[]): Promise<CliRun> {
  return runCli(...argv);
}

describe("skein scan and skein predict", () => {
  const dir = mkdtempSync(join(tmpdir(), "skein-scan-"));
  const file = writeTwoGroupFile(dir);
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it("scan --json gives chosenK and one row per K with the contract's fields", async () => {
    const { status, stdout } = await run(["scan", file, "--y", "y", "--x", "x1,x2", "--k-max", "3", "--seed", "2", "--json"]);
    expect(status).toBe(0);
    const report = JSON.parse(stdout);
    // Two groups generated (invented demo data above).
    expect(report.chosenK).toBe(2);
    expect(report.rows.map((r: { k: number }) => r.k)).toEqual([1, 2, 3]);
    for (const row of report.rows) {
      for (const key of ["k", "logLikelihood", "bic", "icl", "converged", "minSeparation"]) expect(row).toHaveProperty(key);
    }
    // K = 1 has no pair of components: JSON has no Infinity, so null.
    expect(report.rows[0].minSeparation).toBeNull();
    expect(report.rows[1].minSeparation).toBeGreaterThan(4);
    // How long the reading and the three fits took, as skein fit reports its own.
    expect(report.timings.readMs).toBeGreaterThanOrEqual(0);
    expect(report.timings.scanMs).toBeGreaterThan(0);
  });

  it("scan prints a table marking the suggested K", async () => {
    const { status, stdout } = await run(["scan", file, "--y", "y", "--k-max", "2"]);
    expect(status).toBe(0);
    expect(stdout).toMatch(/2 .*<- suggested/);
    expect(stdout).toMatch(/Suggested: 2 components/);
  });

  it("scan without --k-max is a usage error (exit 2, one line saying what to add)", async () => {
    const { status, stderr } = await run(["scan", file, "--y", "y"]);
    expect(status).toBe(2);
    expect(stderr).toMatch(/--k-max/);
  });

  it("predict --json: each component's prediction is its regression at the new x; memberships are the weights (plain model)", async () => {
    const newFile = join(dir, "new.csv");
    writeFileSync(newFile, "x1,x2\n0,0\n1,-1\nabc,2\n");
    const { status, stdout } = await run(["predict", file, "--y", "y", "--x", "x1,x2", "--k", "2", "--new", newFile, "--json"]);
    expect(status).toBe(0);
    const report = JSON.parse(stdout);
    expect(report.rows).toHaveLength(3);
    expect(report.rows[2]).toBeNull();
    expect(report.skipped).toEqual([3]);
    const row = report.rows[1];
    report.components.forEach((component: { weight: number; coefficients: number[] }, c: number) => {
      // Derivation: β0 + β1·1 + β2·(−1).
      expect(row.perComponent[c]).toBeCloseTo(component.coefficients[0] + component.coefficients[1] - component.coefficients[2], 10);
      expect(row.memberships[c]).toBeCloseTo(component.weight, 12);
    });
  });
});
