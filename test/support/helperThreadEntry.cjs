// The helper thread's entry for the tests: the command line's own loop (src/cli/helperThread.ts),
// its TypeScript loaded through tsx as the test runner does not reach worker threads.
require("tsx/cjs");
require("../../src/cli/helperThread.ts").runHelperLoop();
