import { describe, expect, it } from "vitest";
import { convergedWord, scanComponents, suggestK, BIC_TIE } from "../src/engine/scanComponents";
import { generateProblem, wellSeparatedProblem } from "../src/synthetic/generateProblems";
import { createRandom } from "../src/engine/random";
import { SkeinError } from "../src/engine/errors";

describe("suggestK (the rule stated in scanComponents.ts)", () => {
  it("takes the smallest BIC among unflagged K, then the smallest K within BIC_TIE of it", () => {
    // Invented BIC values.
    const rows = [
      { k: 1, bic: 500, flag: null },
      { k: 2, bic: 300, flag: null },
      { k: 3, bic: 300 - BIC_TIE / 2, flag: null },
      { k: 4, bic: 100, flag: "Not suggested: near-degenerate." },
    ];
    expect(suggestK(rows)).toBe(2);
    rows[2].bic = 300 - 2 * BIC_TIE;
    expect(suggestK(rows)).toBe(3);
  });

  it("a BIC that is no number cannot win, and never turns the suggestion into no K at all", () => {
    // Invented BIC values. Before, a NaN BIC made the least BIC NaN and the suggestion
    // Math.min() of nothing, Infinity, which the scan then used as a row index.
    const rows = [
      { k: 1, bic: 500, flag: null },
      { k: 2, bic: NaN, flag: null },
      { k: 3, bic: 300, flag: null },
    ];
    expect(suggestK(rows)).toBe(3);
    expect(suggestK([{ k: 1, bic: NaN, flag: null }])).toBe(1);
  });
});

describe("scanComponents", () => {
  it("suggests the true K on seeded well-separated problems, K = 1..4 (target: at least 9 in 10)", () => {
    // Invented demo problems (wellSeparatedProblem); the bench's scan section runs 100 of them.
    const random = createRandom(77);
    let right = 0;
    let tried = 0;
    for (const k of [1, 2, 3, 4]) {
      for (let t = 0; t < 3; t++) {
        const problem = wellSeparatedProblem(k, random);
        if (scanComponents(problem.data, { kMax: 5, seed: 1 + t }).chosenK === k) right++;
        tried++;
      }
    }
    expect(tried).toBe(12);
    expect(right / tried).toBeGreaterThanOrEqual(0.9);
  });

  it("reports each K with BIC from the stated parameter count, ICL ≥ BIC, and calls onProgress per K", () => {
    const problem = wellSeparatedProblem(2, createRandom(5), 30);
    const progress: number[] = [];
    const scan = scanComponents(problem.data, { kMax: 3, seed: 4, crossValidate: true, onProgress: (k) => progress.push(k) });
    expect(progress).toEqual([1, 2, 3]);
    expect(scan.rows.map((r) => r.k)).toEqual([1, 2, 3]);
    const n = problem.data.n;
    for (const row of scan.rows) {
      // ν = K(q + 2) − 1 with q = 3 (intercept and two slopes): Schwarz (1978).
      const nu = row.k * (3 + 2) - 1;
      expect(row.bic).toBeCloseTo(-2 * row.logLikelihood + nu * Math.log(n), 8);
      expect(row.icl).toBeGreaterThanOrEqual(row.bic - 1e-9);
      expect(Number.isFinite(row.crossValidatedLogLikelihood)).toBe(true);
    }
    expect(scan.rows[0].minSeparation).toBe(Infinity);
    expect(scan.chosenK).toBe(2);
    // The held-out likelihood of the true K beats one component (common practice: CV rewards real structure).
    expect(scan.rows[1].crossValidatedLogLikelihood).toBeGreaterThan(scan.rows[0].crossValidatedLogLikelihood);
    expect(scan.rule).toMatch(/BIC/);
    // Every K but the suggested one says why it is not suggested; the smaller K = 1 lost on BIC.
    for (const row of scan.rows) expect(row.note === null).toBe(row.k === scan.chosenK);
    expect(scan.rows[0].note).toMatch(/^Not suggested: lost on BIC, \d+ higher than that of K = 2\.$/);
    // "Starts agree" and "converged" are reported apart.
    for (const row of scan.rows) expect(typeof row.startsAgree).toBe("boolean");
  });

  it("on one noisy regression with few rows, larger K that fit noise are flagged, not suggested", () => {
    // Invented demo: one regression, 5 predictors, 100 rows (20 per coefficient·component at
    // K = 1, so K ≥ 2 fall in the small-sample regime checked by cross-validation).
    const random = createRandom(123);
    const n = 100;
    const p = 5;
    const x = new Float64Array(n * p);
    const y = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      let fitted = 0.5;
      for (let j = 0; j < p; j++) {
        x[i * p + j] = random.normal();
        fitted += (j + 1) * 0.1 * x[i * p + j];
      }
      y[i] = fitted + 0.1 * random.normal();
    }
    const scan = scanComponents({ x, y, n, p }, { kMax: 6, seed: 1 });
    expect(scan.chosenK).toBe(1);
    // By the rule (module comment of scanComponents): K = 1 is chosen only if every K > 1
    // that beats it by more than BIC_TIE units carries a flag saying why it is not suggested.
    for (const row of scan.rows) if (row.k > 1 && row.bic < scan.rows[0].bic - BIC_TIE) expect(row.flag).toMatch(/^Not suggested: /);
  });

  it("stops with a cancelled error when the signal is raised", () => {
    const problem = wellSeparatedProblem(1, createRandom(8), 20);
    const signal = { aborted: false };
    let error: unknown;
    try {
      scanComponents(problem.data, { kMax: 3, signal, onProgress: () => (signal.aborted = true) });
    } catch (caught) {
      error = caught;
    }
    expect(error).toBeInstanceOf(SkeinError);
    expect((error as SkeinError).code).toBe("cancelled");
  });
});

