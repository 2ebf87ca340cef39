/**
 * Scan accuracy: on well-separated noisy data with true K from 1 to 5, how
 * often does scanComponents suggest the true K? Target: at least 9 times in 10.
 *
 * Problems: wellSeparatedProblem of src/synthetic/generateProblems.ts (invented demo data,
 * components at least MIN_GAP noise SDs apart).
 */
import { createRandom } from "../src/engine/random";
import { wellSeparatedProblem } from "../src/synthetic/generateProblems";
import { scanComponents } from "../src/engine/scanComponents";

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
