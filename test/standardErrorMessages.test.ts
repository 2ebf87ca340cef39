import { describe, expect, it } from "vitest";
import { promises as fs } from "fs";
import * as os from "os";
import * as path from "path";
import { fitMixture } from "../src/engine/fitMixture";
import { standardErrors } from "../src/engine/standardErrors";
import { describeFit } from "../src/service/engineJobs";
import { main } from "../src/cli/main";

// Invented: y equals predictor a exactly; b is unrelated.
const a = [1, 2, 3, 4, 5, 6, 7, 8, 9, 10];
const b = [2, 3, 1, 5, 2, 7, 1, 4, 9, 3];
const data = { y: Float64Array.from(a), x: Float64Array.from(a.flatMap((v, i) => [v, b[i]])), n: 10, p: 2 };

describe("standard errors of an exact fit, and standard errors that cannot be computed", () => {
  // y equals a exactly: every component fits its rows exactly. The glossary's rule for an exact
  // fit (noise about 0): standard errors 0, said as an exact fit, with no warning and never NaN.
  it("the engine gives standard errors 0 for an exact fit, with no warning", () => {
    const fit = fitMixture(data, { k: 2, seed: 1 });
    const errors = standardErrors(data, fit);
    expect(errors.method).toBe("exact-fit");
    for (const coefficients of errors.coefficients) expect(Array.from(coefficients)).toEqual([0, 0, 0]);
    expect(errors.warnings).toEqual([]);
  });

  it("the pane gets those standard errors, not a problem", () => {
    const fit = fitMixture(data, { k: 2, seed: 1 });
    const description = describeFit(data, fit);
    expect(description.errors?.method).toBe("exact-fit");
    expect(description.errorsProblem ?? null).toBeNull();
  });

  it("skein fit says exact fit (noise about 0), prints no NaN and no standard-error warning", async () => {
    const dir = await fs.mkdtemp(path.join(os.tmpdir(), "skein-se-"));
    const file = path.join(dir, "same.csv");
    await fs.writeFile(file, "a,b,c\n" + a.map((v, i) => `${v},${b[i]},${v}`).join("\n") + "\n");
    let stdout = "";
    await main(["fit", file, "--y", "c", "--x", "a,b", "--k", "2"], { stdout: (s) => (stdout += s), stderr: () => undefined });
    expect(stdout).not.toContain("NaN");
    expect(stdout).toContain("Exact fit (noise about 0)");
    expect(stdout).not.toContain("Standard errors are not available");
    await fs.rm(dir, { recursive: true, force: true });
  });
});
