/**
 * The engine work a worksheet function hands off: a fit (warm-started from and renumbered to
 * match the formula's previous fit when there is one) or a K scan. The same code runs in the
 * page (small ranges, Node tests) and in the fit worker (large ranges), so both give the same
 * numbers bit for bit.
 */
import { refitFrom } from "../engine/alignComponents";
import { fitMixture } from "../engine/fitMixture";
import type { CancelSignal, MixtureFit, MixtureOptions, RegressionData } from "../engine/mixtureTypes";
import { scanComponents } from "../engine/scanComponents";
import type { ScanOptions, ScanResult } from "../engine/trustTypes";

export interface FitJob {
  kind: "fit";
  data: RegressionData;
  options: Omit<MixtureOptions, "signal" | "previous">;
  /** The formula's previous fit of the same shape: warm start and component numbering. */
  previous?: MixtureFit;
}

export interface ScanJob {
  kind: "scan";
  data: RegressionData;
  options: Omit<ScanOptions, "signal" | "onProgress">;
}

export type EngineJob = FitJob | ScanJob;
export type JobResult<J extends EngineJob> = J extends FitJob ? MixtureFit : ScanResult;

export async function runFitJob(job: FitJob, signal: CancelSignal): Promise<MixtureFit> {
  const options: MixtureOptions = { ...job.options, signal };
  if (job.previous !== undefined) return refitFrom(fitMixture, job.data, options, job.previous);
  return fitMixture(job.data, options);
}

export async function runScanJob(job: ScanJob, signal: CancelSignal): Promise<ScanResult> {
  return scanComponents(job.data, { ...job.options, signal });
}
