import { runAsProcess } from "./main";
import { isHelperThread, runHelperLoop } from "./helperThread";

// Entry point of the `skein` command (bundled to dist/cli/skein.js). The command's helper
// thread (helperThread.ts) runs this same file and waits for the engine's jobs instead.
if (isHelperThread()) runHelperLoop();
else runAsProcess();
