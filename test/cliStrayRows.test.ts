import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { promises as fs } from "fs";
import * as os from "os";
import * as path from "path";
import { createRandom } from "../src/engine/random";
import { runCli } from "./support/runCli";

const run = runCli;

let dir: string;
let typoFile: string;
/** Data row (1-based, below the header) holding the typo. */
const TYPO_ROW = 138;

beforeAll(async () => {
  dir = await fs.mkdtemp(path.join(os.tmpdir(), "skein-stray-"));
  // Invented: 300 rows from two groups (y = 2 + 3x and y = 20 − x, noise SD about 0.4), one y typed as 1,000,000.
  const random = createRandom(11);
  const lines = ["distance,cost"];
  for (let i = 0; i < 300; i++) {
    const x = 10 * random.next();
    const noise = (random.next() + random.next() + random.next() - 1.5) * 0.8;
    const y = i + 1 === TYPO_ROW ? 1_000_000 : i % 2 === 1 ? 2 + 3 * x + noise : 20 - x + noise;
    lines.push(`${x},${y}`);
  }
  typoFile = path.join(dir, "typo.csv");
  await fs.writeFile(typoFile, lines.join("\n") + "\n");
});

afterAll(async () => {
  await fs.rm(dir, { recursive: true, force: true });
});

describe("one typo among 300 rows of two groups", () => {
  it("skein scan suggests K = 2 (background component on by default: auto)", async () => {
    const result = await run("scan", typoFile, "--y", "cost", "--k-max", "4", "--json");
    expect(result.stderr).toBe("");
    const report = JSON.parse(result.stdout);
    expect(report.chosenK).toBe(2);
    expect(report.strayRows.map((s: { row: number }) => s.row)).toEqual([TYPO_ROW]);
    const text = (await run("scan", typoFile, "--y", "cost", "--k-max", "3")).stdout;
    expect(text).toContain(`Stray rows at K = 2: data row ${TYPO_ROW} (`);
    const without = await run("scan", typoFile, "--y", "cost", "--k-max", "4", "--background", "no", "--json");
    expect(JSON.parse(without.stdout).chosenK).toBe(1);
  });

  it("skein fit --k 2 recovers both groups and names the row as stray, in the table and in --json", async () => {
    const json = JSON.parse((await run("fit", typoFile, "--y", "cost", "--k", "2", "--json")).stdout);
    const slopes = json.components.map((c: { coefficients: number[] }) => c.coefficients[1]).sort((a: number, b: number) => a - b);
    expect(slopes[0]).toBeCloseTo(-1, 1);
    expect(slopes[1]).toBeCloseTo(3, 1);
    expect(json.strayRows.map((s: { row: number }) => s.row)).toEqual([TYPO_ROW]);
    expect(json.strayRowsRule).toContain("Bonferroni");
    expect(json.backgroundWeight).toBeGreaterThan(0);
    const text = (await run("fit", typoFile, "--y", "cost", "--k", "2")).stdout;
    expect(text).toContain(`Stray rows: 1 (a row is stray when it lies more than 3.76 noise SDs from every component`);
    expect(text).toContain(`data row ${TYPO_ROW}: `);
    expect(text).toContain(`--leave-out ${TYPO_ROW}`);
  });

  it("--leave-out sets the row aside: listed as skipped, and no stray row is left", async () => {
    const json = JSON.parse((await run("fit", typoFile, "--y", "cost", "--k", "2", "--leave-out", String(TYPO_ROW), "--json")).stdout);
    expect(json.rowsUsed).toBe(299);
    expect(json.skipped).toEqual([{ row: TYPO_ROW, column: "cost", reason: "left out" }]);
    expect(json.strayRows).toEqual([]);
    expect(json.labels[TYPO_ROW - 1]).toBeNull();
    const text = (await run("fit", typoFile, "--y", "cost", "--k", "2", "--leave-out", String(TYPO_ROW))).stdout;
    expect(text).toContain(`data row ${TYPO_ROW}: left out (--leave-out)`);
  });

  it("--leave-out beyond the data and --background with a bad value are refused with a message", async () => {
    const beyond = await run("fit", typoFile, "--y", "cost", "--leave-out", "301");
    expect(beyond.status).toBe(2);
    expect(beyond.stderr).toContain("--leave-out names data row 301, but typo.csv has 300 data rows");
    const bad = await run("fit", typoFile, "--y", "cost", "--background", "maybe");
    expect(bad.status).toBe(2);
    expect(bad.stderr).toContain("--background must be auto, yes or no");
  });
});

describe("messages about rows and K", () => {
  let small: string;
  beforeAll(async () => {
    // Invented: 8 rows on two lines.
    small = path.join(dir, "small.csv");
    await fs.writeFile(small, "x,y\n1,2\n2,4.1\n3,5.9\n4,8.2\n1,5\n2,4\n3,3.1\n4,1.8\n");
  });

  it("scan --k-max 10 on 8 rows says where it stopped and why", async () => {
    const result = await run("scan", small, "--y", "y", "--x", "x", "--k-max", "10");
    expect(result.stdout).toContain("Tried K = 1 to 2, not up to 10: K = 3 needs at least 9 usable rows (each component needs one more row than its 2 coefficients), and there are 8.");
    const json = JSON.parse((await run("scan", small, "--y", "y", "--x", "x", "--k-max", "10", "--json")).stdout);
    expect(json.stoppedEarly).toContain("Tried K = 1 to 2, not up to 10");
  });

  it("too few rows for the K asked names that K", async () => {
    const result = await run("fit", small, "--y", "y", "--x", "x", "--k", "3");
    expect(result.status).toBe(2);
    expect(result.stderr).toContain("K = 3 components");
    expect(result.stderr).toContain("at least 9");
  });
});

describe("a typo beyond the square root of the largest double (y = 1.5e154)", () => {
  it("skein scan suggests K = 2, names the row and, with --leave-out, still finds the two groups", async () => {
    // Invented: the same two groups as above, one y typed as 1.5e154.
    const random = createRandom(5);
    const lines = ["x,y"];
    for (let i = 0; i < 300; i++) {
      const x = 10 * random.next();
      const noise = (random.next() + random.next() + random.next() - 1.5) * 0.8;
      lines.push(`${x},${i === 41 ? 1.5e154 : i % 2 === 1 ? 2 + 3 * x + noise : 20 - x + noise}`);
    }
    const file = path.join(dir, "huge-typo.csv");
    await fs.writeFile(file, lines.join("\n") + "\n");
    const named = JSON.parse((await run("scan", file, "--y", "y", "--k-max", "3", "--json")).stdout);
    // The background takes the slip, and the fit's scale and floors follow the other rows, so
    // the scan finds the two groups (before, it suggested K = 1 until the row was left out).
    expect(named.chosenK).toBe(2);
    expect(named.strayRows.map((s: { row: number }) => s.row)).toEqual([42]);
    expect(named.rows.every((row: { logLikelihood: number }) => Number.isFinite(row.logLikelihood))).toBe(true);
    const text = (await run("scan", file, "--y", "y", "--k-max", "3")).stdout;
    expect(text).toContain("--leave-out 42 sets them aside");
    const without = JSON.parse((await run("scan", file, "--y", "y", "--k-max", "3", "--leave-out", "42", "--json")).stdout);
    expect(without.chosenK).toBe(2);
  });
});
