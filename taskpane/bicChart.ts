import { formatNumber } from "./format";
import { CRITERION_STYLES, NEUTRALS, type MarkerShape } from "../src/report/componentStyle";
import { markerAt } from "./markers";

function marker(shape: MarkerShape, x: number, y: number, r: number, attributes: string): string {
  const { d, transform } = markerAt(shape, x, y, r);
  return `<path d="${d}" transform="${transform}" ${attributes}/>`;
}

/**
 * The chart of BIC and ICL against K, drawn as hand-made SVG: a dozen points and two
 * lines need no charting library, the SVG is plain DOM (so the jsdom tests can read
 * it and keyboard focus works on each K), and markers can carry shapes as well as
 * colour. Lower is better for both criteria (BIC = −2 log L + m log n).
 */
export interface ChartRow {
  k: number;
  bic: number;
  icl: number;
  /** Why this K is not suggested, or null. */
  flag: string | null;
}

/** The mark of a K that cannot be suggested (ruled out by the rule), the same in the chart and the scan table. */
export const CANNOT_BE_SUGGESTED_MARK = "*";

const WIDTH = 360;
const HEIGHT = 220;
const MARGIN = { left: 62, right: 14, top: 18, bottom: 58 };
const BIC = CRITERION_STYLES.bic;
const ICL = CRITERION_STYLES.icl;
const BIC_COLOUR = BIC.colour;
const ICL_COLOUR = ICL.colour;

function niceTicks(low: number, high: number, count: number): number[] {
  const span = high - low || Math.abs(high) || 1;
  const raw = span / count;
  const power = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((m) => m * power).find((s) => s >= raw) ?? raw;
  const ticks: number[] = [];
  for (let t = Math.ceil(low / step) * step; t <= high + step * 1e-9; t += step) ticks.push(Number(t.toPrecision(12)));
  return ticks;
}

/**
 * Draws the chart into `container`. Each K is a focusable button (Tab, then arrow
 * keys, Enter or Space), so K is picked by mouse or keyboard; `onPick` hears the
 * choice. `suggested` is marked by a band and a label, `selected` by a ring.
 */
