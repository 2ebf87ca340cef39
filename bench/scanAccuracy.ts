/**
 * Scan accuracy (issue 4, item 1): on well-separated noisy data with true K from 1 to 5, how
 * often does scanComponents suggest the true K? Target: at least 9 times in 10.
 *
 * Problems (a generator of this project, "invented demo" data): p = 2 predictors drawn
 * N(0, 1) independently, an intercept, weights 0.5/K + 0.5·Dirichlet(1,…,1) so each is at
 * least 0.5/K, noise SD per component uniform in [0.5, 1], and coefficient vectors (intercept
 * and slopes) uniform in [−4, 4]³, redrawn until every pair of components is at least
 * MIN_GAP noise SDs apart in the gap of checkSeparation (with x ~ N(0, I) and an intercept,
 * Ê[xxᵀ] = I, so the gap is ‖β_a − β_b‖ / sqrt((σ_a² + σ_b²)/2)). ROWS_PER_COEFFICIENT rows
 * per coefficient per component.
 */
import { createRandom, type Random } from "../src/engine/random";
import type { RegressionData } from "../src/engine/mixtureTypes";
import { scanComponents } from "../src/engine/scanComponents";

/** Well separated: a gap of 4 noise SDs leaves a Bayes error of Φ(−2) ≈ 2% per pair. */
export const MIN_GAP = 4;
export const ROWS_PER_COEFFICIENT = 40;
const P = 2;

export interface ScanProblem {
  data: RegressionData;
  k: number;
  /** Per component: intercept, then P slopes. */
  coefficients: Float64Array[];
  sigmas: number[];
  weights: number[];
  labels: Int32Array;
}

/** One well-separated problem with `k` components (see the module comment). */
export function wellSeparatedProblem(k: number, random: Random, rowsPerCoefficient = ROWS_PER_COEFFICIENT, minGap = MIN_GAP): ScanProblem {
  const q = P + 1;
  const gamma = Array.from({ length: k }, () => -Math.log(1 - random.next()));
  const total = gamma.reduce((s, g) => s + g, 0);
  const weights = gamma.map((g) => 0.5 / k + (0.5 * g) / total);
  const sigmas = weights.map(() => 0.5 + 0.5 * random.next());
  let coefficients: Float64Array[];
  for (;;) {
    coefficients = weights.map(() => Float64Array.from({ length: q }, () => 8 * random.next() - 4));
    let ok = true;
    for (let a = 0; a < k && ok; a++) {
      for (let b = a + 1; b < k && ok; b++) {
        let d = 0;
        for (let j = 0; j < q; j++) d += (coefficients[a][j] - coefficients[b][j]) ** 2;
        ok = Math.sqrt(d) / Math.sqrt((sigmas[a] ** 2 + sigmas[b] ** 2) / 2) >= minGap;
      }
    }
    if (ok) break;
  }
  const n = rowsPerCoefficient * q * k;
  const x = new Float64Array(n * P);
  const y = new Float64Array(n);
  const labels = new Int32Array(n);
  for (let i = 0; i < n; i++) {
    // Component drawn by its weight (inverse CDF of the categorical distribution).
    let u = random.next();
    let c = 0;
    while (c < k - 1 && u >= weights[c]) u -= weights[c++];
    labels[i] = c;
    let fitted = coefficients[c][0];
    for (let j = 0; j < P; j++) {
      const v = random.normal();
      x[i * P + j] = v;
      fitted += coefficients[c][j + 1] * v;
    }
    y[i] = fitted + sigmas[c] * random.normal();
  }
  return { data: { x, y, n, p: P }, k, coefficients, sigmas, weights, labels };
}

export interface ScanAccuracy {
  /** Per true K: [right, tried]. */
  byK: Map<number, [number, number]>;
  right: number;
  tried: number;
  /** Suggested K for each problem, in order. */
  suggestions: { trueK: number; chosenK: number }[];
}

/** Scans `perK` seeded problems for each true K in `trueKs` with kMax = maxK. */
export function measureScanAccuracy(trueKs: readonly number[], perK: number, kMax: number, seed: number): ScanAccuracy {
  const random = createRandom(seed);
  const byK = new Map<number, [number, number]>();
  const suggestions: { trueK: number; chosenK: number }[] = [];
  let right = 0;
  let tried = 0;
  for (const k of trueKs) {
    let rightHere = 0;
    for (let t = 0; t < perK; t++) {
      const problem = wellSeparatedProblem(k, random);
      const scan = scanComponents(problem.data, { kMax, seed: 1 + t });
      suggestions.push({ trueK: k, chosenK: scan.chosenK });
      if (scan.chosenK === k) rightHere++;
      tried++;
    }
    byK.set(k, [rightHere, perK]);
    right += rightHere;
  }
  return { byK, right, tried, suggestions };
}

/** The bench: 20 problems for each true K = 1..5, kMax = 7. */
export function runScanAccuracyBench(print: (line: string) => void): ScanAccuracy {
  const started = performance.now();
  const result = measureScanAccuracy([1, 2, 3, 4, 5], 20, 7, 20240601);
  print("Scan accuracy (well-separated noisy problems, gap ≥ 4 noise SDs, p = 2, intercept, 40 rows per coefficient per component, kMax = 7):");
  for (const [k, [right, tried]] of result.byK) {
    const wrong = result.suggestions.filter((s) => s.trueK === k && s.chosenK !== k).map((s) => s.chosenK);
    print(`  true K = ${k}: suggested K right ${right}/${tried}${wrong.length > 0 ? ` (wrong picks: ${wrong.join(", ")})` : ""}`);
  }
  print(`  overall ${result.right}/${result.tried} = ${((100 * result.right) / result.tried).toFixed(0)}% (target ≥ 90%); ${((performance.now() - started) / 1000).toFixed(1)} s`);
  return result;
}

if (/scanAccuracy\.[cm]?[jt]s$/.test(process.argv[1] ?? "")) runScanAccuracyBench((line) => console.log(line));
