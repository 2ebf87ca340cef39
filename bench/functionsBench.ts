/**
 * Worksheet-function bench: SKEIN.FIT on 100,000 rows x 10 predictors
 * through the function adapter, as Excel calls it (ranges as arrays of rows of numbers), and
 * what a cache hit costs. Printed, never asserted.
 *
 * Measured in Node, where there is no Web Worker: every fit here runs on the calling thread.
 * In Excel the same large fit runs in the fit worker (src/service/engineRunner.ts), so the add-in thread
 * is busy only for the fingerprint and the data layer, and the worker adds a copy of the data.
 */
import { performance } from "node:perf_hooks";
import { buildDesign } from "../src/engine/design";
import { createRandom } from "../src/engine/random";
import { engineCallCounts, WORKER_MIN_CELLS } from "../src/service/engineRunner";
import { fit, labels } from "../src/functions/functions";
import { hashCells } from "../src/service/hashCells";
import { engineService } from "../src/service/engineService";
import { median } from "../src/engine/median";
import { noisyProblem } from "../src/synthetic/generateProblems";

const K = 3;
const PREDICTORS = 10;

/** The problem's data as the 2-D arrays Excel passes for a y range and an x range. */
function asRanges(problem: ReturnType<typeof noisyProblem>): { y: number[][]; x: number[][] } {
  const { x, y, n, p } = problem.data;
  const yRange: number[][] = new Array(n);
  const xRange: number[][] = new Array(n);
  for (let i = 0; i < n; i++) {
    yRange[i] = [y[i]];
    xRange[i] = Array.from(x.subarray(i * p, i * p + p));
  }
  return { y: yRange, x: xRange };
}

function copyRanges(ranges: { y: number[][]; x: number[][] }): { y: number[][]; x: number[][] } {
  return { y: ranges.y.map((row) => [...row]), x: ranges.x.map((row) => [...row]) };
}

function installErrorStandIn(): void {
  const scope = globalThis as Record<string, unknown>;
  if (scope.CustomFunctions) return;
  scope.CustomFunctions = {
    Error: class extends Error {
      constructor(readonly code: string, message?: string) {
        super(message ?? code);
      }
    },
    ErrorCode: { invalidValue: "#VALUE!", notAvailable: "#N/A", invalidNumber: "#NUM!" },
  };
}

async function time<T>(work: () => Promise<T> | T): Promise<[T, number]> {
  const start = performance.now();
  const result = await work();
  return [result, performance.now() - start];
}

const ms = (value: number) => `${value.toFixed(value < 10 ? 2 : 0)} ms`;

export async function runFunctionsBench(print: (line: string) => void): Promise<void> {
  installErrorStandIn();
  print("Worksheet functions (Node: fits run on the calling thread; in Excel large fits go to a Web Worker)");

  const problem = noisyProblem(PREDICTORS, K, Math.ceil(100000 / (PREDICTORS * K)), createRandom(2024));
  const ranges = asRanges(problem);
  const rows = ranges.y.length;
  const cells = rows * (PREDICTORS + 1);
  print(`  data: ${rows} rows x ${PREDICTORS} predictors, K = ${K}, noisy with intercepts (src/synthetic/generateProblems.ts, seed 2024)`);

  // The parts of a first call, measured alone.
  const [, hashTime] = await time(() => hashCells(ranges.y, ranges.x));
  const [, designTime] = await time(() => buildDesign(ranges.y, ranges.x));
  engineService.clear();
  const fitsBefore = engineCallCounts.fits;
  const [components, firstCall] = await time(() => fit(ranges.y, ranges.x, K));
  print(`  SKEIN.FIT first call (cache miss): ${ms(firstCall)} (${engineCallCounts.fits - fitsBefore} engine fit; ${components.length} rows spilled)`);
  print(`    of which fingerprint of ${cells} cells: ${ms(hashTime)}; data layer (buildDesign): ${ms(designTime)}; the rest is the engine fit`);

  const sameArrays: number[] = [];
  const freshArrays: number[] = [];
  const labelHits: number[] = [];
  for (let repeat = 0; repeat < 5; repeat++) {
    sameArrays.push((await time(() => fit(ranges.y, ranges.x, K)))[1]);
    // Excel passes new arrays on every call: fingerprinting them is the real cost of a hit.
    const fresh = copyRanges(ranges);
    freshArrays.push((await time(() => fit(fresh.y, fresh.x, K)))[1]);
    labelHits.push((await time(() => labels(ranges.y, ranges.x, K)))[1]);
  }
  print(`  SKEIN.FIT cache hit: ${ms(median(Float64Array.from(freshArrays)))} median of 5 (equal cells in new arrays), ${ms(median(Float64Array.from(sameArrays)))} (the same arrays); ${engineCallCounts.fits - fitsBefore} engine fit in all`);
  print(`  SKEIN.LABELS cache hit, spilling ${rows} rows: ${ms(median(Float64Array.from(labelHits)))} median of 5`);
  print(`  cache hit as a share of the first call: ${((100 * median(Float64Array.from(freshArrays))) / firstCall).toFixed(2)}%`);

  // Where the page/worker threshold sits: fit times of small ranges on the calling thread.
  for (const smallRows of [30, 90, 200, 1000, 5000]) {
    const predictors = smallRows < 100 ? 1 : PREDICTORS;
    const small = asRanges(noisyProblem(predictors, K, Math.ceil(smallRows / (predictors * K)), createRandom(7)));
    engineService.clear();
    const [, smallTime] = await time(() => fit(small.y, small.x, K));
    const smallCells = small.y.length * (predictors + 1);
    const place = smallCells >= WORKER_MIN_CELLS ? "worker in Excel" : "page in Excel";
    print(`  ${small.y.length} rows x ${predictors}: first call ${ms(smallTime)} (${smallCells} cells: ${place}; threshold ${WORKER_MIN_CELLS})`);
  }
  engineService.clear();
}

// `npx tsx bench/functionsBench.ts` runs it alone.
if (process.argv[1] && /functionsBench\.ts$/.test(process.argv[1])) {
  runFunctionsBench((line) => console.log(line)).catch((error) => {
    console.error(error);
    process.exitCode = 1;
  });
}
