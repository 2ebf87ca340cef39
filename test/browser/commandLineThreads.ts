/*
 * The built command line with its second thread (dist/cli/skein.js and skein-helper.js, as
 * `npx skein` runs them): a fit on a generated noiseless problem (d = 40, K = 4; invented
 * data from the shared generator) run as its own process with the second thread and with
 * SKEIN_THREADS=1. The second thread must take part (the verbose output counts the steps it
 * took part in) and the results must be the same to the bit (the JSON equal apart from the
 * timings). Then the code cache the command keeps (src/cli/compileCache.ts), in a folder of
 * its own: written by the first run, read by the second, the same JSON from both and from a
 * run with the cache turned off; and the command without its program bundle beside it.
 */
import { execFileSync, spawnSync } from "child_process";
import { promises as fs, readdirSync } from "fs";
import { availableParallelism, tmpdir } from "os";
import * as path from "path";
import { createRandom } from "../../src/engine/random";
import { noiselessProblem } from "../../src/synthetic/generateProblems";

type Check = (name: string, ok: boolean, detail?: string) => void;

const CLI = path.resolve(__dirname, "../../dist/cli/skein.js");

export async function checkCommandLineThreads(check: Check): Promise<void> {
  const problem = noiselessProblem(40, 4, 20, createRandom(31));
  const { n, p, x, y } = problem.data;
  const folder = await fs.mkdtemp(path.join(tmpdir(), "skein-threads-"));
  const file = path.join(folder, "generated.csv");
  const lines = [["y", ...Array.from({ length: p }, (_, j) => `x${j + 1}`)].join(",")];
  // 17 significant digits: the file gives back the same doubles.
  for (let i = 0; i < n; i++) lines.push([y[i], ...x.subarray(i * p, (i + 1) * p)].map((v) => v.toPrecision(17)).join(","));
  await fs.writeFile(file, `${lines.join("\n")}\n`);
  try {
    const run = (threads: string | undefined, ...extra: string[]) =>
      execFileSync(process.execPath, [CLI, "fit", file, "--y", "y", "--k", "4", "--no-intercept", "--seed", "3", ...extra], { encoding: "utf8", env: { ...process.env, SKEIN_THREADS: threads } });
    const withoutTimings = (json: string) => JSON.stringify({ ...JSON.parse(json), timings: undefined });
    const two = withoutTimings(run(undefined, "--json"));
    const one = withoutTimings(run("1", "--json"));
    check("command line: the same fit with and without its second thread", two === one && two.includes('"components"'));
    const verbose = run(undefined, "--verbose");
    const shares = /Threads: 2 \(the second thread took part in ([\d,]+) steps/.exec(verbose);
    if (availableParallelism() < 2) check("command line: one thread on one core", verbose.includes("Threads: 1."));
    else check("command line: the second thread takes part", shares !== null && Number(shares[1].replace(/,/g, "")) > 0, shares?.[0] ?? verbose.split("\n").find((line) => line.startsWith("Threads")) ?? "no threads line");
    check("command line: SKEIN_THREADS=1 keeps to one thread", run("1", "--verbose").includes("Threads: 1."));

    const cacheFolder = path.join(folder, "cache");
    const cached = (setting?: string) =>
      withoutTimings(execFileSync(process.execPath, [CLI, "fit", file, "--y", "y", "--k", "4", "--no-intercept", "--seed", "3", "--json"], { encoding: "utf8", env: { ...process.env, SKEIN_CACHE_DIR: cacheFolder, SKEIN_COMPILE_CACHE: setting } }));
    const first = cached();
    const files = readdirSync(cacheFolder);
    const second = cached();
    const off = cached("0");
    check("command line: the code cache is written once and changes nothing", files.length === 1 && files[0].startsWith("skein-main-") && first === two && second === two && off === two, files.join(", "));

    // The command without its program bundle beside it: a message saying what to do, exit 1.
    const alone = path.join(folder, "alone");
    await fs.mkdir(alone);
    await fs.copyFile(CLI, path.join(alone, "skein.js"));
    const missing = spawnSync(process.execPath, [path.join(alone, "skein.js"), "fit", file, "--y", "y"], { encoding: "utf8" });
    check("command line: a missing program bundle is named, with the fix", missing.status === 1 && missing.stderr.includes("skein-main.js is missing") && missing.stderr.includes("npm run build"), missing.stderr.trim());
  } finally {
    await fs.rm(folder, { recursive: true, force: true });
  }
}
