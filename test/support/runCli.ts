import { main } from "../../src/cli/main";

/** What one `skein` command printed and its exit status. */
export interface CliRun {
  status: number;
  stdout: string;
  stderr: string;
}

/** Runs the command line in-process, as `skein ARGV...`, and collects what it prints. */
export async function runCli(...argv: string[]): Promise<CliRun> {
  let stdout = "";
  let stderr = "";
  const status = await main(argv, { stdout: (s) => (stdout += s), stderr: (s) => (stderr += s) });
  return { status, stdout, stderr };
}
