import { runAsProcess } from "./main";

// The `skein` program (bundled to dist/cli/skein-main.js, which dist/cli/skein.js starts through
// the code cache, launcher.ts; `npx tsx src/cli/skein.ts ...` runs it from the sources).
runAsProcess();
