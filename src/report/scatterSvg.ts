/**
 * A scatter plot of rows coloured and shaped by component, with one fitted
 * line per component and a legend, as an SVG document in a string. No DOM and
 * no Node: the command line writes it to a file, the task pane puts it in the page.
 */
import { NEUTRALS, componentStyle, markerPath } from "./componentStyle";

export interface ScatterLine {
  /** 0-based component the line belongs to. */
  group: number;
  x0: number;
  y0: number;
  x1: number;
  y1: number;
}

export interface ScatterSpec {
  title: string;
  /** Lines under the title (what was found, what the axes hold, how the points were adjusted). */
  subtitle?: string[];
  xLabel: string;
  yLabel: string;
  x: ArrayLike<number>;
  y: ArrayLike<number>;
  /** 0-based component of each point. */
  group: ArrayLike<number>;
  /** Legend text per component, index = group. */
  groupNames: string[];
  lines: ScatterLine[];
  width?: number;
  height?: number;
}

const FONT = "font-family=\"system-ui, -apple-system, 'Segoe UI', sans-serif\"";
const INK = NEUTRALS.ink;
const GRID = NEUTRALS.grid;
const MARKER_RADIUS = 4;
const TICK_TARGET = 6;

/** Escapes text for SVG character data and attribute values. */
export function escapeXml(text: string): string {
  return text.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;");
}

/** A short number for coordinates: two decimals are finer than a pixel needs. */
function px(value: number): string {
  return (Math.round(value * 100) / 100).toString();
}

/**
 * Round tick values covering [low, high]: a step of 1, 2 or 5 times a power
 * of ten giving about `target` intervals (the usual "nice numbers" choice, as
 * in Heckbert, "Nice numbers for graph labels", Graphics Gems, 1990).
 */
export function niceTicks(low: number, high: number, target = TICK_TARGET): { ticks: number[]; low: number; high: number } {
  if (!(high > low)) {
    const pad = low === 0 ? 1 : Math.abs(low) * 0.1;
    low -= pad;
    high += pad;
  }
  const rough = (high - low) / target;
  const power = 10 ** Math.floor(Math.log10(rough));
  const ratio = rough / power;
  const step = (ratio < 1.5 ? 1 : ratio < 3 ? 2 : ratio < 7 ? 5 : 10) * power;
  const first = Math.floor(low / step) * step;
  const last = Math.ceil(high / step) * step;
  const ticks: number[] = [];
  // Count steps instead of adding them, so rounding does not drift.
  const count = Math.round((last - first) / step);
  for (let i = 0; i <= count; i++) ticks.push(Number((first + i * step).toPrecision(12)));
  return { ticks, low: first, high: last };
}

function tickLabel(value: number): string {
  if (value === 0) return "0";
  const magnitude = Math.abs(value);
  if (magnitude >= 1e6 || magnitude < 1e-3) return value.toExponential(1);
  return String(Number(value.toPrecision(6)));
}

function extent(values: ArrayLike<number>, extra: number[]): [number, number] {
  let low = Infinity;
  let high = -Infinity;
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (!Number.isFinite(v)) continue;
    if (v < low) low = v;
    if (v > high) high = v;
  }
  for (const v of extra) {
    if (!Number.isFinite(v)) continue;
    if (v < low) low = v;
    if (v > high) high = v;
  }
  if (low === Infinity) return [0, 1];
  return [low, high];
}

/** Clips the segment to the rectangle [xLow, xHigh] x [yLow, yHigh] (Liang & Barsky 1984); null when outside. */
function clipSegment(line: ScatterLine, xLow: number, xHigh: number, yLow: number, yHigh: number): ScatterLine | null {
  const dx = line.x1 - line.x0;
  const dy = line.y1 - line.y0;
  let t0 = 0;
  let t1 = 1;
  const edges: [number, number][] = [
    [-dx, line.x0 - xLow],
    [dx, xHigh - line.x0],
    [-dy, line.y0 - yLow],
    [dy, yHigh - line.y0],
  ];
  for (const [p, q] of edges) {
    if (p === 0) {
      if (q < 0) return null;
      continue;
    }
    const t = q / p;
    if (p < 0) {
      if (t > t1) return null;
      if (t > t0) t0 = t;
    } else {
      if (t < t0) return null;
      if (t < t1) t1 = t;
    }
  }
  return { group: line.group, x0: line.x0 + t0 * dx, y0: line.y0 + t0 * dy, x1: line.x0 + t1 * dx, y1: line.y0 + t1 * dy };
}

