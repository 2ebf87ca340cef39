/**
 * The double nearest to a decimal of 16 to 19 significant digits, the value Number() reads from
 * its text, without making the text: the digits held exactly as a double-double (an unevaluated
 * sum of two doubles, Dekker 1971), scaled by exact powers of ten in double-double arithmetic,
 * and rounded only when every value within the arithmetic's error bound rounds to the same
 * double. Otherwise NaN, and the caller reads the text: about once in 2^37 numbers, for
 * powers of ten beyond ±66, and for values from 2^53 up, which can lie exactly halfway between
 * two doubles (the bracket cannot tell which way an exact tie goes). Full-precision exports
 * (17 significant digits, the shortest text that gives back every double) take this road; the
 * usual short numbers take Clinger's fast path in plainNumberLines.ts.
 */

/**
 * A whole number of at most this many digits is below 2^53, so a double holds it exactly: the
 * numbers of Clinger's fast path (plainNumberLines.ts), and the head of a longer decimal here.
 */
export const EXACT_DIGITS = 15;
/** Digits after the head this road takes: the whole decimal then stays below 10^19 < 2^64. */
export const TAIL_DIGITS = 4;
/** The largest power of ten a double holds exactly (5^22 < 2^53). */
export const EXACT_POWER = 22;
/** 10^0 to 10^EXACT_POWER, each exact. */
export const POWERS_OF_TEN = Float64Array.from({ length: EXACT_POWER + 1 }, (_, e) => Number(`1e${e}`));
/** Powers of ten scaled by at most three times the largest exact power (10^22 each step). */
const LARGEST_POWER = 66;
/**
 * The double-double result is within about 2^-102 of the true value (relative, after three
 * scaling steps: each step's rounding errors are of order 2^-105, see scaleUp and scaleDown);
 * the check widens it to 2^-90, so that the bracket's own rounding cannot let the true value out.
 */
const BRACKET = 2 ** -90;
/** Dekker's splitting constant 2^27 + 1: a double into two halves of 26 bits (Dekker 1971). */
const SPLITTER = 134217729;

/** The double-double in progress: pair[HI] + pair[LO], |pair[LO]| at most half an ulp of pair[HI]. */
const pair = new Float64Array(2);
const HI = 0;
const LO = 1;

/**
 * (head · 10^tailDigits + tail) · 10^power, rounded to the nearest double as Number() rounds
 * its text; NaN where this road does not decide it. head < 10^15 and tail < 10^tailDigits are
 * whole numbers, tailDigits from 1 to TAIL_DIGITS.
 */
export function longDecimalValue(head: number, tail: number, tailDigits: number, power: number): number {
  if (power > LARGEST_POWER || power < -LARGEST_POWER) return NaN;
  // The whole decimal, exactly: head · 10^t is at most 106 bits, held exactly by the product's
  // two halves; its low half and the tail are whole numbers below 2^15, so their sum is exact.
  twoProduct(head, POWERS_OF_TEN[tailDigits]);
  twoSum(pair[HI], pair[LO] + tail);
  let rest = power;
  while (rest > 0) {
    const step = Math.min(rest, EXACT_POWER);
    scaleUp(POWERS_OF_TEN[step]);
    rest -= step;
  }
  while (rest < 0) {
    const step = Math.min(-rest, EXACT_POWER);
    scaleDown(POWERS_OF_TEN[step]);
    rest += step;
  }
  // Rounding to nearest is monotonic: when both ends of the bracket round to the same double,
  // so does the true value between them.
  const hi = pair[HI];
  const lo = pair[LO];
  const width = Math.abs(hi) * BRACKET;
  const below = hi + (lo - width);
  const above = hi + (lo + width);
  return below === above ? below : NaN;
}

/**
 * hi + lo ← (hi + lo) · p for an exact power of ten p: hi · p exactly by twoProduct, lo · p
 * rounded once (relative error 2^-53 of a term 2^-53 of the whole), their sum rounded once.
 */
function scaleUp(p: number): void {
  const low = pair[LO] * p;
  twoProduct(pair[HI], p);
  twoSum(pair[HI], pair[LO] + low);
}

/**
 * hi + lo ← (hi + lo) / p for an exact power of ten p: long division with one correction. The
 * quotient q = hi / p; the remainder hi − q·p exactly (q·p by twoProduct; its high half is
 * within a factor 2 of hi, so the first subtraction is exact, Sterbenz 1974), with lo added;
 * the remainder divided by p is the correction.
 */
function scaleDown(p: number): void {
  const dividendHigh = pair[HI];
  const dividendLow = pair[LO];
  const quotient = dividendHigh / p;
  twoProduct(quotient, p);
  const correction = (dividendHigh - pair[HI] - pair[LO] + dividendLow) / p;
  twoSum(quotient, correction);
}

/** hi + lo ← a · b exactly (Dekker's product, no fused multiply-add: Dekker 1971). */
function twoProduct(a: number, b: number): void {
  const product = a * b;
  let t = SPLITTER * a;
  const aHigh = t - (t - a);
  const aLow = a - aHigh;
  t = SPLITTER * b;
  const bHigh = t - (t - b);
  const bLow = b - bHigh;
  pair[LO] = aLow * bLow - (((product - aHigh * bHigh) - aLow * bHigh) - aHigh * bLow);
  pair[HI] = product;
}

/** hi + lo ← a + b exactly (Knuth's two-sum, The Art of Computer Programming vol. 2, §4.2.2). */
function twoSum(a: number, b: number): void {
  const sum = a + b;
  const bVirtual = sum - a;
  const aVirtual = sum - bVirtual;
  pair[LO] = (a - aVirtual) + (b - bVirtual);
  pair[HI] = sum;
}
