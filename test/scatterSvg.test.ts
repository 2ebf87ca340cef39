/**
 * The host-free scatter plot: well-formed SVG, one marker shape and colour per
 * component, a legend entry per component, fitted lines, axis labels; and the
 * component-plus-residual layout of componentPlot.
 *
 * Source of expected numbers: derivations in the tests (tick steps by the 1-2-5
 * rule; points built to lie on known lines).
 */
import { XMLParser, XMLValidator } from "fast-xml-parser";
import { describe, expect, it } from "vitest";
import { componentPlot } from "../src/report/componentPlot";
import { COMPONENT_COLOURS, MARKER_SHAPES, componentStyle, markerPath } from "../src/report/componentStyle";
import { niceTicks, scatterSvg, type ScatterSpec } from "../src/report/scatterSvg";

function threeGroups(): ScatterSpec {
  const x: number[] = [];
  const y: number[] = [];
  const group: number[] = [];
  for (let i = 0; i < 30; i++) {
    x.push(i);
    y.push((i % 3) * 10 + i);
    group.push(i % 3);
  }
  return {
    title: "Fuel <&> distance",
    subtitle: ["three groups", "second line"],
    xLabel: "Distance (km)",
    yLabel: "Fuel used (L)",
    x,
    y,
    group,
    groupNames: ["vans", "trucks", "lorries"],
    lines: [0, 1, 2].map((g) => ({ group: g, x0: 0, y0: 10 * g, x1: 29, y1: 10 * g + 29 })),
  };
}

function parse(svg: string): Record<string, unknown> {
  return new XMLParser({ ignoreAttributes: false, attributeNamePrefix: "@" }).parse(svg) as Record<string, unknown>;
}