/** Below this width (px) the legend goes under the plot instead of beside it. */
export const NARROW_PLOT = 480;

/** Splits text into lines of at most `maxWidth` px, estimating a character at 0.56 of the font size. */
function wrapLines(text: string, maxWidth: number, fontSize: number): string[] {
  const perLine = Math.max(8, Math.floor(maxWidth / (0.56 * fontSize)));
  const lines: string[] = [];
  let line = "";
  for (const word of text.split(/\s+/)) {
    if (line !== "" && line.length + 1 + word.length > perLine) {
      lines.push(line);
      line = word;
    } else {
      line = line === "" ? word : `${line} ${word}`;
    }
  }
  if (line !== "") lines.push(line);
  return lines;
}

/** Where everything goes: the drawing's size, the wrapped title, the margins around the plot area. */
interface PlotLayout {
  width: number;
  height: number;
  groups: number;
  narrow: boolean;
  legendWidth: number;
  titleSize: number;
  textLeft: number;
  title: string[];
  subtitle: string[];
  titleHeight: number;
  margin: { left: number; right: number; top: number; bottom: number };
  plotWidth: number;
  plotHeight: number;
}

/** The axes' ticks and the maps from data values to pixels. */
interface PlotScales {
  xAxis: { ticks: number[]; low: number; high: number };
  yAxis: { ticks: number[]; low: number; high: number };
  sx: (v: number) => number;
  sy: (v: number) => number;
}

/**
 * The plot as a standalone SVG document. Narrower than NARROW_PLOT (a task
 * pane), the legend moves under the plot and the drawing grows by its height,
 * and the title and subtitle wrap to the width.
 */
export function scatterSvg(spec: ScatterSpec): string {
  const layout = plotLayout(spec);
  const scales = plotScales(spec, layout);
  const out = [
    ...headSvg(spec, layout),
    ...axesSvg(spec, layout, scales),
    ...fittedLinesSvg(spec, scales),
    ...pointsSvg(spec, scales),
    ...legendSvg(spec, layout),
    "</svg>",
  ];
  return out.join("\n") + "\n";
}

function plotLayout(spec: ScatterSpec): PlotLayout {
  const width = spec.width ?? 720;
  const groups = spec.groupNames.length;
  const narrow = width < NARROW_PLOT;
  const legendWidth = narrow ? 0 : 190;
  const legendBelow = narrow ? 26 + 22 * groups : 0;
  const height = (spec.height ?? 480) + legendBelow;
  const titleSize = narrow ? 15 : 17;
  const textLeft = narrow ? 10 : 72;
  const textWidth = width - textLeft - 10;
  const title = wrapLines(spec.title, textWidth, titleSize);
  const subtitle = (spec.subtitle ?? []).flatMap((line) => wrapLines(line, textWidth, 12));
  const titleHeight = 26 + (title.length - 1) * (titleSize + 3);
  const margin = { left: narrow ? 58 : 72, right: narrow ? 14 : legendWidth + 24, top: titleHeight + 18 + 17 * subtitle.length, bottom: 56 + legendBelow };
  const plotWidth = width - margin.left - margin.right;
  const plotHeight = height - margin.top - margin.bottom;
  return { width, height, groups, narrow, legendWidth, titleSize, textLeft, title, subtitle, titleHeight, margin, plotWidth, plotHeight };
}

