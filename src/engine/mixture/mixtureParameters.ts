/**
 * The parameters EM works on, flat for the hot loops. Component k's coefficients occupy
 * coefficients[k·q, (k+1)·q); in the joint model its x mean occupies xMeans[k·p, (k+1)·p) and
 * the lower Cholesky factor of its x covariance xCholesky[k·p², (k+1)·p²).
 */
export interface MixtureParameters {
  k: number;
  q: number;
  p: number;
  weights: Float64Array;
  coefficients: Float64Array;
  variances: Float64Array;
  /** Joint model only (null in the plain model). */
  xMeans: Float64Array | null;
  xCovariances: Float64Array | null;
  xCholesky: Float64Array | null;
  /** ln det of each x covariance (joint model only). */
  xLogDeterminants: Float64Array | null;
}

export function createParameters(k: number, q: number, p: number, joint: boolean): MixtureParameters {
  return {
    k,
    q,
    p,
    weights: new Float64Array(k).fill(1 / k),
    coefficients: new Float64Array(k * q),
    variances: new Float64Array(k).fill(1),
    xMeans: joint ? new Float64Array(k * p) : null,
    xCovariances: joint ? new Float64Array(k * p * p) : null,
    xCholesky: joint ? new Float64Array(k * p * p) : null,
    xLogDeterminants: joint ? new Float64Array(k) : null,
  };
}

export function copyParameters(from: MixtureParameters): MixtureParameters {
  return {
    k: from.k,
    q: from.q,
    p: from.p,
    weights: from.weights.slice(),
    coefficients: from.coefficients.slice(),
    variances: from.variances.slice(),
    xMeans: from.xMeans ? from.xMeans.slice() : null,
    xCovariances: from.xCovariances ? from.xCovariances.slice() : null,
    xCholesky: from.xCholesky ? from.xCholesky.slice() : null,
    xLogDeterminants: from.xLogDeterminants ? from.xLogDeterminants.slice() : null,
  };
}

/** Parameters with components reordered: new component j is old component order[j]. */
export function permuteParameters(from: MixtureParameters, order: ArrayLike<number>): MixtureParameters {
  const to = copyParameters(from);
  const { q, p } = from;
  for (let j = 0; j < from.k; j++) {
    const old = order[j];
    to.weights[j] = from.weights[old];
    to.variances[j] = from.variances[old];
    to.coefficients.set(from.coefficients.subarray(old * q, old * q + q), j * q);
    if (from.xMeans && to.xMeans) to.xMeans.set(from.xMeans.subarray(old * p, old * p + p), j * p);
    if (from.xCovariances && to.xCovariances) to.xCovariances.set(from.xCovariances.subarray(old * p * p, (old + 1) * p * p), j * p * p);
    if (from.xCholesky && to.xCholesky) to.xCholesky.set(from.xCholesky.subarray(old * p * p, (old + 1) * p * p), j * p * p);
    if (from.xLogDeterminants && to.xLogDeterminants) to.xLogDeterminants[j] = from.xLogDeterminants[old];
  }
  return to;
}