describe("scatterSvg", () => {
  it("writes a well-formed SVG document with the title escaped", () => {
    const svg = scatterSvg(threeGroups());
    expect(XMLValidator.validate(svg)).toBe(true);
    const doc = parse(svg) as { svg: { title: string; "@xmlns": string } };
    expect(doc.svg["@xmlns"]).toBe("http://www.w3.org/2000/svg");
    // The parser decodes entities back to the original text; the file itself holds them escaped.
    expect(doc.svg.title).toBe("Fuel <&> distance");
    expect(svg).toContain("<title>Fuel &lt;&amp;&gt; distance</title>");
    expect(svg).not.toContain("Fuel <&>");
  });

  it("defines one marker per component, each with its own shape and the component's colour", () => {
    const svg = scatterSvg(threeGroups());
    const markers = [...svg.matchAll(/<path id="skein-marker-(\d)" class="marker marker-([a-z-]+)" d="[^"]+" fill="(#[0-9a-f]{6})"/g)];
    expect(markers.map((m) => Number(m[1]))).toEqual([0, 1, 2]);
    expect(new Set(markers.map((m) => m[2])).size).toBe(3);
    expect(markers.map((m) => m[3])).toEqual([componentStyle(0).colour, componentStyle(1).colour, componentStyle(2).colour]);
  });

  it("draws every point with its component's marker", () => {
    const spec = threeGroups();
    const svg = scatterSvg(spec);
    const points = svg.slice(svg.indexOf('<g class="points"'), svg.indexOf("</g>", svg.indexOf('<g class="points"')));
    for (let g = 0; g < 3; g++) {
      const drawn = points.split(`href="#skein-marker-${g}" x=`).length - 1;
      expect(drawn).toBe(10);
    }
  });

  it("has a legend entry per component, fitted lines and axis labels", () => {
    const svg = scatterSvg(threeGroups());
    const entries = [...svg.matchAll(/<text class="legend-entry"[^>]*>([^<]*)<\/text>/g)].map((m) => m[1]);
    expect(entries).toEqual(["vans", "trucks", "lorries"]);
    expect([...svg.matchAll(/class="fitted-line" data-component="(\d)"/g)].map((m) => m[1])).toEqual(["1", "2", "3"]);
    expect(svg).toMatch(/class="x-label"[^>]*>Distance \(km\)</);
    expect(svg).toMatch(/class="y-label"[^>]*>Fuel used \(L\)</);
    expect([...svg.matchAll(/class="subtitle"/g)]).toHaveLength(2);
  });

  it("leaves out points that are not finite instead of writing NaN coordinates", () => {
    const spec = threeGroups();
    (spec.y as number[])[4] = NaN;
    const svg = scatterSvg(spec);
    expect(svg).not.toContain("NaN");
    expect(svg.match(/<use [^>]*x="/g)?.length).toBe(29 + 3); // 29 points and 3 legend markers
  });
});

describe("scatterSvg in a narrow pane", () => {
  const narrow = () => {
    const spec = threeGroups();
    spec.title = "Fuel used on each trip against the distance driven, with the payload held at its average";
    return scatterSvg({ ...spec, width: 300, height: 390 });
  };
  const numbers = (svg: string, pattern: RegExp) => [...svg.matchAll(pattern)].map((m) => Number(m[1]));

  it("puts the legend under the plot frame and grows by its height", () => {
    const svg = narrow();
    expect(svg).toContain('height="' + (390 + 26 + 22 * 3) + '"');
    const frame = /<rect x="([\d.]+)" y="([\d.]+)" width="([\d.]+)" height="([\d.]+)" fill="none"/.exec(svg)!;
    const frameBottom = Number(frame[2]) + Number(frame[4]);
    const legendYs = numbers(svg, /<text class="legend-entry" x="[\d.]+" y="([\d.]+)"/g);
    expect(legendYs).toHaveLength(3);
    for (const y of legendYs) expect(y).toBeGreaterThan(frameBottom + 40);
    expect(Number(frame[1]) + Number(frame[3])).toBeLessThanOrEqual(300);
  });

  it("wraps a long title into lines that fit the width (about 0.56 em a character)", () => {
    const lines = [...narrow().matchAll(/<text class="title"[^>]*font-size="(\d+)"[^>]*>([^<]*)</g)];
    expect(lines.length).toBeGreaterThan(1);
    for (const [, size, text] of lines) expect(10 + text.length * 0.56 * Number(size)).toBeLessThanOrEqual(300);
  });

  it("keeps a long y label within the plot's height, so it does not run into the subtitle above", () => {
    const spec = threeGroups();
    spec.yLabel = "Fuel used (L), other predictors at their average";
    spec.subtitle = ["Outcome at the average Payload (t)", "Each row drawn as its most probable component"];
    const svg = scatterSvg({ ...spec, width: 300, height: 390 });
    const frame = /<rect x="([\d.]+)" y="([\d.]+)" width="([\d.]+)" height="([\d.]+)" fill="none"/.exec(svg)!;
    const plotHeight = Number(frame[4]);
    const labels = [...svg.matchAll(/<text class="y-label"[^>]*font-size="(\d+)"[^>]*>([^<]*)</g)];
    expect(labels.length).toBeGreaterThan(0);
    expect(labels.map((m) => m[2]).join(" ")).toBe(spec.yLabel);
    for (const [, size, text] of labels) expect(text.length * 0.56 * Number(size)).toBeLessThanOrEqual(plotHeight);
  });

  it("keeps the legend beside the plot at the demo's width", () => {
    const svg = scatterSvg(threeGroups());
    const legendXs = numbers(svg, /<text class="legend-entry" x="([\d.]+)"/g);
    for (const x of legendXs) expect(x).toBeGreaterThan(720 - 190 - 8);
  });
});

describe("componentStyle", () => {
  it("gives ten different shapes and colours before any repeats", () => {
    expect(new Set(Array.from({ length: 10 }, (_, c) => componentStyle(c).shape)).size).toBe(10);
    expect(new Set(Array.from({ length: 10 }, (_, c) => componentStyle(c).colour)).size).toBe(10);
    expect(componentStyle(0).colour).toBe(COMPONENT_COLOURS[0]);
    const paths = MARKER_SHAPES.map((shape) => markerPath(shape, 4));
    expect(new Set(paths).size).toBe(MARKER_SHAPES.length);
  });
});

describe("niceTicks", () => {
  it("steps by 1, 2 or 5 times a power of ten and covers the data", () => {
    // 0..97 in about 6 steps: rough step 16.2, power 10, ratio 1.62 → 2 → step 20, ticks 0..100.
    expect(niceTicks(0, 97)).toEqual({ ticks: [0, 20, 40, 60, 80, 100], low: 0, high: 100 });
    // 3.49..7.99: rough 0.75, power 0.1, ratio 7.5 → 10 → step 1, from 3 to 8.
    expect(niceTicks(3.49, 7.99).ticks).toEqual([3, 4, 5, 6, 7, 8]);
  });

  it("widens a range of one value instead of dividing by zero", () => {
    const axis = niceTicks(5, 5);
    expect(axis.low).toBeLessThan(5);
    expect(axis.high).toBeGreaterThan(5);
  });
});

describe("componentPlot", () => {
  it("puts each row on its component's line after adjusting for the other predictor", () => {
    // Two components, y exactly linear in (x1, x2): after adjustment to the mean of x2 each
    // point must lie on its component's line in x1 (derivation in componentPlot's comment).
    const betas = [new Float64Array([1, 2, 0.5]), new Float64Array([10, -1, 3])];
    const n = 40;
    const x = new Float64Array(n * 2);
    const y = new Float64Array(n);
    const labels = new Int32Array(n);
    for (let i = 0; i < n; i++) {
      x[2 * i] = i;
      x[2 * i + 1] = (i * 7) % 5;
      labels[i] = i % 2;
      const b = betas[labels[i]];
      y[i] = b[0] + b[1] * x[2 * i] + b[2] * x[2 * i + 1];
    }
    const spec = componentPlot(
      { y, x, n, p: 2, yName: "y", predictorNames: ["x1", "x2"] },
      { components: betas.map((coefficients) => ({ weight: 0.5, coefficients })), labels },
      "test",
    );
    // x1 moves y most: |β| · SD(x1) ≈ 1.5 · 11.5 against ≈ 1.75 · 1.4 for x2.
    expect(spec.xLabel).toBe("x1");
    for (let i = 0; i < n; i++) {
      const line = spec.lines[labels[i]];
      const slope = (line.y1 - line.y0) / (line.x1 - line.x0);
      expect(spec.y[i]).toBeCloseTo(line.y0 + slope * (spec.x[i] - line.x0), 9);
    }
    expect(spec.groupNames).toEqual(["1: weight 50.0%, 20 rows", "2: weight 50.0%, 20 rows"]);
  });
});
