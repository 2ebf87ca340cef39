import { referenceSpread } from "./referenceVariance";
import { EXACT_RELATIVE } from "./mixture/exactComponents";
import type { MixtureFit } from "./mixtureTypes";

/**
 * Which components fit their rows exactly (noise about 0): a noise SD at most EXACT_RELATIVE
 * times the SD of y (referenceVariance.ts), the fit driver's own test for a noiseless fit (isNoiseless). Such a component's coefficients are known exactly given its rows, so its
 * standard errors are 0, and a gap to it is unlimited rather than a measured number.
 */
export function exactComponents(fit: Pick<MixtureFit, "components">, y: Float64Array): boolean[] {
  // The spread, not the variance: the user's own y may be near 1e300, whose square overflows.
  const spread = y.length > 0 ? referenceSpread(y, y.length) : 0;
  return fit.components.map((component) => component.sigma <= EXACT_RELATIVE * spread);
}

/** Every component fits its rows exactly: an exact fit (noise about 0). */
export function isExactFit(fit: Pick<MixtureFit, "components">, y: Float64Array): boolean {
  return exactComponents(fit, y).every(Boolean);
}

/**
 * How the fit's warning begins when some components fit their rows exactly and others do not
 * (mixture/reportFit.ts); hosts recognise it and add their own controls.
 */
export const PARTLY_EXACT = "Partly exact";