export function drawBicChart(container: HTMLElement, rows: ChartRow[], suggested: number, selected: number | null, onPick: (k: number) => void): void {
  const finite = rows.flatMap((r) => [r.bic, r.icl]).filter(Number.isFinite);
  if (rows.length === 0 || finite.length === 0) {
    container.innerHTML = "";
    return;
  }
  let low = Math.min(...finite);
  let high = Math.max(...finite);
  const pad = (high - low) * 0.08 || Math.abs(high) * 0.01 || 1;
  low -= pad;
  high += pad;
  const plotW = WIDTH - MARGIN.left - MARGIN.right;
  const plotH = HEIGHT - MARGIN.top - MARGIN.bottom;
  const kMax = Math.max(...rows.map((r) => r.k));
  const xOf = (k: number) => MARGIN.left + (kMax === 1 ? plotW / 2 : ((k - 1) / (kMax - 1)) * plotW);
  const yOf = (v: number) => MARGIN.top + (1 - (v - low) / (high - low)) * plotH;
  const columnW = kMax === 1 ? plotW : plotW / (kMax - 1);

  const parts: string[] = [];
  parts.push(`<title>BIC and ICL for each number of components; lower is better. Suggested: ${suggested}.</title>`);
  for (const t of niceTicks(low, high, 4)) {
    const y = yOf(t);
    parts.push(`<line class="gridline" x1="${MARGIN.left}" x2="${WIDTH - MARGIN.right}" y1="${y}" y2="${y}"/>`);
    parts.push(`<text class="tick" x="${MARGIN.left - 6}" y="${y + 4}" text-anchor="end">${formatNumber(t, 4)}</text>`);
  }
  // Suggested K: a shaded band behind its column, labelled, so it is marked without relying on colour.
  const sx = xOf(suggested);
  parts.push(`<rect class="suggested-band" x="${sx - Math.min(columnW, 40) / 2}" y="${MARGIN.top}" width="${Math.min(columnW, 40)}" height="${plotH}"/>`);
  parts.push(`<text class="suggested-label" x="${sx}" y="${MARGIN.top - 5}" text-anchor="middle">suggested</text>`);
  const line = (key: "bic" | "icl") =>
    rows.filter((r) => Number.isFinite(r[key])).map((r, i) => `${i === 0 ? "M" : "L"}${xOf(r.k).toFixed(1)},${yOf(r[key]).toFixed(1)}`).join("");
  parts.push(`<path class="series bic" d="${line("bic")}" stroke="${BIC_COLOUR}"/>`);
  parts.push(`<path class="series icl" d="${line("icl")}" stroke="${ICL_COLOUR}" stroke-dasharray="${ICL.dash}"/>`);
  for (const r of rows) {
    const x = xOf(r.k);
    const flagged = r.flag !== null;
    const label = `${r.k} component${r.k === 1 ? "" : "s"}: BIC ${formatNumber(r.bic)}, ICL ${formatNumber(r.icl)}${r.k === suggested ? ", suggested" : ""}${flagged ? `, cannot be suggested: ${r.flag?.replace(/^not suggested[:,]?\s*/i, "")}` : ""}${r.k === selected ? ", shown below" : ""}`;
    const fillBic = flagged ? NEUTRALS.card : BIC_COLOUR;
    const fillIcl = flagged ? NEUTRALS.card : ICL_COLOUR;
    parts.push(`<g class="k-point${r.k === selected ? " selected" : ""}${flagged ? " flagged" : ""}" data-k="${r.k}" role="button" tabindex="${r.k === (selected ?? suggested) ? 0 : -1}" aria-label="${label}" aria-pressed="${r.k === selected}">`);
    // The clickable column around each K, kept inside the drawing at the ends.
    const hitLeft = Math.max(MARGIN.left - 24, x - columnW / 2);
    const hitRight = Math.min(WIDTH - 2, x + columnW / 2);
    parts.push(`<rect class="hit" x="${hitLeft}" y="${MARGIN.top}" width="${hitRight - hitLeft}" height="${plotH + 22}"/>`);
    // The shown K: a pointer under its axis label, and the label in bold (see the CSS).
    if (r.k === selected) parts.push(`<path class="selection-pointer" d="M${x},${HEIGHT - MARGIN.bottom + 20}l-5,7h10z"/>`);
    if (Number.isFinite(r.bic)) parts.push(marker(BIC.shape, x, yOf(r.bic), 4.5, `fill="${fillBic}" stroke="${BIC_COLOUR}" stroke-width="2"`));
    if (Number.isFinite(r.icl)) parts.push(marker(ICL.shape, x, yOf(r.icl), 4.5, `fill="${fillIcl}" stroke="${ICL_COLOUR}" stroke-width="2"`));
    parts.push(`<text class="tick k-label" x="${x}" y="${HEIGHT - MARGIN.bottom + 16}" text-anchor="middle">${r.k}${flagged ? CANNOT_BE_SUGGESTED_MARK : ""}</text>`);
    parts.push(`</g>`);
  }
  parts.push(`<text class="axis-title" x="${MARGIN.left + plotW / 2}" y="${HEIGHT - MARGIN.bottom + 38}" text-anchor="middle">Number of components (K); ▲ = shown below</text>`);
  // Legend: marker shape, line style and name for each series.
  const ly = HEIGHT - 6;
  parts.push(`<path d="M${MARGIN.left},${ly - 4}h22" stroke="${BIC_COLOUR}" stroke-width="2"/>${marker(BIC.shape, MARGIN.left + 11, ly - 4, 4, `fill="${BIC_COLOUR}"`)}`);
  parts.push(`<text class="legend" x="${MARGIN.left + 28}" y="${ly}">BIC</text>`);
  parts.push(`<path d="M${MARGIN.left + 70},${ly - 4}h22" stroke="${ICL_COLOUR}" stroke-width="2" stroke-dasharray="${ICL.dash}"/>${marker(ICL.shape, MARGIN.left + 81, ly - 4, 4, `fill="${ICL_COLOUR}"`)}`);
  parts.push(`<text class="legend" x="${MARGIN.left + 98}" y="${ly}">ICL</text>`);
  parts.push(`<text class="legend" x="${MARGIN.left + 140}" y="${ly}">hollow, ${CANNOT_BE_SUGGESTED_MARK} = ruled out</text>`);
  parts.push(`<text class="axis-title" transform="translate(13,${MARGIN.top + plotH / 2}) rotate(-90)" text-anchor="middle">lower is better</text>`);

  container.innerHTML = `<svg class="bic-chart" viewBox="0 0 ${WIDTH} ${HEIGHT}" role="group" aria-label="BIC and ICL against the number of components. Choose a number to see its fit.">${parts.join("")}</svg>`;
  const svg = container.querySelector("svg")!;
  const points = Array.from(svg.querySelectorAll<SVGGElement>("g.k-point"));
  const pick = (g: Element) => onPick(Number(g.getAttribute("data-k")));
  for (const g of points) {
    g.addEventListener("click", () => pick(g));
    g.addEventListener("keydown", (event) => {
      const e = event as KeyboardEvent;
      const index = points.indexOf(g);
      if (e.key === "Enter" || e.key === " ") {
        e.preventDefault();
        pick(g);
      } else if (e.key === "ArrowRight" || e.key === "ArrowLeft") {
        e.preventDefault();
        const next = points[Math.max(0, Math.min(points.length - 1, index + (e.key === "ArrowRight" ? 1 : -1)))];
        g.setAttribute("tabindex", "-1");
        next.setAttribute("tabindex", "0");
        next.focus();
      }
    });
  }
}
