import { runHelperLoop } from "./helperThread";

// Entry point of the command line's helper thread (bundled to dist/cli/skein-helper.js beside
// skein.js): the engine's EM steps only, without the command line's readers and writers.
runHelperLoop();
