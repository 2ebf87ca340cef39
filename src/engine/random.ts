/**
 * The engine's one source of randomness. Every random step of a fit (subsamples, random
 * partitions, seeding, warm-start search directions) draws from one generator made from the
 * user's seed, so the same seed reproduces the whole fit bit for bit.
 *
 * Generator: xoshiro128** (Blackman & Vigna 2018, "Scrambled linear pseudorandom number
 * generators"), a 128-bit state of four 32-bit words, seeded through SplitMix32 (a 32-bit
 * variant of Steele, Lea & Flood 2014, "Fast splittable pseudorandom number generators") so
 * that nearby seeds give unrelated streams and the state is never all zero.
 */
export interface Random {
  /** Uniform on [0, 1), 53 random bits. */
  next(): number;
  /** Standard normal N(0, 1). */
  normal(): number;
  /** Uniform integer in 0 .. below − 1; below must be a positive integer. */
  integer(below: number): number;
}

/** A seeded generator; seed is any finite number (its integer part and sign are used). */
export function createRandom(seed: number): Random {
  return new Xoshiro128(seed);
}

/** Fisher–Yates shuffle in place (Durstenfeld 1964, Algorithm 235), driven by `random`. */
export function shuffleInPlace<T extends { length: number; [index: number]: unknown }>(
  values: T,
  random: Random,
): T {
  for (let i = values.length - 1; i > 0; i--) {
    const j = random.integer(i + 1);
    const held = values[i];
    values[i] = values[j];
    values[j] = held;
  }
  return values;
}

/** A random sample of `count` distinct indices from 0 .. total − 1, in increasing order. */
export function sampleIndices(total: number, count: number, random: Random): Int32Array {
  const take = Math.min(count, total);
  // Selection sampling (Knuth, TAOCP vol. 2, Algorithm S): one pass, output already sorted,
  // which keeps a subsample's rows in their original order.
  const chosen = new Int32Array(take);
  let filled = 0;
  for (let i = 0; i < total && filled < take; i++) {
    if ((total - i) * random.next() < take - filled) chosen[filled++] = i;
  }
  return chosen;
}

class Xoshiro128 implements Random {
  private s0: number;
  private s1: number;
  private s2: number;
  private s3: number;
  /** Box–Muller gives normals in pairs; the second one waits here. */
  private spareNormal = 0;
  private hasSpare = false;

  constructor(seed: number) {
    if (!Number.isFinite(seed)) seed = 0;
    // Fold the integer part of the seed (sign included, up to 2^53) into 32 bits.
    const whole = Math.trunc(seed);
    const low = whole >>> 0;
    const high = Math.floor(Math.abs(whole) / 4294967296) >>> 0;
    let state = (low ^ Math.imul(high, 0x9e3779b9) ^ (whole < 0 ? 0x5bd1e995 : 0)) >>> 0;
    const splitMix32 = (): number => {
      state = (state + 0x9e3779b9) >>> 0;
      let z = state;
      z = Math.imul(z ^ (z >>> 16), 0x85ebca6b);
      z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35);
      return (z ^ (z >>> 16)) >>> 0;
    };
    this.s0 = splitMix32();
    this.s1 = splitMix32();
    this.s2 = splitMix32();
    this.s3 = splitMix32();
    if ((this.s0 | this.s1 | this.s2 | this.s3) === 0) this.s0 = 1;
  }

  /** One 32-bit output of xoshiro128** (reference code by Blackman & Vigna, public domain). */
  private nextUint32(): number {
    const result = Math.imul(rotateLeft(Math.imul(this.s1, 5), 7), 9) >>> 0;
    const t = this.s1 << 9;
    this.s2 ^= this.s0;
    this.s3 ^= this.s1;
    this.s1 ^= this.s2;
    this.s0 ^= this.s3;
    this.s2 ^= t;
    this.s3 = rotateLeft(this.s3, 11);
    return result;
  }

  next(): number {
    // 53 bits: 27 high bits of one draw and 26 of the next, as in the usual double recipe.
    const a = this.nextUint32() >>> 5;
    const b = this.nextUint32() >>> 6;
    return (a * 67108864 + b) / 9007199254740992;
  }

  normal(): number {
    if (this.hasSpare) {
      this.hasSpare = false;
      return this.spareNormal;
    }
    // Box–Muller transform (Box & Muller 1958); 1 − u keeps the logarithm finite.
    const u = 1 - this.next();
    const v = this.next();
    const radius = Math.sqrt(-2 * Math.log(u));
    const angle = 2 * Math.PI * v;
    this.spareNormal = radius * Math.sin(angle);
    this.hasSpare = true;
    return radius * Math.cos(angle);
  }

  integer(below: number): number {
    if (!(below >= 1) || !Number.isInteger(below)) {
      throw new RangeError(`integer(below) needs a positive integer, received ${below}`);
    }
    // Multiplying a 53-bit uniform keeps the bias below 2^-20 for any below up to 2^32.
    return Math.floor(this.next() * below);
  }
}

function rotateLeft(value: number, bits: number): number {
  return (value << bits) | (value >>> (32 - bits));
}
