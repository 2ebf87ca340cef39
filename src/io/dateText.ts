/**
 * Dates written as text ("2024-03-01", "01/03/2024", "1 Mar 2024"), read as
 * Excel serial day numbers so that a date column of a CSV file holds what the
 * same column of a workbook holds. Host-free.
 */

/** Days from the 1900 date system's day 0 to 1970-01-01 (Excel serial of the Unix epoch). */
export const SERIAL_OF_UNIX_EPOCH = 25569;
export const MS_PER_DAY = 86_400_000;

/** The Excel serial day number of a JavaScript Date (its UTC reading), in the 1900 date system. */
export function serialOfDate(date: Date): number {
  return date.getTime() / MS_PER_DAY + SERIAL_OF_UNIX_EPOCH;
}

/** A date written as text, split into its parts before the day/month order is known. */
export type DateParts =
  /** Year first, or a month written as a word: the order is known. */
  | { order: "known"; year: number; month: number; day: number; dayFraction: number }
  /** "a/b/year": day/month or month/day, decided over the whole column. */
  | { order: "open"; a: number; b: number; year: number; dayFraction: number };

const MONTHS = ["jan", "feb", "mar", "apr", "may", "jun", "jul", "aug", "sep", "oct", "nov", "dec"];
const TIME = String.raw`(?:[ T](\d{1,2}):(\d{2})(?::(\d{2})(?:\.\d+)?)?(?:\s*([AaPp][Mm]))?(?:Z|[+-]\d{2}:?\d{2})?)?`;
const YEAR_FIRST = new RegExp(String.raw`^(\d{4})([-/.])(\d{1,2})\2(\d{1,2})${TIME}$`);
const YEAR_LAST = new RegExp(String.raw`^(\d{1,2})([-/.])(\d{1,2})\2(\d{2}|\d{4})${TIME}$`);
const DAY_MONTH_NAME = new RegExp(String.raw`^(\d{1,2})[ \-]([A-Za-z]{3,9})\.?[ \-,]\s*(\d{2}|\d{4})${TIME}$`);
const MONTH_NAME_DAY = new RegExp(String.raw`^([A-Za-z]{3,9})\.? (\d{1,2}),? (\d{4})${TIME}$`);

function monthOfName(name: string): number {
  const index = MONTHS.indexOf(name.slice(0, 3).toLowerCase());
  if (index < 0) return 0;
  // The whole word must be a month's name or its start ("Sept", "March").
  const full = ["january", "february", "march", "april", "may", "june", "july", "august", "september", "october", "november", "december"][index];
  return full.startsWith(name.toLowerCase()) || name.toLowerCase() === "sept" ? index + 1 : 0;
}

/** Two-digit years as Excel reads them: 00-29 are 2000-2029, 30-99 are 1930-1999. */
function fullYear(text: string): number {
  const year = Number(text);
  if (text.length === 4) return year;
  return year < 30 ? 2000 + year : 1900 + year;
}

function fractionOfDay(hours?: string, minutes?: string, seconds?: string, meridiem?: string): number {
  if (hours === undefined) return 0;
  let h = Number(hours);
  if (meridiem) {
    if (h < 1 || h > 12) return NaN;
    h = (h % 12) + (meridiem.toLowerCase() === "pm" ? 12 : 0);
  }
  const m = Number(minutes);
  const s = seconds === undefined ? 0 : Number(seconds);
  if (h > 23 || m > 59 || s > 59) return NaN;
  return (h * 3600 + m * 60 + s) / 86400;
}

/** The parts of a date written as text, or undefined when the text is no date. */
export function readDateText(text: string): DateParts | undefined {
  const trimmed = text.trim();
  if (trimmed.length < 6 || trimmed.length > 40) return undefined;
  let match = YEAR_FIRST.exec(trimmed);
  if (match) {
    const dayFraction = fractionOfDay(match[5], match[6], match[7], match[8]);
    return known(Number(match[1]), Number(match[3]), Number(match[4]), dayFraction);
  }
  match = YEAR_LAST.exec(trimmed);
  if (match) {
    const dayFraction = fractionOfDay(match[5], match[6], match[7], match[8]);
    const a = Number(match[1]);
    const b = Number(match[3]);
    if (a < 1 || b < 1 || a > 31 || b > 31 || (a > 12 && b > 12) || Number.isNaN(dayFraction)) return undefined;
    return { order: "open", a, b, year: fullYear(match[4]), dayFraction };
  }
  match = DAY_MONTH_NAME.exec(trimmed);
  if (match) return known(fullYear(match[3]), monthOfName(match[2]), Number(match[1]), fractionOfDay(match[4], match[5], match[6], match[7]));
  match = MONTH_NAME_DAY.exec(trimmed);
  if (match) return known(Number(match[3]), monthOfName(match[1]), Number(match[2]), fractionOfDay(match[4], match[5], match[6], match[7]));
  return undefined;
}

function known(year: number, month: number, day: number, dayFraction: number): DateParts | undefined {
  if (!isCalendarDate(year, month, day) || Number.isNaN(dayFraction)) return undefined;
  return { order: "known", year, month, day, dayFraction };
}

function isCalendarDate(year: number, month: number, day: number): boolean {
  if (month < 1 || month > 12 || day < 1 || year < 1900 || year > 9999) return false;
  const date = new Date(Date.UTC(year, month - 1, day));
  return date.getUTCMonth() === month - 1 && date.getUTCDate() === day;
}

/** The serial day number of a date, or undefined when the parts name no calendar day. */
export function serialOfParts(year: number, month: number, day: number, dayFraction: number): number | undefined {
  if (!isCalendarDate(year, month, day)) return undefined;
  return Date.UTC(year, month - 1, day) / MS_PER_DAY + SERIAL_OF_UNIX_EPOCH + dayFraction;
}
