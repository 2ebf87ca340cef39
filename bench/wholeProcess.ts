/**
 * Whole-process figures for the bench's "large" section: the built command line
 * (dist/cli/skein.js, what `npx skein` runs) started as a child process on a CSV file written
 * from a generated problem, timed from outside, its peak resident memory read at its exit
 * (bench/reportPeakMemory.cjs, preloaded) and its own read and fit times from its --json.
 */
import { spawnSync } from "child_process";
import { existsSync, mkdtempSync, rmSync, writeFileSync } from "fs";
import { tmpdir } from "os";
import * as path from "path";
import type { GeneratedProblem } from "../src/synthetic/generateProblems";

const CLI = path.resolve(__dirname, "../dist/cli/skein.js");
const PEAK_REPORTER = path.resolve(__dirname, "reportPeakMemory.cjs");

export interface ProcessFigures {
  wallMs: number;
  peakMegabytes: number;
  /** The command's --json output. */
  json: Record<string, unknown>;
}

/** Whether the built command line exists (npm run build); the section says so when not. */
export function cliBuilt(): boolean {
  return existsSync(CLI);
}

/**
 * The problem as a CSV file (y, x1..xp; ten significant digits, or 17 to read back the same
 * doubles) in a fresh temporary folder; call the returned cleanup when done.
 */
export function writeProblemCsv(problem: GeneratedProblem, digits = 10): { file: string; cleanup: () => void } {
  const { n, p, x, y } = problem.data;
  const folder = mkdtempSync(path.join(tmpdir(), "skein-bench-"));
  const file = path.join(folder, `generated-${n}x${p}.csv`);
  const lines: string[] = [["y", ...Array.from({ length: p }, (_, j) => `x${j + 1}`)].join(",")];
  for (let i = 0; i < n; i++) {
    let line = y[i].toPrecision(digits);
    for (let j = 0; j < p; j++) line += `,${x[i * p + j].toPrecision(digits)}`;
    lines.push(line);
  }
  writeFileSync(file, `${lines.join("\n")}\n`);
  return { file, cleanup: () => rmSync(folder, { recursive: true, force: true }) };
}

/**
 * Runs `skein ARGS --json` as its own process; the reason instead of figures when it fails, or
 * when it still runs after `timeoutMs` (it is then stopped). `oneThread`: with SKEIN_THREADS=1,
 * without the second thread the command line otherwise uses on a machine of two or more cores.
 */
export function runCli(args: string[], timeoutMs?: number, oneThread = false): ProcessFigures | string {
  const began = performance.now();
  const env = oneThread ? { ...process.env, SKEIN_THREADS: "1" } : { ...process.env, SKEIN_THREADS: undefined };
  const child = spawnSync(process.execPath, ["-r", PEAK_REPORTER, CLI, ...args, "--json"], { encoding: "utf8", maxBuffer: 1 << 30, timeout: timeoutMs, env });
  const wallMs = performance.now() - began;
  if (child.signal !== null) return `stopped after ${(wallMs / 1000).toFixed(1)} s (${child.signal})`;
  const peak = /peak resident kB (\d+)/.exec(child.stderr ?? "");
  if (child.status !== 0 || !peak) return `exit ${child.status}: ${(child.stderr ?? "").trim().split("\n")[0]}`;
  return { wallMs, peakMegabytes: Number(peak[1]) / 1024, json: JSON.parse(child.stdout) as Record<string, unknown> };
}
