import { createRandom } from "../../src/engine/random";

/**
 * Invented demo data for a fit exact on some components only: 120 rows computed exactly as
 * y = 2 + 3x (a copied formula, say), then 120 measured rows around y = −1 + 0.5x with noise
 * SD 0.5; x uniform on [−2, 2]. With K = 2 one component fits the 120 computed rows exactly
 * and no measured row lies within 1e-6 SD(y) of that line.
 */
export function partlyExactRows(): { x: Float64Array; y: Float64Array } {
  const random = createRandom(404);
  const n = 240;
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    x[i] = 4 * random.next() - 2;
    y[i] = i < 120 ? 2 + 3 * x[i] : -1 + 0.5 * x[i] + 0.5 * random.normal();
  }
  return { x, y };
}
