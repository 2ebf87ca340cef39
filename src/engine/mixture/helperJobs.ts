import type { HelperJob } from "../helperThread";
import { componentSums, type ComponentSumsJob } from "./mStep";
import { stepRows, type RowsJob } from "./eStep";

/** Runs a job the EM steps handed to the helper thread (helperThread.ts); called on that thread. */
export function runHelperJob(job: HelperJob): void {
  if (job.kind === "componentSums") componentSums(job as ComponentSumsJob);
  else if (job.kind === "rows") stepRows(job as RowsJob);
  else throw new Error(`unknown helper job ${job.kind}`);
}