function plotScales(spec: ScatterSpec, layout: PlotLayout): PlotScales {
  const { margin, plotWidth, plotHeight } = layout;
  // Axes span the points; lines are clipped to that box rather than stretching it.
  const [xMin, xMax] = extent(spec.x, []);
  const [yMin, yMax] = extent(spec.y, []);
  const xAxis = niceTicks(xMin, xMax);
  const yAxis = niceTicks(yMin, yMax);
  const sx = (v: number): number => margin.left + ((v - xAxis.low) / (xAxis.high - xAxis.low)) * plotWidth;
  const sy = (v: number): number => margin.top + plotHeight - ((v - yAxis.low) / (yAxis.high - yAxis.low)) * plotHeight;
  return { xAxis, yAxis, sx, sy };
}

/** The document's opening: the marker shapes and the plot area's clip, the background, the title and subtitle. */
function headSvg(spec: ScatterSpec, layout: PlotLayout): string[] {
  const { width, height, margin, plotWidth, plotHeight, textLeft, titleSize, titleHeight } = layout;
  const out: string[] = [];
  out.push(`<svg xmlns="http://www.w3.org/2000/svg" xmlns:xlink="http://www.w3.org/1999/xlink" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}" role="img" aria-label="${escapeXml(spec.title)}">`);
  out.push(`<title>${escapeXml(spec.title)}</title>`);
  out.push("<defs>");
  for (let g = 0; g < layout.groups; g++) {
    const style = componentStyle(g);
    out.push(`<path id="skein-marker-${g}" class="marker marker-${style.shape}" d="${markerPath(style.shape, MARKER_RADIUS)}" fill="${style.colour}" fill-opacity="0.55" stroke="${style.colour}" stroke-width="1"/>`);
  }
  out.push(`<clipPath id="skein-plot-area"><rect x="${margin.left}" y="${margin.top}" width="${plotWidth}" height="${plotHeight}"/></clipPath>`);
  out.push("</defs>");
  out.push(`<rect width="${width}" height="${height}" fill="${NEUTRALS.paper}"/>`);
  layout.title.forEach((line, i) => {
    out.push(`<text class="title" x="${textLeft}" y="${26 + i * (titleSize + 3)}" ${FONT} font-size="${titleSize}" font-weight="600" fill="${INK}">${escapeXml(line)}</text>`);
  });
  layout.subtitle.forEach((line, i) => {
    out.push(`<text class="subtitle" x="${textLeft}" y="${titleHeight + 20 + 17 * i}" ${FONT} font-size="12" fill="${NEUTRALS.muted}">${escapeXml(line)}</text>`);
  });
  return out;
}

/** Grid, tick labels, the frame and the axis labels. */
function axesSvg(spec: ScatterSpec, layout: PlotLayout, scales: PlotScales): string[] {
  const { margin, plotWidth, plotHeight } = layout;
  const out: string[] = [];
  out.push(`<g class="axes" ${FONT} font-size="11" fill="${INK}">`);
  for (const t of scales.xAxis.ticks) {
    const x = px(scales.sx(t));
    out.push(`<line x1="${x}" y1="${margin.top}" x2="${x}" y2="${margin.top + plotHeight}" stroke="${GRID}"/>`);
    out.push(`<text x="${x}" y="${margin.top + plotHeight + 16}" text-anchor="middle">${tickLabel(t)}</text>`);
  }
  for (const t of scales.yAxis.ticks) {
    const y = px(scales.sy(t));
    out.push(`<line x1="${margin.left}" y1="${y}" x2="${margin.left + plotWidth}" y2="${y}" stroke="${GRID}"/>`);
    out.push(`<text x="${margin.left - 6}" y="${y}" dy="0.32em" text-anchor="end">${tickLabel(t)}</text>`);
  }
  out.push(`<rect x="${margin.left}" y="${margin.top}" width="${plotWidth}" height="${plotHeight}" fill="none" stroke="${NEUTRALS.frame}"/>`);
  out.push(`<text class="x-label" x="${px(margin.left + plotWidth / 2)}" y="${margin.top + plotHeight + 42}" text-anchor="middle" font-size="13">${escapeXml(spec.xLabel)}</text>`);
  // The y label wraps to the plot's height (two lines at most) so that it never runs into the subtitle above.
  const yLabel = wrapLines(spec.yLabel, plotHeight, 13);
  const yLabelLines = yLabel.length <= 2 ? yLabel : [yLabel[0], yLabel.slice(1).join(" ")];
  yLabelLines.forEach((line, i) => {
    const x = yLabelLines.length === 1 ? 18 : 14 + 14 * i;
    out.push(`<text class="y-label" transform="translate(${x},${px(margin.top + plotHeight / 2)}) rotate(-90)" text-anchor="middle" font-size="13">${escapeXml(line)}</text>`);
  });
  out.push("</g>");
  return out;
}

