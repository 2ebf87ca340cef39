/**
 * The one weighted-Gram kernel: Σ_i w_i x_i x_iᵀ accumulated a block of rows at a time from
 * column-major copies of the block (only the rows that carry weight), so every entry is a dot
 * product over contiguous memory in registers rather than a rank-one update of a q x q array
 * in memory (about four times faster). Used by the M-step (mixture/mStep.ts) and the observed
 * information (observedInformation.ts).
 */

/**
 * Doubles per block buffer (16384 x 8 bytes = 128 KB): two q x rows buffers fit in about
 * 256 KB, a typical L2 cache.
 */
export const BLOCK_DOUBLES = 16384;

/** Rows per block for q columns. */
export function blockRowsFor(q: number): number {
  return Math.max(32, Math.floor(BLOCK_DOUBLES / Math.max(q, 1)));
}

/**
 * Adds the upper triangle of Wᵀ X for one block (W = weighted columns, X = plain columns, both
 * q x m column-major with stride `stride`) into gram[offset + j·q + l], l ≥ j. Four weighted
 * columns meet two plain columns at a time (a 4 x 2 register block: six loads feed eight
 * multiply-adds, against two loads per multiply-add for one entry at a time); each entry is
 * still one running sum over the rows in order, so the sums do not depend on the blocking.
 */
export function accumulateGramBlock(weighted: Float64Array, columns: Float64Array, stride: number, m: number, q: number, gram: Float64Array, offset: number): void {
  let j = 0;
  for (; j + 3 < q; j += 4) {
    const w0 = j * stride;
    const w1 = w0 + stride;
    const w2 = w1 + stride;
    const w3 = w2 + stride;
    const row = offset + j * q;
    let l = j;
    for (; l + 1 < q; l += 2) {
      const x0 = l * stride;
      const x1 = x0 + stride;
      let s00 = 0;
      let s10 = 0;
      let s20 = 0;
      let s30 = 0;
      let s01 = 0;
      let s11 = 0;
      let s21 = 0;
      let s31 = 0;
      for (let i = 0; i < m; i++) {
        const a = columns[x0 + i];
        const b = columns[x1 + i];
        const v0 = weighted[w0 + i];
        const v1 = weighted[w1 + i];
        const v2 = weighted[w2 + i];
        const v3 = weighted[w3 + i];
        s00 += v0 * a;
        s10 += v1 * a;
        s20 += v2 * a;
        s30 += v3 * a;
        s01 += v0 * b;
        s11 += v1 * b;
        s21 += v2 * b;
        s31 += v3 * b;
      }
      // Entries left of the diagonal (column < j + t) are the lower triangle: computed, not stored.
      gram[row + l] += s00;
      gram[row + l + 1] += s01;
      if (l >= j + 1) gram[row + q + l] += s10;
      if (l + 1 >= j + 1) gram[row + q + l + 1] += s11;
      if (l >= j + 2) gram[row + 2 * q + l] += s20;
      if (l + 1 >= j + 2) gram[row + 2 * q + l + 1] += s21;
      if (l >= j + 3) gram[row + 3 * q + l] += s30;
      if (l + 1 >= j + 3) gram[row + 3 * q + l + 1] += s31;
    }
    if (l < q) {
      // The last plain column when an odd number are left: a 4 x 1 block.
      const x = l * stride;
      let s0 = 0;
      let s1 = 0;
      let s2 = 0;
      let s3 = 0;
      for (let i = 0; i < m; i++) {
        const value = columns[x + i];
        s0 += weighted[w0 + i] * value;
        s1 += weighted[w1 + i] * value;
        s2 += weighted[w2 + i] * value;
        s3 += weighted[w3 + i] * value;
      }
      gram[row + l] += s0;
      if (l >= j + 1) gram[row + q + l] += s1;
      if (l >= j + 2) gram[row + 2 * q + l] += s2;
      if (l >= j + 3) gram[row + 3 * q + l] += s3;
    }
  }
  for (; j < q; j++) {
    for (let l = j; l < q; l++) gram[offset + j * q + l] += dot(weighted, j * stride, columns, l * stride, m);
  }
}

/** Σ a[aOffset + i] b[bOffset + i] for i < m, four partial sums to shorten the dependency chain. */
export function dot(a: Float64Array, aOffset: number, b: Float64Array, bOffset: number, m: number): number {
  let s0 = 0;
  let s1 = 0;
  let s2 = 0;
  let s3 = 0;
  let i = 0;
  for (; i + 3 < m; i += 4) {
    s0 += a[aOffset + i] * b[bOffset + i];
    s1 += a[aOffset + i + 1] * b[bOffset + i + 1];
    s2 += a[aOffset + i + 2] * b[bOffset + i + 2];
    s3 += a[aOffset + i + 3] * b[bOffset + i + 3];
  }
  for (; i < m; i++) s0 += a[aOffset + i] * b[bOffset + i];
  return s0 + s1 + (s2 + s3);
}
