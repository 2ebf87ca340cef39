import { closeSync, mkdirSync, openSync, readdirSync, readFileSync, renameSync, statSync, unlinkSync, writeSync } from "node:fs";
import { homedir } from "node:os";
import path from "node:path";
import Module, { createRequire } from "node:module";
import vm from "node:vm";

/**
 * Runs a built CommonJS script (the command line's program bundle) with V8's code cache: the
 * bytecode of every function the last such run compiled, kept in a file, so a new process
 * starts with those functions compiled instead of parsing and compiling each on its first call
 * (Node's own module loader keeps no such cache on Node 20). A small sheet's `skein fit`
 * process spends about a tenth of its time less (DEVELOPERS.md has the figures). V8 checks the
 * cache against the source and its own version and flags, and ignores one that does not match;
 * the file name also carries the script's path, size and modification time and Node's version,
 * so a rebuilt script or another Node starts a new file.
 *
 * The cache is written when the process ends: when there was none (or V8 rejected it), or when
 * this run compiled a tenth more than the cache held (the first run may have been `--help`);
 * the file of an earlier build of the same script (same path) for the same Node is then removed.
 * Nothing about the cache can change what the command prints or fail it: a cache directory that
 * cannot be made, read or written just means no cache.
 *
 * Where: SKEIN_CACHE_DIR, else $XDG_CACHE_HOME/skein, else ~/.cache/skein (made readable by its
 * owner only). SKEIN_COMPILE_CACHE=0 turns it off.
 */
export function runWithCompileCache(script: string): void {
  const program = compileWithCache(script);
  process.once("exit", () => program.saveCache());
  program.run();
}

/** A script compiled with its code cache (when one was found and V8 accepted it), ready to run. */
export interface CachedProgram {
  /** The cache file, or null when caching is off or its place cannot be known. */
  cacheFile: string | null;
  /** Whether V8 took its compiled functions from the cache. */
  fromCache: boolean;
  /** Runs the script as a CommonJS module (its own require, __filename and __dirname). */
  run(): void;
  /** Writes the cache when it is missing, was rejected, or this run compiled a tenth more; never throws. Whether it wrote. */
  saveCache(): boolean;
}

export function compileWithCache(script: string): CachedProgram {
  const source = readFileSync(script, "utf8").replace(/^#!.*/, "");
  const file = cacheFile(script);
  const cached = file ? readCache(file) : undefined;
  const compiled = new vm.Script(Module.wrap(source), { filename: script, cachedData: cached });
  const held = cached && !compiled.cachedDataRejected ? cached.length : 0;
  return {
    cacheFile: file,
    fromCache: held > 0,
    run: () => {
      const program = new Module(script);
      program.filename = script;
      const run = compiled.runInThisContext() as (exports: unknown, require: NodeRequire, module: Module, filename: string, dirname: string) => void;
      run.call(program.exports, program.exports, createRequire(script), program, script, path.dirname(script));
    },
    saveCache: () => (file ? writeCache(file, script, compiled, held) : false),
  };
}

/** A run that compiled this much more than the cache held writes it again. */
const REWRITE_GROWTH = 1.1;

function cacheFile(script: string): string | null {
  if (process.env.SKEIN_COMPILE_CACHE === "0") return null;
  try {
    const { size, mtimeMs } = statSync(script);
    const directory = process.env.SKEIN_CACHE_DIR || path.join(process.env.XDG_CACHE_HOME || path.join(homedir(), ".cache"), "skein");
    const { head, tail } = nameParts(script);
    return path.join(directory, `${head}${size}-${Math.round(mtimeMs)}${tail}`);
  } catch {
    return null;
  }
}

function readCache(file: string): Buffer | undefined {
  try {
    return readFileSync(file);
  } catch {
    return undefined;
  }
}

/**
 * Removes the caches of earlier builds of the same script for the same Node (names that differ
 * only in the size and modification time), so that rebuilding does not pile files up. A cache
 * for another Node version, another install or another script is left alone.
 */
function removeOlderBuilds(file: string, script: string): void {
  const directory = path.dirname(file);
  const name = path.basename(file);
  const { head, tail } = nameParts(script);
  let names: string[];
  try {
    names = readdirSync(directory);
  } catch {
    return;
  }
  for (const other of names) {
    const earlier = other !== name && other.startsWith(head) && other.endsWith(tail) && /^\d+-\d+$/.test(other.slice(head.length, other.length - tail.length));
    if (!earlier) continue;
    try {
      unlinkSync(path.join(directory, other));
    } catch {
      // Another process removed it first.
    }
  }
}

/**
 * The cache file name is head, size-mtime, tail: the head names the script and hashes its full
 * path (two installs keep two caches), the size and modification time follow (a rebuild starts
 * a new file), and the tail names this Node.
 */
function nameParts(script: string): { head: string; tail: string } {
  return { head: `${path.basename(script, ".js")}-${pathHash(path.resolve(script))}-`, tail: `-${process.version}-${process.arch}.cache` };
}

/** FNV-1a (Fowler, Noll & Vo), 32 bits, in hexadecimal: a short name for a path, not a security measure. */
function pathHash(text: string): string {
  let hash = 0x811c9dc5;
  for (let i = 0; i < text.length; i++) hash = Math.imul(hash ^ text.charCodeAt(i), 0x01000193) >>> 0;
  return hash.toString(16).padStart(8, "0");
}

/** Writes the cache through a file of its own renamed into place, so a reader never sees half of one. */
function writeCache(file: string, script: string, compiled: vm.Script, held: number): boolean {
  const temporary = `${file}.${process.pid}.tmp`;
  try {
    const data = compiled.createCachedData();
    if (held > 0 && data.length < REWRITE_GROWTH * held) return false;
    mkdirSync(path.dirname(file), { recursive: true, mode: 0o700 });
    const descriptor = openSync(temporary, "w", 0o600);
    try {
      writeSync(descriptor, data);
    } finally {
      closeSync(descriptor);
    }
    renameSync(temporary, file);
    removeOlderBuilds(file, script);
    return true;
  } catch {
    try {
      unlinkSync(temporary);
    } catch {
      // Nothing was left behind.
    }
    return false;
  }
}