/** Each component's fitted line, clipped to the axes. */
function fittedLinesSvg(spec: ScatterSpec, scales: PlotScales): string[] {
  const { xAxis, yAxis, sx, sy } = scales;
  const out: string[] = [`<g class="lines">`];
  for (const line of spec.lines) {
    const clipped = clipSegment(line, xAxis.low, xAxis.high, yAxis.low, yAxis.high);
    if (!clipped) continue;
    const style = componentStyle(line.group);
    const dash = style.dash ? ` stroke-dasharray="${style.dash}"` : "";
    const d = `M${px(sx(clipped.x0))},${px(sy(clipped.y0))}L${px(sx(clipped.x1))},${px(sy(clipped.y1))}`;
    out.push(`<path class="fitted-line" data-component="${line.group + 1}" d="${d}" stroke="${style.colour}" stroke-width="2.2" fill="none"${dash}/>`);
  }
  out.push("</g>");
  return out;
}

/**
 * Points over the lines: markers are half transparent, so the lines show through them,
 * and in noiseless data, where every point sits on its line, the markers stay visible.
 */
function pointsSvg(spec: ScatterSpec, scales: PlotScales): string[] {
  const out: string[] = [`<g class="points" clip-path="url(#skein-plot-area)">`];
  for (let i = 0; i < spec.x.length; i++) {
    const xi = spec.x[i];
    const yi = spec.y[i];
    if (!Number.isFinite(xi) || !Number.isFinite(yi)) continue;
    const g = spec.group[i];
    out.push(`<use xlink:href="#skein-marker-${g}" href="#skein-marker-${g}" x="${px(scales.sx(xi))}" y="${px(scales.sy(yi))}"/>`);
  }
  out.push("</g>");
  return out;
}

/** Legend: marker, line sample and name per component. Beside the plot, or under it (below the x-axis label) in a narrow plot. */
function legendSvg(spec: ScatterSpec, layout: PlotLayout): string[] {
  const { narrow, margin, plotHeight } = layout;
  const legendX = narrow ? layout.textLeft : layout.width - layout.legendWidth - 8;
  const legendTop = narrow ? margin.top + plotHeight + 60 : margin.top + 4;
  const legendStep = narrow ? 22 : 24;
  const out: string[] = [];
  out.push(`<g class="legend" ${FONT} font-size="12" fill="${INK}">`);
  out.push(`<text x="${legendX}" y="${legendTop}" font-weight="600">Components</text>`);
  for (let g = 0; g < layout.groups; g++) {
    const style = componentStyle(g);
    const y = legendTop + (narrow ? 18 : 22) + g * legendStep;
    const dash = style.dash ? ` stroke-dasharray="${style.dash}"` : "";
    out.push(`<line x1="${legendX}" y1="${y}" x2="${legendX + 28}" y2="${y}" stroke="${style.colour}" stroke-width="2.2"${dash}/>`);
    out.push(`<use xlink:href="#skein-marker-${g}" href="#skein-marker-${g}" x="${legendX + 14}" y="${y}"/>`);
    out.push(`<text class="legend-entry" x="${legendX + 36}" y="${y}" dy="0.32em">${escapeXml(spec.groupNames[g])}</text>`);
  }
  out.push("</g>");
  return out;
}
