import { readNumberText } from "../io/numberText";
import { SkeinError } from "./errors";

/**
 * Text (and yes/no, TRUE/FALSE) predictor columns as indicator columns against a reference
 * level: indicator (dummy) coding of a factor in a linear model, common practice (Draper &
 * Smith 1998, Applied Regression Analysis, 3rd ed., ch. 14; chapter cited from memory).
 * The encoding travels with the design, so predictions for new rows take the same text
 * values and a value the fit never saw is refused by name.
 */

/** Most levels a category column may have: each becomes one more coefficient per component. */
export const MAX_CATEGORY_LEVELS = 20;

/** How one predictor column of the input enters the design. */
export type PredictorColumn =
  | { kind: "number"; name: string }
  | {
      kind: "category";
      name: string;
      /** The level every indicator is measured against (null when every level has one, which happens only without an intercept). */
      reference: string | null;
      /** Levels with an indicator column, in order of first appearance. */
      levels: string[];
      /** Used rows per level, reference included, in order of first appearance. */
      counts: { level: string; rows: number }[];
    };

/** The name an indicator column carries in every output: "Region = South". */
export function indicatorName(column: string, level: string): string {
  return `${column} = ${level}`;
}

/**
 * A cell of a category column as a level: [key, label], where the key ignores case and
 * surrounding spaces (so "Yes" and "yes " are one level) and the label is the text shown.
 * Booleans are the levels TRUE and FALSE; a number in a text column is a level written as
 * that number. Returns null for a cell that is no level (blank, error, date, object).
 */
export function levelOf(value: unknown): [string, string] | null {
  if (typeof value === "boolean") return value ? ["true", "TRUE"] : ["false", "FALSE"];
  if (typeof value === "number") return Number.isFinite(value) ? [String(value), String(value)] : null;
  if (typeof value === "string") {
    const label = value.trim();
    return label === "" ? null : [label.toLowerCase(), label];
  }
  return null;
}

/**
 * Whether a column is a category column: more of its non-blank cells are text or logical
 * values than numbers (error values and blanks not counted). A numeric column with a few
 * typed notes stays numeric, and those rows are skipped as before.
 */
export function isCategoryColumn(rows: readonly (readonly unknown[])[], first: number, column: number, isErrorText: (text: string) => boolean): boolean {
  let numbers = 0;
  let others = 0;
  for (let r = first; r < rows.length; r++) {
    const value = rows[r][column];
    if (typeof value === "number") numbers++;
    else if (typeof value === "boolean") others++;
    else if (typeof value === "string" && value.trim() !== "" && !isErrorText(value.trim())) others++;
  }
  return others > numbers;
}

/**
 * The levels of a category column from the keys of its used rows: the reference is the most
 * frequent level, ties broken by first appearance; every other level gets an indicator.
 * With `everyLevel` (the first category column of a fit without an intercept) every level
 * gets one and there is no reference. Throws when the column has more than
 * MAX_CATEGORY_LEVELS levels or only one.
 */
export function chooseLevels(name: string, keys: readonly string[], labels: ReadonlyMap<string, string>, everyLevel: boolean): Extract<PredictorColumn, { kind: "category" }> {
  const counts = new Map<string, number>();
  for (const key of keys) counts.set(key, (counts.get(key) ?? 0) + 1);
  if (counts.size > MAX_CATEGORY_LEVELS) {
    throw new SkeinError(
      "bad-input",
      `Column ${name} holds ${counts.size} different text values; Skein turns a text column into one indicator column per value and takes at most ${MAX_CATEGORY_LEVELS}. Group rare values together, or leave ${name} out of the predictors.`,
    );
  }
  const ordered = [...counts.keys()];
  if (ordered.length < 2) {
    const only = ordered.length === 1 ? labels.get(ordered[0]) : "";
    throw new SkeinError("bad-input", `Predictor ${name} has the same value (${only}) in every used row; remove it (the intercept already covers a constant).`);
  }
  let reference = ordered[0];
  for (const key of ordered) if ((counts.get(key) as number) > (counts.get(reference) as number)) reference = key;
  const withIndicator = everyLevel ? ordered : ordered.filter((key) => key !== reference);
  return {
    kind: "category",
    name,
    reference: everyLevel ? null : (labels.get(reference) as string),
    levels: withIndicator.map((key) => labels.get(key) as string),
    counts: ordered.map((key) => ({ level: labels.get(key) as string, rows: counts.get(key) as number })),
  };
}

/** The notice a category column gives: which indicators it became and against what. */
export function categoryNotice(column: Extract<PredictorColumn, { kind: "category" }>): string {
  const indicators = column.levels.join(", ");
  if (column.reference === null) {
    return `${column.name} holds text values: made into one indicator column per value (${indicators}), each the level's own intercept, since the fit has no intercept.`;
  }
  const rows = column.counts.find((c) => c.level === column.reference)?.rows ?? 0;
  const made = column.levels.length === 1 ? `an indicator column for ${indicators}, measured` : `indicator columns for ${indicators}, each measured`;
  return `${column.name} holds text values: made into ${made} against ${column.reference} (the most frequent value, ${rows} row${rows === 1 ? "" : "s"}).`;
}

/** Number of design columns the input columns become. */
export function encodedWidth(columns: readonly PredictorColumn[]): number {
  let width = 0;
  for (const column of columns) width += column.kind === "number" ? 1 : column.levels.length;
  return width;
}

/** The design's predictor names: numeric columns as they are, category columns as "Name = level" per indicator. */
export function encodedNames(columns: readonly PredictorColumn[]): string[] {
  return columns.flatMap((column) => (column.kind === "number" ? [column.name] : column.levels.map((level) => indicatorName(column.name, level))));
}

/**
 * Writes one row of input cells (one per input column) as design values into `out` at
 * `offset`. Returns true when the row is usable; false when a numeric column's cell is not a
 * finite number or a category cell is blank (the row is then skipped). A category value the
 * fit never saw throws a bad-input SkeinError naming the column, the value and the known ones.
 *
 * @param where how to name the row in that message, e.g. "new row 3"
 */
export function encodeRow(columns: readonly PredictorColumn[], cells: readonly unknown[], out: Float64Array, offset: number, where: string): boolean {
  let at = offset;
  for (let j = 0; j < columns.length; j++) {
    const column = columns[j];
    const value = cells[j];
    if (column.kind === "number") {
      // Number text ("12.3%", "$3.50") is read as the fitted rows' was (buildDesign).
      const number = typeof value === "string" ? readNumberText(value, ".")?.value : value;
      if (typeof number !== "number" || !Number.isFinite(number)) return false;
      out[at++] = number;
      continue;
    }
    const level = levelOf(value);
    if (level === null || (typeof value === "string" && value.trim().startsWith("#"))) return false;
    const key = level[0];
    const known = column.counts.some((c) => c.level.toLowerCase() === key);
    if (!known) {
      throw new SkeinError(
        "bad-input",
        `${where} has ${column.name} = "${level[1]}", a value the fitted rows do not hold; ${column.name} takes ${column.counts.map((c) => `"${c.level}"`).join(", ")}. Use one of those, or refit with rows that hold "${level[1]}".`,
      );
    }
    for (const indicator of column.levels) out[at++] = indicator.toLowerCase() === key ? 1 : 0;
  }
  return true;
}
