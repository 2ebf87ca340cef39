/**
 * The one number style of every surface that shows numbers as text: the task pane, the
 * command line, the demo and the text lines of result workbooks. Host-free.
 *
 * - An estimate with a standard error is rounded where its standard error says the digits
 *   stop meaning anything: the standard error to two significant digits, the estimate to the
 *   same decimal place (the rule of ISO/IEC Guide 98-3, GUM section 7.2.6, common practice in
 *   reporting), except that digits before the decimal point are kept (455, not 460). A
 *   standard error of 0 (an exact fit) means every digit is known: the estimate is shown in
 *   up to EXACT_DIGITS digits, rounding noise and trailing zeros dropped (12, 0.004). A
 *   standard error too small or too large for fixed notation puts both in exponent form
 *   (3.84e-306 ± 2.2e-307), never a row of zeros.
 * - Any other number: four significant digits, trailing zeros kept (so a column reads at one
 *   precision); digits before the decimal point are never rounded away (37225, not 3.723e4).
 * - Shares of rows (weights, misassigned rows, skipped rows) as percentages.
 * - Hyphen-minus; the pane swaps in the typographic minus sign.
 */

/** Significant digits of a number shown without a standard error. */
export const SIGNIFICANT_DIGITS = 4;

/** Significant digits of a standard error. */
export const ERROR_DIGITS = 2;

/** Digits of an exactly known value: past binary rounding noise, short of the 17 a double holds. */
export const EXACT_DIGITS = 10;

/** An exactly known value (standard error 0): up to EXACT_DIGITS digits, without trailing zeros. */
export function formatExact(value: number): string {
  if (!Number.isFinite(value) || value === 0) return formatNumber(value);
  const magnitude = Math.abs(value);
  if (magnitude < 1e-4 || magnitude >= 1e15) return Number(value.toPrecision(EXACT_DIGITS)).toExponential();
  return String(Number(value.toPrecision(EXACT_DIGITS)));
}

/** Noise SDs past this many gaps apart read as "no overlap": the digits only measure rounding. */
export const LARGEST_SHOWN_GAP = 1e6;

/** Decimal places that give `value` `digits` significant digits (0 for large values). */
export function decimalsFor(value: number, digits = SIGNIFICANT_DIGITS): number {
  if (!Number.isFinite(value) || value === 0) return 0;
  return Math.max(0, digits - 1 - Math.floor(Math.log10(Math.abs(value))));
}

/** A number in four significant digits (or `digits`), without exponent for everyday sizes. */
export function formatNumber(value: number, digits = SIGNIFICANT_DIGITS): string {
  if (Number.isNaN(value)) return "not available";
  if (!Number.isFinite(value)) return value > 0 ? "unlimited" : "-unlimited";
  if (value === 0) return "0";
  const magnitude = Math.abs(value);
  if (magnitude < 1e-4 || magnitude >= 1e15) return value.toExponential(digits - 1);
  const text = value.toFixed(Math.min(decimalsFor(value, digits), 20));
  // Rounding can carry into a new digit (9.9996 -> "10.000"): recount on the rounded value.
  const rounded = Number(text);
  return rounded !== 0 && decimalsFor(rounded, digits) < decimalsFor(value, digits) ? rounded.toFixed(decimalsFor(rounded, digits)) : text;
}

/**
 * Numbers of one table column at one number of decimals, so their decimal points line up:
 * as many as the value needing most takes for four significant digits (at most six).
 * Values too small or too large for fixed notation fall back to formatNumber.
 */
export function formatColumn(values: readonly number[], digits = SIGNIFICANT_DIGITS): string[] {
  const fixed = values.filter((v) => Number.isFinite(v) && v !== 0 && Math.abs(v) >= 1e-4 && Math.abs(v) < 1e15);
  const decimals = Math.min(6, Math.max(0, ...fixed.map((v) => decimalsFor(v, digits))));
  return values.map((v) => (fixed.includes(v) ? v.toFixed(decimals) : v === 0 ? (0).toFixed(decimals) : formatNumber(v, digits)));
}

/** An estimate and its standard error, rounded as the module comment says. */
export function formatWithError(value: number, standardError: number): { value: string; error: string } {
  if (!Number.isFinite(standardError) || standardError < 0) return { value: formatNumber(value), error: "not available" };
  if (standardError === 0) return { value: formatExact(value), error: "0" };
  const errorExponent = Math.floor(Math.log10(standardError));
  const decimals = ERROR_DIGITS - 1 - errorExponent;
  if (decimals > MOST_DECIMALS || standardError >= 1e15 || Math.abs(value) >= 1e15) {
    // Beyond fixed notation (a standard error of 2.2e-307 would print as 0.000000000000):
    // both in exponent form, the estimate to the decimal place of the error's second digit.
    const valueExponent = value === 0 || !Number.isFinite(value) ? errorExponent : Math.floor(Math.log10(Math.abs(value)));
    const fractionDigits = Math.min(20, Math.max(0, valueExponent - errorExponent + ERROR_DIGITS - 1));
    return { value: Number.isFinite(value) ? value.toExponential(fractionDigits) : formatNumber(value), error: standardError.toExponential(ERROR_DIGITS - 1) };
  }
  return { value: value.toFixed(Math.max(0, decimals)), error: standardError.toFixed(Math.max(0, decimals)) };
}

/** Decimal places fixed notation goes to for an estimate with a standard error (an error down to about 1e-11). */
const MOST_DECIMALS = 12;

/** "value ± error" on one line. */
export function formatPlusMinus(value: number, standardError: number): string {
  const shown = formatWithError(value, standardError);
  return shown.error === "not available" ? `${shown.value} (standard error not available)` : `${shown.value} ± ${shown.error}`;
}

/** A share (0 to 1) as a percentage with one decimal: 0.143 -> "14.3%". */
export function formatPercent(share: number): string {
  if (!Number.isFinite(share)) return "not available";
  return `${(100 * share).toFixed(1)}%`;
}

/** A gap in noise SDs: past LARGEST_SHOWN_GAP (or unlimited, when the noise is 0) the components do not overlap at all. */
export function formatGap(gap: number): string {
  if (Number.isNaN(gap)) return "not available";
  if (gap > LARGEST_SHOWN_GAP) return "no overlap (noise about 0)";
  return formatNumber(gap);
}

/** A noise SD; an exact component's shows as about 0. */
export function formatNoiseSd(sigma: number, exact: boolean): string {
  return exact ? "about 0 (exact fit)" : formatNumber(sigma);
}

/** Text columns: the first left-aligned, the others right-aligned, `gap` spaces apart. */
export function alignColumns(rows: readonly string[][], indent = "", gap = 3): string[] {
  const widths = rows[0].map((_, j) => Math.max(...rows.map((row) => (row[j] ?? "").length)));
  return rows.map((row) => indent + row.map((cell, j) => (j === 0 ? cell.padEnd(widths[j]) : cell.padStart(widths[j]))).join(" ".repeat(gap)).trimEnd());
}
