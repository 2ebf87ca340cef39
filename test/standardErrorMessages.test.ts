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

describe("standard errors that cannot be computed say why", () => {
  it("the engine gives a reason naming the exact component instead of bare NaN", () => {
    const fit = fitMixture(data, { k: 2, seed: 1 });
    const errors = standardErrors(data, fit);
    expect(errors.coefficients[0].some(Number.isNaN)).toBe(true);
    expect(errors.warnings).toHaveLength(1);
    expect(errors.warnings[0]).toMatch(/^Standard errors are not available: component \d fits its rows exactly/);
    expect(errors.warnings[0]).toContain("y is one of the predictors");
  });

  it("the pane shows the reason, not NaN", () => {
    const fit = fitMixture(data, { k: 2, seed: 1 });
    const description = describeFit(data, fit);
    expect(description.errors).toBeNull();
    expect(description.errorsProblem).toContain("fits its rows exactly");
  });

  it("skein fit prints 'not available' and the reason among the warnings", async () => {
    const dir = await fs.mkdtemp(path.join(os.tmpdir(), "skein-se-"));
    try {
      const file = path.join(dir, "same.csv");
      await fs.writeFile(file, "a,b,c\n" + a.map((v, i) => `${v},${b[i]},${v}`).join("\n") + "\n");
      let stdout = "";
      await main(["fit", file, "--y", "c", "--x", "a,b", "--k", "2"], { stdout: (s) => (stdout += s), stderr: () => undefined });
      expect(stdout).not.toContain("NaN");
      expect(stdout).toContain("not available");
      expect(stdout).toContain("Standard errors are not available: component");
    } finally {
      await fs.rm(dir, { recursive: true, force: true });
    }
  });
});
