/**
 * How components are told apart in the pane: by colour and marker shape (and
 * line dash), never by colour alone. The styles are the shared ones of
 * src/report/componentStyle.ts, so component 2 looks the same in the pane, the
 * demo's plots and the command line's SVGs.
 */
import { componentStyle, markerPath as centredMarkerPath, type MarkerShape } from "../src/report/componentStyle";

export { componentStyle };

/** Marker path data centred at (x, y), about 2r across. */
export function markerAt(shape: MarkerShape, x: number, y: number, r: number): { d: string; transform: string } {
  return { d: centredMarkerPath(shape, r), transform: `translate(${x.toFixed(2)},${y.toFixed(2)})` };
}

/** A small standalone SVG of one component's marker, for tables and legends. */
export function markerSwatch(index: number, size = 14): string {
  const { colour, shape } = componentStyle(index);
  const c = size / 2;
  return `<svg class="swatch" width="${size}" height="${size}" viewBox="0 0 ${size} ${size}" aria-hidden="true" focusable="false"><path transform="translate(${c},${c})" d="${centredMarkerPath(shape, size * 0.32)}" fill="${colour}" stroke="${colour}"/></svg>`;
}
