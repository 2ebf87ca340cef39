/**
 * The only module of the pane that calls the engine. The pane's main thread (in
 * tests and where Web Workers are missing) and the scan worker both go through
 * these three calls, so an engine signature change is mended here alone.
 */
import { fitMixture } from "../src/engine/fitMixture";
import { scanComponents } from "../src/engine/scanComponents";
import { checkSeparation } from "../src/engine/checkSeparation";
import { standardErrors } from "../src/engine/standardErrors";
import type { MixtureFit, MixtureOptions, RegressionData } from "../src/engine/mixtureTypes";
import type { ScanOptions, ScanResult, SeparationReport, StandardErrorReport } from "../src/engine/trustTypes";

export async function runScan(data: RegressionData, options: ScanOptions): Promise<ScanResult> {
  return await scanComponents(data, options);
}

export async function runFit(data: RegressionData, options: MixtureOptions): Promise<MixtureFit> {
  return await fitMixture(data, options);
}

/** The separation check and standard errors of one fit: what the Components and Checks sections show. */
export function describeFit(data: RegressionData, fit: MixtureFit): { separation: SeparationReport; errors: StandardErrorReport | null; errorsProblem: string | null } {
  const separation = checkSeparation(data, fit);
  try {
    const errors = standardErrors(data, fit);
    // Standard errors that could not be computed are shown as the reason, never as NaN.
    const missing = errors.coefficients.some((values) => values.some(Number.isNaN)) || errors.sigmas.some(Number.isNaN);
    if (missing) return { separation, errors: null, errorsProblem: errors.warnings.join(" ") };
    return { separation, errors, errorsProblem: null };
  } catch (error) {
    // Standard errors can fail where the fit itself is fine (a singular information
    // matrix for a near-empty component); the table then shows estimates alone.
    return { separation, errors: null, errorsProblem: error instanceof Error ? error.message : String(error) };
  }
}
