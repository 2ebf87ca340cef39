/**
 * The one scaled-norm kernel: the largest magnitude of a (strided) column, and its 2-norm
 * without overflow or underflow, summing squares in units of that largest magnitude (the
 * two-pass scaled norm; Blue 1978 discusses it and the one-pass variants). A running Math.hypot
 * is as safe at about twenty times the cost.
 *
 * Both read n values, values[offset], values[offset + stride], ...; a NaN anywhere gives NaN.
 */
export function largestMagnitude(values: Float64Array, n: number, stride = 1, offset = 0): number {
  let largest = 0;
  for (let i = 0, at = offset; i < n; i++, at += stride) {
    const magnitude = Math.abs(values[at]);
    if (magnitude > largest) largest = magnitude;
    else if (magnitude !== magnitude) return NaN;
  }
  return largest;
}

/** The 2-norm; `largest` is the column's largestMagnitude when the caller already has it (one pass fewer). */
export function euclideanNorm(values: Float64Array, n: number, stride = 1, offset = 0, largest = largestMagnitude(values, n, stride, offset)): number {
  if (!(largest > 0) || !Number.isFinite(largest)) return largest;
  const inverse = 1 / largest;
  let sum = 0;
  for (let i = 0, at = offset; i < n; i++, at += stride) {
    const ratio = values[at] * inverse;
    sum += ratio * ratio;
  }
  return largest * Math.sqrt(sum);
}
