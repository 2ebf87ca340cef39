import { euclideanNorm, largestMagnitude } from "./scaledNorm";
import { median } from "./median";
import { shareableArray } from "./helperThread";
import type { MixtureComponent, MixtureFit, RegressionData } from "./mixtureTypes";

/**
 * Internal scaling for values far from 1. Squares of 1e155 or of 1e-163 leave the range of
 * doubles, so sums of squares, variances and Gram matrices of such data overflow to Infinity
 * or vanish to 0. The fit runs instead on y / s_y and x_j / s_j, each scale the root mean
 * square of its column (for a column beyond 1e100, see columnScale), and every result is mapped back: a model on scaled data is the same
 * model on the original data with β_j = β'_j s_y / s_j, intercept β'_0 s_y, σ = σ' s_y, and
 * the density of y changes by the Jacobian 1 / s_y per row, so ln L = ln L' − n ln s_y (also
 * − n Σ ln s_j in the joint model, which models x too), and BIC and ICL rise by twice that.
 *
 * Data within ordinary magnitudes are left alone, so their fits are bit for bit those of the
 * unscaled engine.
 */
export interface Scales {
  y: number;
  /** One per predictor. */
  x: Float64Array;
}

/** Magnitudes beyond which a column is scaled: its squares and their sums stay far inside the double range below this. */
const LARGEST_UNSCALED = 1e100;
/** Non-zero root mean squares below this are scaled, so that their squares do not underflow. */
const SMALLEST_UNSCALED = 1e-100;

/** The scales for these data, or null when every column is of ordinary size. */
export function scalesFor(data: RegressionData): Scales | null {
  const { n, p } = data;
  if (!(n >= 1) || data.y.length < n || data.x.length < n * p) return null;
  const y = columnScale(data.y, n, 1, 0);
  const x = new Float64Array(p);
  for (let j = 0; j < p; j++) x[j] = columnScale(data.x, n, p, j);
  const needed = (s: number) => s !== 1;
  return needed(y) || x.some(needed) ? { y, x } : null;
}

/**
 * The root mean square of a column, computed without overflow (largest magnitude first), when
 * the column is outside ordinary magnitudes; 1 otherwise, and for a column of zeros or one
 * holding a value that is not finite (the fit's own checks report those).
 */
function columnScale(values: Float64Array, n: number, stride: number, offset: number): number {
  const largest = largestMagnitude(values, n, stride, offset);
  if (!Number.isFinite(largest) || largest === 0) return 1;
  const rms = euclideanNorm(values, n, stride, offset, largest) / Math.sqrt(n);
  if (largest <= LARGEST_UNSCALED && rms >= SMALLEST_UNSCALED) return 1;
  if (largest > LARGEST_UNSCALED) {
    // Divided by the root mean square, one huge value (a typed-in 1e154 among values near 10)
    // would push the rest down to 1e-152, where their squares sit at the bottom of the double
    // range and the fit's floors swamp their noise. So the scale is the smallest that brings
    // the largest value to LARGEST_UNSCALED, or the column's median magnitude when that is
    // larger (a column that is huge throughout comes to about 1).
    return Math.max(largest / LARGEST_UNSCALED, medianMagnitude(values, n, stride, offset));
  }
  return rms > 0 && Number.isFinite(rms) ? rms : largest;
}

function medianMagnitude(values: Float64Array, n: number, stride: number, offset: number): number {
  const magnitudes = new Float64Array(n);
  for (let i = 0, at = offset; i < n; i++, at += stride) magnitudes[i] = Math.abs(values[at]);
  return median(magnitudes);
}

/** The data divided by their scales. */
export function scaleData(data: RegressionData, scales: Scales): RegressionData {
  const { n, p } = data;
  const y = shareableArray(n);
  const x = shareableArray(n * p);
  for (let i = 0; i < n; i++) {
    y[i] = data.y[i] / scales.y;
    for (let j = 0; j < p; j++) x[i * p + j] = data.x[i * p + j] / scales.x[j];
  }
  return { y, x, n, p };
}

/** ln of the Jacobian per row: ln s_y, plus Σ ln s_j when the model describes x as well. */
function logJacobian(scales: Scales, joint: boolean): number {
  let value = Math.log(scales.y);
  if (joint) for (let j = 0; j < scales.x.length; j++) value += Math.log(scales.x[j]);
  return value;
}

/**
 * A component mapped by factor `direction` = 1 (scaled space to original) or −1 (original to
 * scaled): coefficients, noise SD and, in the joint model, the x mean and covariance.
 */
function mapComponent(component: MixtureComponent, scales: Scales, direction: 1 | -1): MixtureComponent {
  const { y, x } = scales;
  const p = x.length;
  const up = (value: number, factor: number) => (direction === 1 ? value * factor : value / factor);
  const coefficients = new Float64Array(component.coefficients.length);
  coefficients[0] = up(component.coefficients[0], y);
  for (let j = 0; j < p; j++) coefficients[j + 1] = up(component.coefficients[j + 1], y / x[j]);
  const mapped: MixtureComponent = { ...component, coefficients, sigma: up(component.sigma, y) };
  if (component.xMean) mapped.xMean = Float64Array.from(component.xMean, (value, j) => up(value, x[j]));
  if (component.xCovariance) mapped.xCovariance = Float64Array.from(component.xCovariance, (value, index) => up(value, x[Math.floor(index / p)] * x[index % p]));
  return mapped;
}

/** A fit on scaled data as a fit on the original data (direction 1), or the reverse (−1). */
export function mapFit(fit: MixtureFit, scales: Scales, direction: 1 | -1): MixtureFit {
  const n = fit.n;
  const shift = direction * logJacobian(scales, fit.model === "joint");
  const mapped: MixtureFit = {
    ...fit,
    components: fit.components.map((component) => mapComponent(component, scales, direction)),
    logLikelihood: fit.logLikelihood - n * shift,
    bic: fit.bic + 2 * n * shift,
    icl: fit.icl + 2 * n * shift,
    refinement: { ...fit.refinement, logLikelihoodPath: fit.refinement.logLikelihoodPath.map((value) => value - n * shift) },
  };
  if (fit.background) mapped.background = { ...fit.background, logDensity: fit.background.logDensity - shift };
  return mapped;
}

/** Runs `fit` on scaled data when the data need it, with any previous fit moved into the scaled space and the result moved back. */
export function withInternalScaling<O extends { previous?: MixtureFit }>(data: RegressionData, options: O, fit: (data: RegressionData, options: O) => MixtureFit): MixtureFit {
  const scales = scalesFor(data);
  if (scales === null) return fit(data, options);
  const scaledOptions = options.previous ? { ...options, previous: mapFit(options.previous, scales, -1) } : options;
  return mapFit(fit(scaleData(data, scales), scaledOptions), scales, 1);
}

/** Standard errors of a fit in the scaled space, moved back: coefficients like the coefficients, noise SDs by s_y, weights unchanged. */
export function unscaleStandardErrors<R extends { coefficients: Float64Array[]; sigmas: Float64Array }>(report: R, scales: Scales): R {
  const p = scales.x.length;
  return {
    ...report,
    coefficients: report.coefficients.map((errors) => Float64Array.from(errors, (value, j) => (j === 0 ? value * scales.y : value * (scales.y / scales.x[j - 1])))),
    sigmas: Float64Array.from(report.sigmas, (value) => value * scales.y),
  };
}
