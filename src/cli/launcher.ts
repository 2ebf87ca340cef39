import { existsSync } from "node:fs";
import path from "node:path";
import { runWithCompileCache } from "./compileCache";

// The `skein` command (bundled to dist/cli/skein.js, package.json "bin"): starts the program
// bundle beside it (dist/cli/skein-main.js, built from skein.ts) through V8's code cache.
const program = path.join(__dirname, "skein-main.js");
if (existsSync(program)) {
  runWithCompileCache(program);
} else {
  process.stderr.write(`skein: the program file ${program} is missing; build it again with npm run build.\n`);
  process.exitCode = 1;
}
