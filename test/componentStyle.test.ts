import { readFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { cieLightness, contrastRatio, deltaEOk, hexToLinear, hexToOklab, linearToOklab, luminance, oklabToLinear, type Triple } from "../src/report/colourSpace";
import { DEFICIENCIES, MACHADO_2009, simulateDeficiency, type Deficiency } from "../src/report/colourVision";
import {
  COMPONENT_COLOURS,
  CRITERION_STYLES,
  INTERFACE_COLOURS,
  LINE_DASHES,
  MARKER_OUTLINES,
  MARKER_SHAPES,
  NEUTRALS,
  WORKBOOK_FILLS,
  componentStyle,
  cssColourVariables,
  markerPath,
} from "../src/report/componentStyle";

/** OKLab of a colour as seen with a deficiency (Machado, Oliveira & Fernandes 2009), or normally. */
function seen(hex: string, deficiency?: Deficiency): Triple {
  const linear = hexToLinear(hex);
  return linearToOklab(deficiency ? simulateDeficiency(linear, deficiency) : linear);
}

function smallestPairwise(hexes: readonly string[], measure: (a: string, b: string) => number): { value: number; pair: string } {
  let value = Infinity;
  let pair = "";
  for (let i = 0; i < hexes.length; i++) {
    for (let j = i + 1; j < hexes.length; j++) {
      const d = measure(hexes[i], hexes[j]);
      if (d < value) {
        value = d;
        pair = `${hexes[i]} and ${hexes[j]}`;
      }
    }
  }
  return { value, pair };
}

/**
 * The just-noticeable ΔE_OK is about 0.02 (the threshold the CSS Color Module
 * Level 4 gamut-mapping algorithm uses; quoted from memory). The thresholds
 * below ask for several times that.
 */
const JND_OK = 0.02;

describe("colour arithmetic", () => {
  it("puts sRGB red where the CSS Color Module Level 4 puts it in OKLCh", () => {
    // CSS Color 4 gives sRGB red as oklch(62.8% 0.2577 29.23deg) (from memory of its examples).
    const [L, a, b] = hexToOklab("#ff0000");
    expect(L).toBeCloseTo(0.628, 3);
    expect(Math.hypot(a, b)).toBeCloseTo(0.2577, 3);
    expect((Math.atan2(b, a) * 180) / Math.PI).toBeCloseTo(29.23, 1);
  });

  it("maps white to L = 1 with no colour, and OKLab back to the same linear RGB", () => {
    const white = hexToOklab("#ffffff");
    expect(white[0]).toBeCloseTo(1, 6);
    expect(Math.hypot(white[1], white[2])).toBeLessThan(1e-6);
    for (const hex of COMPONENT_COLOURS) {
      const back = oklabToLinear(hexToOklab(hex));
      hexToLinear(hex).forEach((c, i) => expect(back[i]).toBeCloseTo(c, 6));
    }
  });

  it("gives WCAG 2.1's contrast of black on white, 21:1, and CIE L* 50 at Y = 0.1842", () => {
    expect(contrastRatio("#000000", "#ffffff")).toBeCloseTo(21, 6);
    // L* = 116·Y^(1/3) − 16 = 50 at Y = (66/116)^3 = 0.18419 (derived from the CIE formula).
    expect(cieLightness((66 / 116) ** 3)).toBeCloseTo(50, 6);
  });
});

describe("simulated colour-vision deficiencies (Machado, Oliveira & Fernandes 2009)", () => {
  it("leave white and greys unchanged: each matrix row sums to 1", () => {
    for (const d of DEFICIENCIES) {
      const m = MACHADO_2009[d];
      for (let row = 0; row < 3; row++) expect(m[3 * row] + m[3 * row + 1] + m[3 * row + 2]).toBeCloseTo(1, 5);
    }
  });

  it("collapse colour to two dimensions for protanopia and deuteranopia (singular matrices)", () => {
    const det = (m: readonly number[]) => m[0] * (m[4] * m[8] - m[5] * m[7]) - m[1] * (m[3] * m[8] - m[5] * m[6]) + m[2] * (m[3] * m[7] - m[4] * m[6]);
    expect(Math.abs(det(MACHADO_2009.protanopia))).toBeLessThan(1e-5);
    expect(Math.abs(det(MACHADO_2009.deuteranopia))).toBeLessThan(1e-5);
  });

  it("shrink red–green differences for deuteranopia and blue–yellow ones for tritanopia, not the other way round", () => {
    const shrink = (a: string, b: string, d: Deficiency) => deltaEOk(seen(a, d), seen(b, d)) / deltaEOk(seen(a), seen(b));
    expect(shrink("#ff0000", "#00ff00", "deuteranopia")).toBeLessThan(shrink("#0000ff", "#ffff00", "deuteranopia"));
    expect(shrink("#0000ff", "#ffff00", "tritanopia")).toBeLessThan(shrink("#ff0000", "#00ff00", "tritanopia"));
  });
});

describe("component colours", () => {
  it("support ten components", () => {
    expect(COMPONENT_COLOURS.length).toBeGreaterThanOrEqual(10);
    expect(new Set(COMPONENT_COLOURS).size).toBe(COMPONENT_COLOURS.length);
  });

  for (const d of DEFICIENCIES) {
    it(`stay apart under simulated ${d}: smallest ΔE_OK of the first six ≥ 7 JND, of all ten ≥ 4 JND`, () => {
      const six = smallestPairwise(COMPONENT_COLOURS.slice(0, 6), (a, b) => deltaEOk(seen(a, d), seen(b, d)));
      expect(six.value, six.pair).toBeGreaterThanOrEqual(7 * JND_OK);
      const ten = smallestPairwise(COMPONENT_COLOURS.slice(0, 10), (a, b) => deltaEOk(seen(a, d), seen(b, d)));
      expect(ten.value, ten.pair).toBeGreaterThanOrEqual(4 * JND_OK);
    });
  }

  it("stay further apart with normal vision: smallest ΔE_OK of the first six ≥ 10 JND", () => {
    const six = smallestPairwise(COMPONENT_COLOURS.slice(0, 6), (a, b) => deltaEOk(seen(a), seen(b)));
    expect(six.value, six.pair).toBeGreaterThanOrEqual(10 * JND_OK);
  });

  it("stay apart in greyscale print: the first four differ by at least 8.5 in CIE L*", () => {
    const lightness = (hex: string) => cieLightness(luminance(hexToLinear(hex)));
    const four = smallestPairwise(COMPONENT_COLOURS.slice(0, 4), (a, b) => Math.abs(lightness(a) - lightness(b)));
    expect(four.value, four.pair).toBeGreaterThanOrEqual(8.5);
  });

  it("are neither grey nor glaring: OKLCh chroma between 0.08 and 0.25", () => {
    for (const hex of COMPONENT_COLOURS) {
      const [, a, b] = hexToOklab(hex);
      expect(Math.hypot(a, b), hex).toBeGreaterThanOrEqual(0.08);
      expect(Math.hypot(a, b), hex).toBeLessThanOrEqual(0.25);
    }
  });

  it("show on the plot's paper: contrast at least 3:1 (WCAG 2.1 non-text contrast)", () => {
    for (const hex of COMPONENT_COLOURS) expect(contrastRatio(hex, NEUTRALS.paper), hex).toBeGreaterThanOrEqual(3);
  });
});

/** Whether (x, y) lies inside a closed outline (even–odd crossing rule). */
function inside(outline: readonly [number, number][], x: number, y: number): boolean {
  let result = false;
  for (let i = 0, j = outline.length - 1; i < outline.length; j = i++) {
    const [xi, yi] = outline[i];
    const [xj, yj] = outline[j];
    if (yi > y !== yj > y && x < ((xj - xi) * (y - yi)) / (yj - yi) + xi) result = !result;
  }
  return result;
}

describe("marker shapes", () => {
  const GRID = 120;
  const masks = new Map(
    MARKER_SHAPES.map((shape) => {
      const mask: boolean[] = [];
      for (let i = 0; i < GRID; i++) for (let j = 0; j < GRID; j++) mask.push(inside(MARKER_OUTLINES[shape], -1.5 + (3 * (j + 0.5)) / GRID, -1.5 + (3 * (i + 0.5)) / GRID));
      return [shape, mask];
    }),
  );
  const area = (shape: (typeof MARKER_SHAPES)[number]) => (masks.get(shape)!.filter(Boolean).length * 9) / GRID ** 2;

  it("are ten different shapes, none a circle, triangle or square", () => {
    expect(new Set(MARKER_SHAPES).size).toBe(10);
    expect(new Set(MARKER_SHAPES.map((s) => markerPath(s, 4))).size).toBe(10);
    for (const s of MARKER_SHAPES) expect(["circle", "triangle", "square"]).not.toContain(s);
  });

  it("differ in outline: any two overlap by less than 70% of their union when centred", () => {
    for (let a = 0; a < MARKER_SHAPES.length; a++) {
      for (let b = a + 1; b < MARKER_SHAPES.length; b++) {
        const A = masks.get(MARKER_SHAPES[a])!;
        const B = masks.get(MARKER_SHAPES[b])!;
        let both = 0;
        let either = 0;
        for (let k = 0; k < A.length; k++) {
          if (A[k] && B[k]) both++;
          if (A[k] || B[k]) either++;
        }
        expect(both / either, `${MARKER_SHAPES[a]} and ${MARKER_SHAPES[b]}`).toBeLessThan(0.7);
      }
    }
  });

  it("carry about the same ink: the largest area at most 1.6 times the smallest, all inside the ±1.5 box", () => {
    const areas = MARKER_SHAPES.map(area);
    expect(Math.max(...areas) / Math.min(...areas)).toBeLessThan(1.6);
    for (const s of MARKER_SHAPES) for (const [x, y] of MARKER_OUTLINES[s]) expect(Math.max(Math.abs(x), Math.abs(y)), s).toBeLessThanOrEqual(1.5);
  });
});

/** A dash pattern as on/off pixels along `length` px of line (SVG repeats an odd-length list twice). */
function dashPixels(dash: string, length: number): boolean[] {
  let runs = dash.trim() === "" ? [] : dash.trim().split(/[\s,]+/).map(Number);
  if (runs.length % 2 === 1) runs = [...runs, ...runs];
  const out: boolean[] = [];
  if (runs.length === 0) return Array.from({ length }, () => true);
  const period = runs.reduce((s, r) => s + r, 0);
  for (let p = 0; p < length; p++) {
    let t = (p + 0.5) % period;
    let on = true;
    for (const run of runs) {
      if (t < run) break;
      t -= run;
      on = !on;
    }
    out.push(on);
  }
  return out;
}

describe("line dashes", () => {
  it("are ten patterns that differ in rhythm: any two disagree on at least 15% of 120 px at every offset", () => {
    expect(LINE_DASHES.length).toBe(10);
    const LENGTH = 120;
    for (let a = 0; a < LINE_DASHES.length; a++) {
      for (let b = a + 1; b < LINE_DASHES.length; b++) {
        const A = dashPixels(LINE_DASHES[a], LENGTH + 40);
        const B = dashPixels(LINE_DASHES[b], LENGTH);
        let least = Infinity;
        for (let shift = 0; shift < 40; shift++) {
          let differ = 0;
          for (let p = 0; p < LENGTH; p++) if (A[p + shift] !== B[p]) differ++;
          least = Math.min(least, differ / LENGTH);
        }
        expect(least, `"${LINE_DASHES[a]}" and "${LINE_DASHES[b]}"`).toBeGreaterThanOrEqual(0.15);
      }
    }
  });

  it("do not follow the unbroken, dashed, dotted, dot-dash order", () => {
    expect(LINE_DASHES[0]).not.toBe("");
  });
});

describe("componentStyle", () => {
  it("gives every one of the first fifty components its own colour-and-shape pair", () => {
    const pairs = new Set(Array.from({ length: 50 }, (_, i) => `${componentStyle(i).colour} ${componentStyle(i).shape}`));
    expect(pairs.size).toBe(50);
    expect(new Set(Array.from({ length: 10 }, (_, i) => componentStyle(i).dash)).size).toBe(10);
  });

  it("keeps the BIC and ICL series apart by colour, shape and dash", () => {
    expect(CRITERION_STYLES.bic.colour).not.toBe(CRITERION_STYLES.icl.colour);
    expect(CRITERION_STYLES.bic.shape).not.toBe(CRITERION_STYLES.icl.shape);
    expect(CRITERION_STYLES.bic.dash).not.toBe(CRITERION_STYLES.icl.dash);
  });
});

describe("interface colours", () => {
  it("keep text readable: 7:1 on the alert and caution washes, 4.5:1 on the accent wash and for white on the accent (WCAG 2.1)", () => {
    const ui = INTERFACE_COLOURS;
    expect(contrastRatio(ui.alertInk, ui.alertWash)).toBeGreaterThanOrEqual(7);
    expect(contrastRatio(ui.cautionInk, ui.cautionWash)).toBeGreaterThanOrEqual(7);
    expect(contrastRatio(ui.accentInk, ui.accentWash)).toBeGreaterThanOrEqual(4.5);
    expect(contrastRatio("#ffffff", ui.accent)).toBeGreaterThanOrEqual(4.5);
    expect(contrastRatio(NEUTRALS.ink, NEUTRALS.paper)).toBeGreaterThanOrEqual(12);
    expect(contrastRatio(NEUTRALS.muted, NEUTRALS.card)).toBeGreaterThanOrEqual(4.5);
    expect(contrastRatio(WORKBOOK_FILLS.headerText.replace(/^FF/, "#"), `#${WORKBOOK_FILLS.result.slice(2)}`)).toBeGreaterThanOrEqual(4.5);
    expect(contrastRatio(WORKBOOK_FILLS.headerText.replace(/^FF/, "#"), `#${WORKBOOK_FILLS.data.slice(2)}`)).toBeGreaterThanOrEqual(4.5);
  });

  it("reach the pane's style sheet only through variables: no colour literal in taskpane.css, every variable defined", () => {
    const css = readFileSync(join(__dirname, "..", "taskpane", "taskpane.css"), "utf8").replace(/\/\*[\s\S]*?\*\//g, "");
    expect(css.match(/#[0-9a-f]{3,8}\b/gi) ?? []).toEqual([]);
    const defined = new Set([...cssColourVariables().matchAll(/--([\w-]+):/g), ...css.matchAll(/--([\w-]+):/g)].map((m) => m[1]));
    const used = new Set([...css.matchAll(/var\(--([\w-]+)\)/g)].map((m) => m[1]));
    for (const name of used) expect(defined, `--${name}`).toContain(name);
  });
});
