/**
 * Invented demo data for the task-pane tests: two straight lines, y = 1 + 2x and
 * y = 12 − x, 60 rows each, x uniform on [0, 10], noise SD 0.4, from the engine's
 * seeded generator. Row 5 holds the text "n/a" in x and row 9 a blank y, so two
 * rows are skipped. Nothing here is real data.
 */
import { createRandom } from "../../src/engine/random";

export const INVENTED_ROWS_PER_LINE = 60;

/** A sheet: header row ["Output", "Input"], then one row per observation. */
export function inventedSheet(seed = 11): unknown[][] {
  const random = createRandom(seed);
  const rows: unknown[][] = [["Output", "Input"]];
  for (let i = 0; i < 2 * INVENTED_ROWS_PER_LINE; i++) {
    const x = 10 * random.next();
    const y = i % 2 === 0 ? 1 + 2 * x : 12 - x;
    rows.push([Number((y + 0.4 * random.normal()).toFixed(3)), Number(x.toFixed(3))]);
  }
  rows[5][1] = "n/a";
  rows[9][0] = null;
  return rows;
}
