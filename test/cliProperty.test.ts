import { afterAll, describe, expect, it } from "vitest";
import fc from "fast-check";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { main } from "../src/cli/main";

// Property check of the whole road from a file to a fit: random CSV files of numbers from tiny
// to huge, blanks, text, percentages, currency, error values and booleans give a fit (exit 0)
// or a one-line message (exit 2), never an internal error (exit 1). Random data, invented.
const dir = mkdtempSync(join(tmpdir(), "skein-cliProperty-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const field = fc.oneof(
  { weight: 6, arbitrary: fc.double({ noNaN: true, noDefaultInfinity: true }).map(String) },
  { weight: 6, arbitrary: fc.integer({ min: -50, max: 50 }).map(String) },
  { weight: 3, arbitrary: fc.constantFrom("1e300", "-1e300", "1e-300", "1e154", "", "n/a", "12%", "$3", "#N/A", "TRUE", "North", "South", "1,234.5") },
);

describe("skein fit on random files", () => {
  for (const k of ["1", "2", "3"]) {
    it(`exits 0 or 2 with a message, never 1, at K = ${k}`, async () => {
      let file = 0;
      await fc.assert(
        fc.asyncProperty(fc.array(fc.tuple(field, field, field), { maxLength: 25 }), async (rows) => {
          const path = join(dir, `k${k}-${file++}.csv`);
          writeFileSync(path, ["y,a,b", ...rows.map((row) => row.map((c) => (c.includes(",") ? `"${c}"` : c)).join(","))].join("\n"));
          let stderr = "";
          const status = await main(["fit", path, "--y", "y", "--k", k], { stdout: () => {}, stderr: (s) => (stderr += s) });
          expect(status === 0 || (status === 2 && /^skein: .{20,}\n$/.test(stderr)), stderr).toBe(true);
        }),
        { numRuns: Number(process.env.PROPERTY_RUNS ?? 40), seed: 20261202 },
      );
    }, 60_000);
  }
});
