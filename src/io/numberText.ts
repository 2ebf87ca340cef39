/**
 * Numbers written as people export them: "12.3%", "1,234.5", "1.234,5",
 * "$3.50", "-€1 200", "3,50 €". Each reading says which style it used, so a
 * column is converted only when all its cells use one style (columnTypes.ts).
 * Host-free.
 */

/** How one cell's number was written. */
export interface NumberStyle {
  /** Ends with a percent sign: the value is divided by 100. */
  percent: boolean;
  /** The currency symbol written before or after the amount, "" for none. */
  currency: string;
  /** The thousands separator used in this cell, "" when the cell has none. */
  group: string;
}

export interface NumberReading extends NumberStyle {
  value: number;
}

/** Symbols read as currency: they stand before or after an amount, and are dropped. */
const CURRENCY_SYMBOLS = "$€£¥₹₩₽₺₪₫₴₦฿";
const CURRENCY = `[${CURRENCY_SYMBOLS}]`;
/** Thousands separators beside a decimal point: comma, space, no-break spaces, apostrophes. */
const GROUPS_WITH_POINT = ",  '’";
/** Thousands separators beside a decimal comma: point, space, no-break spaces, apostrophes. */
const GROUPS_WITH_COMMA = ".  '’";

function escapeClass(chars: string): string {
  return chars.replace(/[\\\]^-]/g, "\\$&");
}

function bodyPattern(decimal: "." | ","): RegExp {
  const d = decimal === "." ? "\\." : ",";
  const groups = escapeClass(decimal === "." ? GROUPS_WITH_POINT : GROUPS_WITH_COMMA);
  // 1: plain digits with an optional exponent; 2: grouped digits (the separator captured in 3).
  return new RegExp(`^(?:((?:\\d+${d}?\\d*|${d}\\d+)(?:[eE][+-]?\\d+)?)|(\\d{1,3}([${groups}])\\d{3}(?:\\3\\d{3})*(?:${d}\\d*)?))$`);
}

const BODY = { ".": bodyPattern("."), ",": bodyPattern(",") };
/** Plain numbers: sign, digits, one decimal mark, exponent; nothing else. */
const PLAIN_POINT = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;
const PLAIN_COMMA = /^[+-]?(?:\d+,?\d*|,\d+)(?:[eE][+-]?\d+)?$/;
const SIGN = "[+\\-\u2212]";
/** sign? currency? sign? body currency? percent? (spaces allowed between the parts). */
const SHAPE = new RegExp(`^(${SIGN})?\\s*(${CURRENCY})?\\s*(${SIGN})?\\s*([0-9.,  '’eE+\\-]+?)\\s*(${CURRENCY})?\\s*(%)?$`);

/**
 * Reads text as a number written with the given decimal mark, or undefined
 * when it is not one. Plain numbers ("12", "-0.5", "1e3") read with style
 * {percent: false, currency: "", group: ""}.
 */
export function readNumberText(text: string, decimal: "." | ","): NumberReading | undefined {
  const trimmed = text.trim();
  if (trimmed === "" || trimmed.length > 64) return undefined;
  // The common case first: a plain number, read without the full pattern.
  const plain = plainNumberValue(trimmed, decimal);
  if (!Number.isNaN(plain)) return Number.isFinite(plain) ? { value: plain, percent: false, currency: "", group: "" } : undefined;
  const shape = SHAPE.exec(trimmed);
  if (!shape) return undefined;
  const [, sign1, currencyBefore, sign2, body, currencyAfter, percent] = shape;
  if (sign1 && sign2) return undefined;
  if (currencyBefore && currencyAfter) return undefined;
  if (percent && (currencyBefore || currencyAfter)) return undefined;
  const parts = BODY[decimal].exec(body);
  if (!parts) return undefined;
  const group = parts[3] ?? "";
  let digits = parts[1] ?? parts[2];
  if (group !== "") digits = digits.split(group).join("");
  if (decimal === ",") digits = digits.replace(",", ".");
  // A percentage moves the decimal point in the text ("12.3e-2"), so 12.3% is exactly the double nearest 0.123.
  let value = percent ? (/e/i.test(digits) ? Number(digits) / 100 : Number(`${digits}e-2`)) : Number(digits);
  if (!Number.isFinite(value)) return undefined;
  const sign = sign1 ?? sign2;
  if (sign === "-" || sign === "\u2212") value = -value;
  return { value, percent: percent !== undefined, currency: currencyBefore ?? currencyAfter ?? "", group };
}

/**
 * The value of trimmed text that is a plain number ("12", "-0.5", "1e3"; at most 64
 * characters), ±Infinity when such text overflows, NaN when the text is no plain number:
 * readNumberText's common case without an object per cell, for columns of many rows.
 */
export function plainNumberValue(trimmed: string, decimal: "." | ","): number {
  if (trimmed.length > 64 || !(decimal === "." ? PLAIN_POINT : PLAIN_COMMA).test(trimmed)) return NaN;
  return Number(decimal === "." ? trimmed : trimmed.replace(",", "."));
}

/** A short description of a style for notices: "percent", "currency $", "thousands separator ','"; "" for plain numbers. */
export function describeStyle(style: NumberStyle): string {
  const parts: string[] = [];
  if (style.percent) parts.push("percent, 12.3% read as 0.123");
  if (style.currency !== "") parts.push(`currency ${style.currency}`);
  if (style.group !== "") parts.push(`thousands separator ${quoteSeparator(style.group)}`);
  return parts.join(", ");
}

function quoteSeparator(group: string): string {
  if (group === " ") return "space";
  if (group === "\u00a0" || group === "\u202f") return "no-break space";
  return `"${group}"`;
}