describe("cross-validation with a background component", () => {
  it("scores a held-out slip under the background too, as the K's own fit does", () => {
    // Invented: 48 rows from y = 2 + 3x and y = 20 − x (noise SD about 0.4), x in [0, 10];
    // row 10's y typed as 5000. 48 rows are fewer than 20 per coefficient per component, so
    // the scan cross-validates.
    const random = createRandom(21);
    const n = 48;
    const x = new Float64Array(n);
    const y = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      x[i] = 10 * random.next();
      const noise = (random.next() + random.next() + random.next() - 1.5) * 0.8;
      y[i] = i === 9 ? 5000 : i % 2 === 1 ? 2 + 3 * x[i] + noise : 20 - x[i] + noise;
    }
    const scan = scanComponents({ x, y, n, p: 1 }, { kMax: 2, seed: 1, background: "auto", crossValidate: true });
    expect(scan.chosenK).toBe(2);
    const two = scan.rows[1];
    expect(two.fit.background).toBeDefined();
    // Before, the folds that held out the slip were fitted without a background and the slip
    // scored about −7e7 under the two lines, so the mean held-out log-likelihood per row was
    // about −1.5e6. With the background's share π₀ / V it costs about ln(0.02 / 5000) ≈ −12.
    expect(two.crossValidatedLogLikelihood).toBeGreaterThan(-5);
    expect(two.crossValidatedLogLikelihood).toBeGreaterThan(scan.rows[0].crossValidatedLogLikelihood);
  });
});

describe("a K that cannot change the suggestion", () => {
  it("stops early, says so, and the suggestion and the finished fits agree", () => {
    // Invented: one regression on 2 predictors, 800 rows, noise SD 0.3 (generateProblem):
    // more than 20 rows per coefficient per component up to K = 3, so the rule is BIC alone.
    const problem = generateProblem({ n: 800, p: 2, k: 1, seed: 31, sigma: 0.3, intercept: true });
    const scan = scanComponents(problem.data, { kMax: 3, seed: 1 });
    // With cross-validation asked for no fit stops (the folds could rule a K out after the fits).
    const finished = scanComponents(problem.data, { kMax: 3, seed: 1, crossValidate: true });
    expect(scan.chosenK).toBe(1);
    expect(finished.chosenK).toBe(1);
    for (const row of finished.rows) expect(row.stopped).toBeNull();
    const stopped = scan.rows.filter((row) => row.stopped !== null);
    expect(stopped.length).toBeGreaterThan(0);
    for (const row of stopped) {
      expect(row.converged).toBe(false);
      expect(convergedWord(row)).toBe("stopped");
      expect(row.flag).toMatch(/^Not suggested: stopped early, not converged \(after \d+ iterations\): .*could not come within 6 of that of K = 1, so it could not change the suggestion/);
      expect(row.note).toBe(row.flag);
      // What it reached is more than the tie above K = 1, and so is the finished fit of that K.
      expect(row.bic).toBeGreaterThan(scan.rows[0].bic + BIC_TIE);
      expect(finished.rows[row.k - 1].bic).toBeGreaterThan(finished.rows[0].bic + BIC_TIE);
    }
    expect(convergedWord(scan.rows[0])).toBe("yes");
    expect(scan.rule).toMatch(/was stopped early: it could not change the suggestion\.$/);
    expect(finished.rule).not.toMatch(/stopped early/);
  });
});
