import { formatShare } from "./format";
import type { Design } from "../src/engine/design";
import type { MixtureFit } from "../src/engine/mixtureTypes";
import { mainPredictor } from "../src/report/componentPlot";
import { NARROW_PLOT, scatterSvg, type ScatterLine, type ScatterSpec } from "../src/report/scatterSvg";

/** The plot's width when the pane's width is unknown (jsdom), and its bounds otherwise. */
const PLOT_WIDTH = 560;
const SMALLEST_PLOT = 260;

/** Which horizontal axis: a predictor's index, or "fitted" for each row's fitted value under its own component. */
export type ScatterAxis = number | "fitted";

/** The predictor the plot starts on: the one whose spread moves y the most (shared with the command line's plots). */
export function defaultAxis(design: Design, fit: MixtureFit): number {
  return mainPredictor(design, fit);
}

/**
 * The scatter's description for the chosen axis. Against predictor m the other
 * predictors are adjusted to their means, as src/report/componentPlot does for
 * the command line (a component-plus-residual plot, Larsen & McCleary 1972), so
 * each row sits off its component's line by exactly its residual. Against the
 * fitted value every component's line is y = ŷ.
 */
export function scatterSpec(design: Design, fit: MixtureFit, axis: ScatterAxis, width = PLOT_WIDTH): ScatterSpec {
  // A narrow plot is taller than wide: its title and subtitle take more lines.
  const height = width < NARROW_PLOT ? Math.round(width * 1.3) : 400;
  const { y, x, n, p } = design;
  const labels = fit.labels;
  const px = new Float64Array(n);
  const py = new Float64Array(n);
  const lines: ScatterLine[] = [];
  const counts = new Array<number>(fit.k).fill(0);
  for (let i = 0; i < n; i++) counts[labels[i]]++;
  const groupNames = fit.components.map((c, k) => `${k + 1}: weight ${formatShare(c.weight)}, ${counts[k]} rows`);

  if (axis === "fitted") {
    let low = Infinity;
    let high = -Infinity;
    for (let i = 0; i < n; i++) {
      const beta = fit.components[labels[i]].coefficients;
      let value = beta[0];
      for (let j = 0; j < p; j++) value += beta[j + 1] * x[i * p + j];
      px[i] = value;
      py[i] = y[i];
      low = Math.min(low, value);
      high = Math.max(high, value);
    }
    fit.components.forEach((_, c) => lines.push({ group: c, x0: low, y0: low, x1: high, y1: high }));
    return { title: `${design.yName} against its fitted value`, subtitle: ["Each row drawn as its most probable component; the line is y = fitted"], xLabel: "Fitted value", yLabel: design.yName, x: px, y: py, group: labels, groupNames, lines, width, height };
  }

  const m = axis;
  const means = new Float64Array(p);
  for (let i = 0; i < n; i++) for (let j = 0; j < p; j++) means[j] += x[i * p + j];
  for (let j = 0; j < p; j++) means[j] /= n;
  let low = Infinity;
  let high = -Infinity;
  for (let i = 0; i < n; i++) {
    const beta = fit.components[labels[i]].coefficients;
    let adjusted = y[i];
    for (let j = 0; j < p; j++) if (j !== m) adjusted -= beta[j + 1] * (x[i * p + j] - means[j]);
    px[i] = x[i * p + m];
    py[i] = adjusted;
    low = Math.min(low, px[i]);
    high = Math.max(high, px[i]);
  }
  fit.components.forEach((component, c) => {
    const beta = component.coefficients;
    let level = beta[0];
    for (let j = 0; j < p; j++) if (j !== m) level += beta[j + 1] * means[j];
    lines.push({ group: c, x0: low, y0: level + beta[m + 1] * low, x1: high, y1: level + beta[m + 1] * high });
  });
  const others = design.predictorNames.filter((_, j) => j !== m);
  return {
    title: `${design.yName} against ${design.predictorNames[m]}`,
    subtitle: others.length === 0 ? ["Each row drawn as its most probable component"] : [others.length === 1 ? `${others[0]} held at its average` : "Other predictors held at their average", "Each row drawn as its most probable component"],
    xLabel: design.predictorNames[m],
    yLabel: others.length === 0 ? design.yName : `${design.yName}, other predictors at their average`,
    x: px,
    y: py,
    group: labels,
    groupNames,
    lines,
    width,
    height,
  };
}

/** The drawing width for a container: its own width, so text is drawn at its real size. */
function plotWidthFor(container: HTMLElement): number {
  const available = container.clientWidth;
  return available > 0 ? Math.max(SMALLEST_PLOT, Math.min(PLOT_WIDTH, Math.floor(available))) : PLOT_WIDTH;
}

/** The latest drawing of each container, redone when the pane's width changes. */
const redraws = new WeakMap<HTMLElement, () => void>();

/**
 * Draws the scatter (the shared SVG renderer of src/report) into the container at
 * the container's width; a narrow pane gets the narrow layout (legend under the
 * plot). When the pane is resized the plot is drawn again for the new width.
 */
export function drawScatter(container: HTMLElement, design: Design, fit: MixtureFit, axis: ScatterAxis): void {
  let drawnWidth = 0;
  const draw = () => {
    drawnWidth = plotWidthFor(container);
    container.innerHTML = scatterSvg(scatterSpec(design, fit, axis, drawnWidth));
  };
  draw();
  const first = !redraws.has(container);
  redraws.set(container, () => {
    if (Math.abs(plotWidthFor(container) - drawnWidth) > 8) draw();
  });
  if (first && typeof ResizeObserver === "function") new ResizeObserver(() => redraws.get(container)?.()).observe(container);
}
