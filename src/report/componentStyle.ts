/**
 * Skein's one style module: how components are drawn everywhere Skein draws
 * them (the demo's SVG plots, the task pane's scatter, chart and tables, the
 * fills of result workbooks) and the pane's interface colours. Each component
 * gets a colour, a marker shape and a line dash, so components stay apart in
 * greyscale print and for readers who do not see some colour differences.
 *
 * COMPONENT COLOURS were derived here by search (scripts/choosePalette.ts,
 * seeded, prints these values): simulated annealing over 8-bit sRGB,
 * maximising the smallest pairwise colour difference ΔE_OK (Euclidean
 * distance in OKLab; Ottosson 2020) over normal vision and simulated
 * protanopia, deuteranopia and tritanopia (Machado, Oliveira & Fernandes
 * 2009, severity 1, src/report/colourVision.ts), with normal vision asked for
 * 1.4 times that difference; every colour has a 3:1 contrast with the plot's
 * paper (WCAG 2.1, 1.4.11), OKLCh chroma between 0.08 and 0.25 (not grey,
 * and off the sRGB cube's most saturated corners, which glare on screen and
 * which colour printers do not reproduce) and CIE L* ≥ 30; the first four
 * differ by ≥ 9 in CIE L* (greyscale print). The order makes the first three,
 * four, five colours as far apart as the set allows, darker first on ties;
 * colours 7 to 10 were added one at a time, each farthest from those before
 * it. What the search printed (smallest ΔE_OK; normal / protanopia /
 * deuteranopia / tritanopia):
 *
 *   first 3   0.305 / 0.217 / 0.155 / 0.281   smallest L* step 9.1
 *   first 4   0.207 / 0.148 / 0.155 / 0.148   smallest L* step 9.1
 *   first 6   0.207 / 0.148 / 0.148 / 0.148
 *   first 10  0.116 / 0.083 / 0.083 / 0.087
 *
 *   1 #025310 forest   L* 30.0    6 #ff498c rose     L* 59.8
 *   2 #aa0095 magenta  L* 39.1    7 #6d335e plum     L* 30.5
 *   3 #3b98e6 sky      L* 60.9    8 #009065 jade     L* 52.8
 *   4 #8b7503 olive    L* 49.8    9 #72a100 lime     L* 60.8
 *   5 #4640ef indigo   L* 39.9   10 #c84db1 orchid   L* 52.7
 *
 * (A ΔE_OK of 0.02 is about one just-noticeable difference.) Beyond ten
 * components the colours repeat with a shifted shape and dash, so every pair
 * among the first hundred differs in colour or shape.
 *
 * MARKER SHAPES and LINE DASHES are this project's own: ten hole-free
 * silhouettes (half-disc first) of about equal ink, and ten dash patterns
 * (long dash first). test/componentStyle.test.ts checks that the shapes differ
 * in outline and the dashes in rhythm.
 *
 * INTERFACE COLOURS (alert, caution, accent) are placed in OKLCh at hues chosen
 * here (alert 18°, caution 68°, accent 220°), with lightness found by
 * bisection so that text on them meets WCAG 2.1 contrast (7:1 for text on a
 * wash, 4.5:1 for white on the accent); the same script prints them.
 */

/** Component colours in component order (see above for how they were found). */
export const COMPONENT_COLOURS = ["#025310", "#aa0095", "#3b98e6", "#8b7503", "#4640ef", "#ff498c", "#6d335e", "#009065", "#72a100", "#c84db1"] as const;

export type MarkerShape = "hexagon" | "dart" | "saltire" | "dome" | "kite" | "plus" | "hourglass" | "sparkle" | "slab" | "pennant";

/**
 * Marker order: the first three are the most unlike each other and unlike a dot
 * at marker size (a half-disc, a four-point star, an upright bar); the hexagon,
 * which reads as round when small, comes last.
 */
export const MARKER_SHAPES: readonly MarkerShape[] = ["dome", "sparkle", "slab", "pennant", "hourglass", "kite", "saltire", "dart", "plus", "hexagon"];

/** SVG stroke-dasharray of each component's fitted line ("" is unbroken). */
export const LINE_DASHES: readonly string[] = ["12 4", "", "2 3 8 3", "7 2 1.5 2 1.5 2", "1.5 3", "14 3 3 3 3 3", "4 4", "18 3 6 3", "2 6", "9 2 9 7"];

export interface ComponentStyle {
  colour: string;
  shape: MarkerShape;
  /** SVG stroke-dasharray of the component's fitted line ("" for unbroken). */
  dash: string;
}

/** The style of 0-based component `index`; past ten, shapes and dashes shift by the round. */
export function componentStyle(index: number): ComponentStyle {
  const n = COMPONENT_COLOURS.length;
  const round = Math.floor(index / n);
  return {
    colour: COMPONENT_COLOURS[index % n],
    shape: MARKER_SHAPES[(index + round) % MARKER_SHAPES.length],
    dash: LINE_DASHES[(index + 3 * round) % LINE_DASHES.length],
  };
}

/** Points of a regular polygon of `corners` corners on a circle of `radius`, the first at `startDegrees` (0 = right, 90 = down). */
function regular(corners: number, radius: number, startDegrees: number): [number, number][] {
  return Array.from({ length: corners }, (_, i) => {
    const angle = ((startDegrees + (360 * i) / corners) * Math.PI) / 180;
    return [radius * Math.cos(angle), radius * Math.sin(angle)] as [number, number];
  });
}

