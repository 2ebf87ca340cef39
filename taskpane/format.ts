/** Numbers as the pane shows them: four significant digits, no exponent for everyday sizes. */
export function formatNumber(value: number, digits = 4): string {
  if (!Number.isFinite(value)) return value === Infinity ? "∞" : value === -Infinity ? "−∞" : "—";
  if (value === 0) return "0";
  const magnitude = Math.abs(value);
  if (magnitude >= 1e6 || magnitude < 1e-4) return value.toExponential(digits - 1).replace("-", "−");
  const text = Number(value.toPrecision(digits)).toString();
  return text.replace("-", "−");
}

/** A share as a percentage with one decimal. */
export function formatShare(value: number): string {
  return `${(value * 100).toFixed(1)}%`;
}

export function plural(count: number, one: string, many = `${one}s`): string {
  return `${count} ${count === 1 ? one : many}`;
}
