/**
 * How components are drawn everywhere Skein draws them (plots, the task pane):
 * a colour and a marker shape per component, so components stay apart in
 * grey-scale print and for readers who do not see colour differences.
 *
 * The first three colours are the icon's; the fourth, a slate blue, sits apart
 * from them in hue and lightness. Colours and shapes follow the task pane's
 * (taskpane/markers.ts) in the same order, so component 2 looks the same in
 * the pane and in the demo's plots. Beyond four components the colours repeat
 * but the shapes do not (six shapes).
 */
export const COMPONENT_COLOURS = ["#1b7f79", "#c7761a", "#6b3fa0", "#3b5b92"] as const;

export type MarkerShape = "circle" | "triangle" | "square" | "diamond" | "cross" | "star";

export const MARKER_SHAPES: readonly MarkerShape[] = ["circle", "triangle", "square", "diamond", "cross", "star"];

/** Dash patterns of the fitted lines, so lines too differ by more than colour. */
const LINE_DASHES = ["", "8 4", "2 3", "10 3 2 3", "4 4", "1 5"];

export interface ComponentStyle {
  colour: string;
  shape: MarkerShape;
  /** SVG stroke-dasharray of the component's fitted line ("" for solid). */
  dash: string;
}

/** The style of 0-based component `index`. */
export function componentStyle(index: number): ComponentStyle {
  return {
    colour: COMPONENT_COLOURS[index % COMPONENT_COLOURS.length],
    shape: MARKER_SHAPES[index % MARKER_SHAPES.length],
    dash: LINE_DASHES[index % LINE_DASHES.length],
  };
}

/**
 * SVG path data of a marker of the given shape centred on (0, 0), fitting in
 * a box of side 2·r. Shapes have about equal area so none looks heavier.
 */
export function markerPath(shape: MarkerShape, r: number): string {
  const f = (v: number): string => (Math.round(v * 100) / 100).toString();
  switch (shape) {
    case "circle":
      return `M${f(-r)},0A${f(r)},${f(r)} 0 1,0 ${f(r)},0A${f(r)},${f(r)} 0 1,0 ${f(-r)},0Z`;
    case "square": {
      const s = r * 0.85;
      return `M${f(-s)},${f(-s)}H${f(s)}V${f(s)}H${f(-s)}Z`;
    }
    case "triangle":
      return `M0,${f(-r * 1.1)}L${f(r)},${f(r * 0.7)}H${f(-r)}Z`;
    case "star": {
      // Five points: outer and inner radii alternate every 36 degrees, first point up.
      const corners: string[] = [];
      for (let i = 0; i < 10; i++) {
        const radius = i % 2 === 0 ? r * 1.3 : r * 0.55;
        const angle = -Math.PI / 2 + (i * Math.PI) / 5;
        corners.push(`${f(radius * Math.cos(angle))},${f(radius * Math.sin(angle))}`);
      }
      return `M${corners.join("L")}Z`;
    }
    case "diamond":
      return `M0,${f(-r * 1.15)}L${f(r * 0.9)},0L0,${f(r * 1.15)}L${f(-r * 0.9)},0Z`;
    case "cross": {
      const a = r * 0.35;
      return `M${f(-a)},${f(-r)}H${f(a)}V${f(-a)}H${f(r)}V${f(a)}H${f(a)}V${f(r)}H${f(-a)}V${f(a)}H${f(-r)}V${f(-a)}H${f(-a)}Z`;
    }
  }
}
