/**
 * The requests the engine service runs: a fit (warm-started from and renumbered to match a
 * previous fit when there is one), a K scan (with progress), the description of a fit
 * (separation check and standard errors) and predictions for new rows. The same code runs in
 * the page and in the engine worker, so both give the same numbers bit for bit. This is the
 * only module of the hosts that calls the engine's fitting entry points.
 */
import { refitFrom } from "../engine/alignComponents";
import { checkSeparation } from "../engine/checkSeparation";
import { fitMixture } from "../engine/fitMixture";
import type { CancelSignal, MixtureFit, MixtureOptions, RegressionData } from "../engine/mixtureTypes";
import { predictRows } from "../engine/predictRows";
import { scanComponents } from "../engine/scanComponents";
import { standardErrors } from "../engine/standardErrors";
import type { Prediction, ScanOptions, ScanResult, SeparationReport, StandardErrorReport } from "../engine/trustTypes";

/** The options of one fit, as they travel to a worker (no signal, no previous fit). */
export type FitJobOptions = Omit<MixtureOptions, "signal" | "previous">;
/** The options of one scan, as they travel to a worker (no signal, no progress callback). */
export type ScanJobOptions = Omit<ScanOptions, "signal" | "onProgress">;

export interface FitJob {
  kind: "fit";
  data: RegressionData;
  options: FitJobOptions;
  /** The fit shown before for this data: warm start and component numbering. */
  previous?: MixtureFit;
}

export interface ScanJob {
  kind: "scan";
  data: RegressionData;
  options: ScanJobOptions;
}

export interface DescribeJob {
  kind: "describe";
  data: RegressionData;
  fit: MixtureFit;
}

export interface PredictJob {
  kind: "predict";
  fit: MixtureFit;
  /** m x p row-major predictors of the new rows. */
  newX: Float64Array;
  m: number;
}

export type EngineJob = FitJob | ScanJob | DescribeJob | PredictJob;

/** The separation check and standard errors of one fit. */
export interface FitDescription {
  separation: SeparationReport;
  errors: StandardErrorReport | null;
  /** Why standard errors are missing, when they are. */
  errorsProblem: string | null;
}

export type JobResult<J extends EngineJob> = J extends FitJob ? MixtureFit : J extends ScanJob ? ScanResult : J extends DescribeJob ? FitDescription : Prediction;

/** Progress of a scan: K = k of kMax done. */
export type Progress = (k: number, kMax: number) => void;

/** Numbers a job works through (rows x columns), which decides whether it is worth a worker. */
export function jobCells(job: EngineJob): number {
  if (job.kind === "predict") return job.m * (job.fit.p + 1) * job.fit.k;
  return job.data.n * (job.data.p + 1);
}

export async function runEngineJob(job: EngineJob, signal: CancelSignal, onProgress?: Progress): Promise<unknown> {
  switch (job.kind) {
    case "fit":
      return runFitJob(job, signal);
    case "scan":
      return scanComponents(job.data, { ...job.options, signal, onProgress });
    case "describe":
      return describeFit(job.data, job.fit);
    case "predict":
      return predictRows(job.fit, job.newX, job.m);
  }
}

function runFitJob(job: FitJob, signal: CancelSignal): MixtureFit {
  const options: MixtureOptions = { ...job.options, signal };
  if (job.previous !== undefined) return refitFrom(fitMixture, job.data, options, job.previous);
  return fitMixture(job.data, options);
}

export function describeFit(data: RegressionData, fit: MixtureFit): FitDescription {
  const separation = checkSeparation(data, fit);
  try {
    const errors = standardErrors(data, fit);
    // Standard errors that could not be computed are shown as the reason, never as NaN.
    const missing = errors.coefficients.some((values) => values.some(Number.isNaN)) || errors.sigmas.some(Number.isNaN);
    if (missing) return { separation, errors: null, errorsProblem: errors.warnings.join(" ") };
    return { separation, errors, errorsProblem: null };
  } catch (error) {
    // Standard errors can fail where the fit itself is fine (a singular information matrix
    // for a near-empty component); the estimates are then shown alone.
    return { separation, errors: null, errorsProblem: error instanceof Error ? error.message : String(error) };
  }
}
