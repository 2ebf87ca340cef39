import { runAsProcess } from "./main";

// Entry point of the `skein` command (bundled to dist/cli/skein.js).
runAsProcess();
