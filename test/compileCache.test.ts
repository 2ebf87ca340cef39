import { spawnSync } from "node:child_process";
import { existsSync, mkdtempSync, readdirSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterEach, beforeEach, describe, expect, it } from "vitest";

// The launcher's code cache may only change how fast the program starts: the program runs the
// same with a cache, without one, with a damaged one and with nowhere to keep one. Each run is
// a Node process of its own, as each `skein` command is (within one process V8 reuses what it
// compiled and never reads the cache again).

const root = path.resolve(__dirname, "..");
let directory: string;
let script: string;

/** A small CommonJS program in the shape of the bundle: a shebang, require, __filename and __dirname. */
const PROGRAM = `#!/usr/bin/env node
const path = require("node:path");
function sumOfSquares(n) { let s = 0; for (let i = 1; i <= n; i++) s += i * i; return s; }
globalThis.__cacheTestRun = { name: path.basename(__filename), dirname: __dirname, sum: sumOfSquares(10) };
module.exports = { ok: true };
`;

interface Run {
  fromCache: boolean;
  result: unknown;
  saved: boolean;
  cacheFile: string | null;
}

/** Compiles and runs the program in a new Node process, then asks it to save its cache. */
function runProgram(environment: Record<string, string> = {}): Run {
  const code = `const { compileWithCache } = require("./src/cli/compileCache.ts");
    const program = compileWithCache(${JSON.stringify(script)});
    program.run();
    const saved = program.saveCache();
    console.log(JSON.stringify({ fromCache: program.fromCache, result: globalThis.__cacheTestRun, saved, cacheFile: program.cacheFile }));`;
  const child = spawnSync(process.execPath, ["--import", "tsx", "-e", code], {
    cwd: root,
    timeout: 60000,
    encoding: "utf8",
    env: { ...process.env, SKEIN_CACHE_DIR: path.join(directory, "cache"), SKEIN_COMPILE_CACHE: "", ...environment },
  });
  if (child.status !== 0) throw new Error(`child failed: ${child.stderr}`);
  return JSON.parse(child.stdout) as Run;
}

// 1² + … + 10² = 10·11·21/6 = 385.
const EXPECTED = () => ({ name: "program.js", dirname: path.dirname(script), sum: 385 });

beforeEach(() => {
  directory = mkdtempSync(path.join(tmpdir(), "skein-cache-test-"));
  script = path.join(directory, "program.js");
  writeFileSync(script, PROGRAM);
});

afterEach(() => {
  rmSync(directory, { recursive: true, force: true });
});

describe("the command line's code cache", () => {
  it("writes a cache after the first run and compiles from it on the next, the program's result the same", () => {
    const first = runProgram();
    expect(first.fromCache).toBe(false);
    expect(first.result).toEqual(EXPECTED());
    expect(first.saved).toBe(true);
    expect(existsSync(first.cacheFile as string)).toBe(true);

    const second = runProgram();
    expect(second.fromCache).toBe(true);
    expect(second.result).toEqual(EXPECTED());
    // Nothing new was compiled, so the cache is not written again.
    expect(second.saved).toBe(false);
  });

  it("ignores a damaged cache, runs the program and replaces the cache", () => {
    const first = runProgram();
    writeFileSync(first.cacheFile as string, Buffer.from("not a code cache at all"));
    const damaged = runProgram();
    expect(damaged.fromCache).toBe(false);
    expect(damaged.result).toEqual(EXPECTED());
    expect(damaged.saved).toBe(true);
    expect(runProgram().fromCache).toBe(true);
  });

  it("starts a new cache when the program file changes", () => {
    runProgram();
    writeFileSync(script, PROGRAM.replace("sumOfSquares(10)", "sumOfSquares(10) + 0"));
    const changed = runProgram();
    expect(changed.fromCache).toBe(false);
    expect(changed.result).toEqual(EXPECTED());
  });

  it("removes the caches of earlier builds of the program, not those of another Node or another program", () => {
    const cacheFolder = path.join(directory, "cache");
    // The first run's name gives this program's path hash; its cache is then moved aside as
    // an earlier build's would be, beside caches that must stay.
    const first = runProgram();
    const name = path.basename(first.cacheFile as string);
    const hash = name.split("-")[1];
    const node = `${process.version}-${process.arch}.cache`;
    const earlierBuild = `program-${hash}-100-200-${node}`;
    const otherNode = `program-${hash}-100-200-v0.0.0-${process.arch}.cache`;
    const otherInstall = `program-00000000-100-200-${node}`;
    const otherProgram = `program-helper-${hash}-100-200-${node}`;
    rmSync(first.cacheFile as string);
    for (const other of [earlierBuild, otherNode, otherInstall, otherProgram]) writeFileSync(path.join(cacheFolder, other), "old");
    const run = runProgram();
    expect(run.saved).toBe(true);
    expect(readdirSync(cacheFolder).sort()).toEqual([name, otherNode, otherInstall, otherProgram].sort());
  });

  it("runs without a cache when its directory cannot be made, and says nothing", () => {
    // A plain file where the cache directory should be.
    writeFileSync(path.join(directory, "cache"), "in the way");
    const run = runProgram();
    expect(run.result).toEqual(EXPECTED());
    expect(run.saved).toBe(false);
    expect(readdirSync(directory).sort()).toEqual(["cache", "program.js"]);
  });

  it("keeps no cache when SKEIN_COMPILE_CACHE is 0", () => {
    const run = runProgram({ SKEIN_COMPILE_CACHE: "0" });
    expect(run.cacheFile).toBeNull();
    expect(run.result).toEqual(EXPECTED());
    expect(run.saved).toBe(false);
    expect(existsSync(path.join(directory, "cache"))).toBe(false);
  });
});
