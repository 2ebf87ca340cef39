import type { HelperJob } from "../helperThread";
import { componentSums, type ComponentSumsJob } from "./mStep";
import { stepRows, type RowsJob } from "./eStep";
import { concentrateStarts, type ConcentrationJob } from "./concentrationSteps";
import { refineStarts, type RefinementJob } from "../warmStart/refinementRuns";

/** Runs a job the EM steps (or the concentration steps, or the warm start's refinements) handed to the helper thread (helperThread.ts); called on that thread. */
export function runHelperJob(job: HelperJob): void {
  if (job.kind === "componentSums") componentSums(job as ComponentSumsJob);
  else if (job.kind === "rows") stepRows(job as RowsJob);
  else if (job.kind === "concentration") concentrateStarts(job as ConcentrationJob);
  else if (job.kind === "refinement") refineStarts(job as RefinementJob);
  else throw new Error(`unknown helper job ${job.kind}`);
}