/**
 * Each shape as one closed outline in a box of about ±1.3 around (0, 0), y
 * downwards, scaled so the shapes carry about the same ink (areas between
 * 2.0 and 3.1 square units; a test measures them).
 */
export const MARKER_OUTLINES: Record<MarkerShape, readonly [number, number][]> = {
  hexagon: regular(6, 1, -90),
  dart: [[0, 1.3], [-1.3, -1.1], [0, -0.45], [1.3, -1.1]],
  saltire: [[-0.75, -1.1], [0, -0.35], [0.75, -1.1], [1.1, -0.75], [0.35, 0], [1.1, 0.75], [0.75, 1.1], [0, 0.35], [-0.75, 1.1], [-1.1, 0.75], [-0.35, 0], [-1.1, -0.75]],
  dome: regular(24, 1.3, 180).filter(([, y]) => y <= 1e-9).map(([x, y]) => [x, y + 0.55] as [number, number]),
  kite: [[0, -1.45], [0.9, -0.55], [0, 1.35], [-0.9, -0.55]],
  plus: [[-0.38, -1.15], [0.38, -1.15], [0.38, -0.38], [1.15, -0.38], [1.15, 0.38], [0.38, 0.38], [0.38, 1.15], [-0.38, 1.15], [-0.38, 0.38], [-1.15, 0.38], [-1.15, -0.38], [-0.38, -0.38]],
  hourglass: [[-0.95, -1.15], [0.95, -1.15], [0.15, 0], [0.95, 1.15], [-0.95, 1.15], [-0.15, 0]],
  sparkle: regular(8, 1, -90).map(([x, y], i) => (i % 2 === 0 ? [x * 1.45, y * 1.45] : [x * 0.5, y * 0.5]) as [number, number]),
  slab: [[-0.5, -1.3], [0.5, -1.3], [0.5, 1.3], [-0.5, 1.3]],
  pennant: [[-0.85, -1.1], [0.85, -1.1], [0.85, 1.15], [0, 0.2], [-0.85, 1.15]],
};

/**
 * SVG path data of a marker of the given shape centred on (0, 0), about 2·r
 * across (r is the radius the outlines' unit stands for).
 */
export function markerPath(shape: MarkerShape, r: number): string {
  const f = (v: number): string => (Math.round(v * r * 100) / 100).toString();
  return `M${MARKER_OUTLINES[shape].map(([x, y]) => `${f(x)},${f(y)}`).join("L")}Z`;
}

/**
 * Neutral colours of the plots and the pane: text (12:1 on paper), secondary
 * text (4.5:1 on white), paper and cards, rules and grid lines, plot frames,
 * control edges (3:1 on white, WCAG 2.1 1.4.11) and header shading.
 */
export const NEUTRALS = {
  ink: "#1f2a2e",
  muted: "#4c5a5e",
  paper: "#fdfcf9",
  card: "#ffffff",
  line: "#d9d4c9",
  grid: "#e4e1da",
  frame: "#9a968c",
  control: "#858b89",
  shade: "#eeece6",
} as const;

/** Interface colours derived by scripts/choosePalette.ts (see the module comment). */
export const INTERFACE_COLOURS = {
  accent: "#0081a0",
  accentInk: "#006179",
  accentWash: "#e2f8ff",
  alertEdge: "#c03a4a",
  alertInk: "#8c333b",
  alertWash: "#ffeded",
  cautionEdge: "#d78c29",
  cautionInk: "#7e4300",
  cautionWash: "#fff1e2",
} as const;

/** The two series of the chart of BIC and ICL against K: colour, marker and dash of each. */
export const CRITERION_STYLES: Record<"bic" | "icl", ComponentStyle> = {
  bic: { colour: INTERFACE_COLOURS.accentInk, shape: "hexagon", dash: "" },
  icl: { colour: INTERFACE_COLOURS.cautionInk, shape: "kite", dash: "7 3" },
};

/** Colours of the header cells of result workbooks (ARGB, as the workbook writer takes them). */
export const WORKBOOK_FILLS = {
  /** Header cells of columns Skein added (component, fitted value, memberships) and of the Components sheet. */
  result: argb(INTERFACE_COLOURS.accentInk),
  /** Header cells of the columns read from the input. */
  data: argb(NEUTRALS.muted),
  headerText: "FFFFFFFF",
} as const;

function argb(hex: string): string {
  return `FF${hex.slice(1).toUpperCase()}`;
}

function kebab(name: string): string {
  return name.replace(/[A-Z]/g, (letter) => `-${letter.toLowerCase()}`);
}

/**
 * The colours as CSS custom properties on :root (--ink, --accent-ink,
 * --alert-wash, --component-1, …): the pane puts this in front of its style
 * sheet, so taskpane.css names colours only through these variables.
 */
export function cssColourVariables(): string {
  const entries = [...Object.entries(NEUTRALS), ...Object.entries(INTERFACE_COLOURS)].map(([name, hex]) => `--${kebab(name)}: ${hex};`);
  COMPONENT_COLOURS.forEach((hex, i) => entries.push(`--component-${i + 1}: ${hex};`));
  return `:root { ${entries.join(" ")} }\n`;
}
