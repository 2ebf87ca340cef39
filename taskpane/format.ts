import { formatColumn as formatPlainColumn, formatNumber as formatPlain, formatPercent, formatWithError as formatPlainWithError } from "../src/report/formatNumber";

/** The typographic minus sign, for a pane that reads as text rather than code. */
function typographic(text: string): string {
  return text.replace(/^-/, "−").replace(/e-/, "e−");
}

/** Numbers as the pane shows them: the one number style of src/report/formatNumber.ts (four significant digits). */
export function formatNumber(value: number, digits?: number): string {
  if (!Number.isFinite(value)) return value === Infinity ? "∞" : value === -Infinity ? "−∞" : "—";
  return typographic(formatPlain(value, digits));
}

/** A table column at one number of decimals (decimal points line up), with the typographic minus. */
export function formatColumn(values: readonly number[]): string[] {
  return formatPlainColumn(values).map(typographic);
}

/** An estimate and its standard error, rounded where the standard error says. */
export function formatWithError(value: number, error: number): { value: string; error: string } {
  const shown = formatPlainWithError(value, error);
  return { value: typographic(shown.value), error: shown.error };
}

/** A share as a percentage with one decimal. */
export function formatShare(value: number): string {
  return formatPercent(value);
}

export function plural(count: number, one: string, many = `${one}s`): string {
  return `${count} ${count === 1 ? one : many}`;
}
