import { SkeinError } from "../engine/errors";
import { demoCommand } from "./demoCommand";
import { fitCommand } from "./fitCommand";
import { predictCommand } from "./predictCommand";
import { scanCommand } from "./scanCommand";
import { helperScript, installHelperThread } from "./helperThread";
import type { CommandIO } from "./commandIO";

export const USAGE = `Usage: skein COMMAND [arguments]

Skein finds the components of a table: groups of rows that each share one
linear regression of the outcome on the predictors (a mixture of linear
regressions). It is an Excel add-in; this is its command line.

Commands:
  fit       fit the regressions to a .csv or .xlsx file
  scan      compare numbers of components and suggest one
  predict   fit, then predict the rows of another file
  demo      run on the sample workbooks (invented data) and write results

Run skein COMMAND --help for a command's options.
`;

const COMMANDS = ["fit", "scan", "predict", "demo"];
const COMMANDS_NOT_YET_AVAILABLE = new Set<string>();

/** One line for stderr: what went wrong, without line breaks. */
function oneLine(message: string): string {
  return message.replace(/\s*\n\s*/g, " ").trim();
}

/**
 * The command line: runs one command and returns its exit status: 0 success,
 * 2 a mistake in the arguments or the data (one line on stderr saying what to
 * fix), 1 an unexpected failure.
 */
export async function main(argv: readonly string[], io: CommandIO): Promise<number> {
  const [command, ...rest] = argv;
  try {
    if (command === undefined) {
      io.stderr("skein: no command given; try skein fit FILE --y COLUMN, or skein --help\n");
      return 2;
    }
    if (command === "--help" || command === "-h" || command === "help") {
      io.stdout(USAGE);
      return 0;
    }
    if (command === "fit") return await fitCommand(rest, io);
    if (command === "demo") return await demoCommand(rest, io);
    if (command === "scan") return await scanCommand(rest, io);
    if (command === "predict") return await predictCommand(rest, io);
    if (COMMANDS_NOT_YET_AVAILABLE.has(command)) {
      io.stderr(`skein: ${command} is not available yet in this build; skein fit is\n`);
      return 2;
    }
    io.stderr(`skein: unknown command "${command}"; the commands are ${COMMANDS.join(", ")}\n`);
    return 2;
  } catch (error) {
    if (error instanceof SkeinError && error.code !== "cancelled") {
      io.stderr(`skein: ${oneLine(error.message)}\n`);
      return 2;
    }
    const message = error instanceof Error ? error.message : String(error);
    io.stderr(`skein: internal error: ${oneLine(message)} (please report this)\n`);
    return 1;
  }
}

/** Runs main on this process's arguments and sets its exit status. */
export function runAsProcess(): void {
  // The engine's helper thread, from the bundle beside the command's own (helperThread.ts).
  const helper = helperScript();
  if (helper) installHelperThread(helper);
  void main(process.argv.slice(2), {
    stdout: (s) => process.stdout.write(s),
    stderr: (s) => process.stderr.write(s),
    progress: process.stderr.isTTY === true,
  }).then((status) => {
    // exitCode rather than process.exit(): lets piped output finish writing.
    process.exitCode = status;
  });
}

// `npx tsx src/cli/main.ts ...` runs this file directly; the bundled command
// line enters through skein.ts instead, so this test needs no module tricks.
if (/[\\/]cli[\\/]main\.[cm]?[jt]s$/.test(process.argv[1] ?? "")) runAsProcess();
