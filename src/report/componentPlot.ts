import { formatPercent } from "./formatNumber";
/**
 * Turns a fitted mixture into a scatter-plot description: the response
 * against the predictor that matters most, each row drawn as its most
 * probable component, and each component's fitted line.
 *
 * With more than one predictor, a line in the plane is only the fit at fixed
 * values of the other predictors, so the rows are shown adjusted to those
 * values (a component-plus-residual plot; Larsen & McCleary 1972,
 * Technometrics 14): y − Σ_{j≠m} β_{c,j} (x_j − x̄_j), with c the row's
 * component and x̄ the overall means. A row then sits above or below its
 * component's line by exactly its residual.
 */
import type { Design } from "../engine/design";
import type { ScatterLine, ScatterSpec } from "./scatterSvg";

/** What a plot needs of the data layer's Design: the used rows and the column names. */
export type PlotData = Pick<Design, "y" | "x" | "n" | "p" | "yName" | "predictorNames">;

export interface PlotFit {
  components: { weight: number; coefficients: Float64Array }[];
  /** 0-based most probable component per row. */
  labels: Int32Array;
}

/**
 * The predictor whose spread moves y the most: the largest weighted mean over
 * components of |β_kj| · SD(x_j). Ties go to the first.
 */
export function mainPredictor(data: PlotData, fit: PlotFit): number {
  const { x, n, p } = data;
  let best = 0;
  let bestScore = -Infinity;
  for (let j = 0; j < p; j++) {
    let mean = 0;
    for (let i = 0; i < n; i++) mean += x[i * p + j];
    mean /= n;
    let variance = 0;
    for (let i = 0; i < n; i++) variance += (x[i * p + j] - mean) ** 2;
    const sd = Math.sqrt(variance / n);
    let score = 0;
    for (const component of fit.components) score += component.weight * Math.abs(component.coefficients[j + 1]) * sd;
    if (score > bestScore) {
      bestScore = score;
      best = j;
    }
  }
  return best;
}

/** The scatter description of a fit: points, one line per component, axis labels and legend names. */
export function componentPlot(data: PlotData, fit: PlotFit, title: string): ScatterSpec {
  const { y, x, n, p } = data;
  const k = fit.components.length;
  const m = p === 0 ? -1 : mainPredictor(data, fit);
  const means = new Float64Array(p);
  for (let i = 0; i < n; i++) for (let j = 0; j < p; j++) means[j] += x[i * p + j];
  for (let j = 0; j < p; j++) means[j] /= n;

  const px = new Float64Array(n);
  const py = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const beta = fit.components[fit.labels[i]].coefficients;
    let adjusted = y[i];
    for (let j = 0; j < p; j++) if (j !== m) adjusted -= beta[j + 1] * (x[i * p + j] - means[j]);
    py[i] = adjusted;
    px[i] = m >= 0 ? x[i * p + m] : i + 1;
  }

  // Each line spans its own rows' range of x: a component says nothing where it has no rows.
  const xLow = new Float64Array(k).fill(Infinity);
  const xHigh = new Float64Array(k).fill(-Infinity);
  for (let i = 0; i < n; i++) {
    const c = fit.labels[i];
    if (px[i] < xLow[c]) xLow[c] = px[i];
    if (px[i] > xHigh[c]) xHigh[c] = px[i];
  }
  const lines: ScatterLine[] = [];
  fit.components.forEach((component, c) => {
    if (!(xHigh[c] >= xLow[c])) return;
    const beta = component.coefficients;
    let level = beta[0];
    for (let j = 0; j < p; j++) if (j !== m) level += beta[j + 1] * means[j];
    const slope = m >= 0 ? beta[m + 1] : 0;
    lines.push({ group: c, x0: xLow[c], y0: level + slope * xLow[c], x1: xHigh[c], y1: level + slope * xHigh[c] });
  });

  const counts = new Array<number>(k).fill(0);
  for (let i = 0; i < n; i++) counts[fit.labels[i]]++;
  const groupNames = fit.components.map((component, c) => `${c + 1}: weight ${formatPercent(component.weight)}, ${counts[c]} rows`);

  const others = data.predictorNames.filter((_, j) => j !== m);
  const subtitle = [`${k} component${k === 1 ? "" : "s"}; each row drawn as its most probable component, each line a fitted component`];
  if (others.length > 0) {
    subtitle.push(`${data.yName} with ${others.length === 1 ? `${others[0]} held at its average` : "the other predictors held at their average"} (each row keeps its residual)`);
  }
  return {
    title,
    subtitle,
    xLabel: m >= 0 ? data.predictorNames[m] : "Row",
    yLabel: others.length === 0 ? data.yName : `${data.yName}, other predictors at their average`,
    x: px,
    y: py,
    group: fit.labels,
    groupNames,
    lines,
  };
}
