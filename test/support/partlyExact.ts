import { createRandom } from "../../src/engine/random";

/** Rows on two lines y = a + b·x: the first `exactRows` exactly on one, the others around the other with noise SD 0.5. */
export interface PartlyExactLayout {
  exactRows: number;
  noisyRows: number;
  /** Intercept and slope of the exact line. */
  exactLine: [number, number];
  /** Intercept and slope of the noisy line. */
  noisyLine: [number, number];
  seed: number;
}

/**
 * Invented demo data for a fit exact on some components only. By default: 120 rows computed
 * exactly as y = 2 + 3x (a copied formula, say), then 120 measured rows around y = −1 + 0.5x
 * with noise SD 0.5; x uniform on [−2, 2]. With K = 2 one component fits the 120 computed rows
 * exactly and no measured row lies within 1e-6 SD(y) of that line.
 */
export function partlyExactRows(layout: PartlyExactLayout = { exactRows: 120, noisyRows: 120, exactLine: [2, 3], noisyLine: [-1, 0.5], seed: 404 }): { x: Float64Array; y: Float64Array } {
  const { exactRows, noisyRows, exactLine, noisyLine } = layout;
  const random = createRandom(layout.seed);
  const n = exactRows + noisyRows;
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    x[i] = 4 * random.next() - 2;
    y[i] = i < exactRows ? exactLine[0] + exactLine[1] * x[i] : noisyLine[0] + noisyLine[1] * x[i] + 0.5 * random.normal();
  }
  return { x, y };
}
