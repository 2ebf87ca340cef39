import { describe, expect, it } from "vitest";
import { promises as fs } from "fs";
import * as os from "os";
import * as path from "path";
import { fitMixture } from "../src/engine/fitMixture";
import { standardErrors } from "../src/engine/standardErrors";
import { describeFit } from "../src/service/engineJobs";
import { main } from "../src/cli/main";
import { partlyExactRows } from "./support/partlyExact";

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
    try {
      const file = path.join(dir, "same.csv");
      await fs.writeFile(file, "a,b,c\n" + a.map((v, i) => `${v},${b[i]},${v}`).join("\n") + "\n");
      let stdout = "";
      await main(["fit", file, "--y", "c", "--x", "a,b", "--k", "2"], { stdout: (s) => (stdout += s), stderr: () => undefined });
      expect(stdout).not.toContain("NaN");
      expect(stdout).toContain("Exact fit (noise about 0)");
      expect(stdout).not.toContain("Standard errors are not available");
    } finally {
      await fs.rm(dir, { recursive: true, force: true });
    }
  });
});

describe("why standard errors are not available, in plain words", () => {
  /** Invented: y = 1 + 2x and y = 8 − 1.5x, 40 rows each, noise SD 0.3. */
  function twoLines(): { x: Float64Array; y: Float64Array; n: number; p: number } {
    const n = 80;
    const x = Float64Array.from({ length: n }, (_, i) => (i % 40) / 4);
    const y = Float64Array.from(x, (v, i) => (i < 40 ? 1 + 2 * v : 8 - 1.5 * v) + 0.3 * Math.sin(7 * i));
    return { x, y, n, p: 1 };
  }

  it("two components that are one regression are named, with the K to fit instead", () => {
    const lines = twoLines();
    const fit = fitMixture(lines, { k: 2, seed: 1, background: false });
    // The fit with its second component copied into a third: components 2 and 3 are one regression.
    const copy = { ...fit.components[1], weight: fit.components[1].weight / 2 };
    const three = { ...fit, k: 3, components: [fit.components[0], copy, { ...copy }] };
    const errors = standardErrors(lines, three);
    // Before: "the fit does not sit at a clear peak of the likelihood (it may not have converged, or two components may be the same)".
    expect(errors.warnings).toEqual([
      "Standard errors are not available: components 2 and 3 are the same regression (equal coefficients and noise SD), so the data cannot tell how their rows divide between them. Fit 2 components.",
    ]);
  });

  it("a component that fits its rows exactly while the other does not is named, not called too many components", () => {
    // partlyExactRows: 120 rows exactly on y = 2 + 3x, 120 noisy rows. The exact component's
    // noise SD is held at the variance-ratio bound, far above 1e-6 of SD(y) (about 2.9 here),
    // so it is found by its rows.
    const { x, y } = partlyExactRows();
    const rows = { x, y, n: x.length, p: 1 };
    const fit = fitMixture(rows, { k: 2, seed: 1 });
    const exact = fit.components.findIndex((c) => Math.abs(c.coefficients[1] - 3) < 1e-9);
    expect(fit.components[exact].sigma).toBeGreaterThan(1e-6 * 3);
    const errors = standardErrors(rows, fit);
    expect(errors.warnings).toEqual([
      `Standard errors are not available: component ${exact + 1} fits its rows exactly while the others do not, so the fit has no curvature to measure its uncertainty by. If that is not expected, check that the outcome is not one of the predictors, a copy of one or an exact combination of them.`,
    ]);
  });

  it("a row 1e200 away under a fit without a background: the sizes of the outcome's values are named", () => {
    const lines = twoLines();
    const fit = fitMixture(lines, { k: 2, seed: 1, background: false });
    // The same fit read on data whose row 5 was typed as 1e200: its squared residual over σ²
    // leaves the range of doubles, so the curvature cannot be summed.
    const slipped = { ...lines, y: lines.y.slice() };
    slipped.y[5] = 1e200;
    const errors = standardErrors(slipped, fit);
    expect(errors.warnings).toHaveLength(1);
    expect(errors.warnings[0]).toMatch(/^Standard errors are not available: the outcome's values are too far apart in size \(from .* to 1\.000e\+200 in size\)/);
    expect(errors.warnings[0]).toContain("check the stray rows");
  });
});
