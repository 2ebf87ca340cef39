/**
 * Eigenvalues and eigenvectors of a small dense symmetric matrix on flat arrays: Householder
 * reduction to tridiagonal form and the implicit QL iteration with accumulated transforms, the
 * EISPACK routines tred2 and tql2 (Smith et al., Matrix Eigensystem Routines: EISPACK Guide,
 * 1976; Bowdler, Martin, Reinsch & Wilkinson 1968) in their JAMA form, which is also the form
 * the general-purpose library ml-matrix uses. The operations and their order are that form's,
 * so the results are the same doubles (test/symmetricEigen.test.ts checks them against
 * ml-matrix to the bit); only the storage differs: one Float64Array instead of calls to a
 * matrix object's get and set, which a process runs several times faster before its code is
 * optimised (the warm start's one decomposition a fit runs in a fresh process).
 */

export interface SymmetricEigen {
  /** The eigenvalues in ascending order. */
  values: Float64Array;
  /** Row t (vectors[t·n .. t·n + n)) is the unit eigenvector of values[t]. */
  vectors: Float64Array;
}

/**
 * The eigen-decomposition of the symmetric n x n matrix `a` (row-major; only its exact
 * symmetry is assumed, not checked). `a` is left as it was.
 */
export function symmetricEigen(a: Float64Array, n: number): SymmetricEigen {
  // `v` holds the transforms with rows and columns exchanged (v[c·n + r] is entry (r, c) of the
  // JAMA form's V), so that the hot loops run along rows; the eigenvectors end as its rows.
  const v = new Float64Array(n * n);
  for (let r = 0; r < n; r++) for (let c = 0; c < n; c++) v[c * n + r] = a[r * n + c];
  const d = new Float64Array(n);
  const e = new Float64Array(n);
  if (n === 0) return { values: d, vectors: v };
  tridiagonalise(n, e, d, v);
  accumulateTransforms(n, e, d, v);
  diagonalise(n, e, d, v);
  sortAscending(n, d, v);
  return { values: d, vectors: v };
}

/** tred2's Householder reduction: d and e end as the tridiagonal matrix's diagonal and subdiagonal (scaled), v as the reflections. */
function tridiagonalise(n: number, e: Float64Array, d: Float64Array, v: Float64Array): void {
  for (let j = 0; j < n; j++) d[j] = v[j * n + n - 1];
  for (let i = n - 1; i > 0; i--) {
    let scale = 0;
    let h = 0;
    for (let k = 0; k < i; k++) scale = scale + Math.abs(d[k]);
    if (scale === 0) {
      e[i] = d[i - 1];
      for (let j = 0; j < i; j++) {
        d[j] = v[j * n + i - 1];
        v[j * n + i] = 0;
        v[i * n + j] = 0;
      }
    } else {
      for (let k = 0; k < i; k++) {
        d[k] /= scale;
        h += d[k] * d[k];
      }
      let f = d[i - 1];
      let g = Math.sqrt(h);
      if (f > 0) g = -g;
      e[i] = scale * g;
      h = h - f * g;
      d[i - 1] = f - g;
      for (let j = 0; j < i; j++) e[j] = 0;
      for (let j = 0; j < i; j++) {
        f = d[j];
        v[i * n + j] = f;
        const row = j * n;
        g = e[j] + v[row + j] * f;
        for (let k = j + 1; k <= i - 1; k++) {
          g += v[row + k] * d[k];
          e[k] += v[row + k] * f;
        }
        e[j] = g;
      }
      f = 0;
      for (let j = 0; j < i; j++) {
        e[j] /= h;
        f += e[j] * d[j];
      }
      const hh = f / (h + h);
      for (let j = 0; j < i; j++) e[j] -= hh * d[j];
      for (let j = 0; j < i; j++) {
        f = d[j];
        g = e[j];
        const row = j * n;
        for (let k = j; k <= i - 1; k++) v[row + k] = v[row + k] - (f * e[k] + g * d[k]);
        d[j] = v[row + i - 1];
        v[row + i] = 0;
      }
    }
    d[i] = h;
  }
}

/** tred2's second half: the reflections multiplied out into the orthogonal transform, d the tridiagonal's diagonal. */
function accumulateTransforms(n: number, e: Float64Array, d: Float64Array, v: Float64Array): void {
  for (let i = 0; i < n - 1; i++) {
    v[i * n + n - 1] = v[i * n + i];
    v[i * n + i] = 1;
    const h = d[i + 1];
    if (h !== 0) {
      const next = (i + 1) * n;
      for (let k = 0; k <= i; k++) d[k] = v[next + k] / h;
      for (let j = 0; j <= i; j++) {
        const row = j * n;
        let g = 0;
        for (let k = 0; k <= i; k++) g += v[next + k] * v[row + k];
        for (let k = 0; k <= i; k++) v[row + k] = v[row + k] - g * d[k];
      }
    }
    for (let k = 0; k <= i; k++) v[(i + 1) * n + k] = 0;
  }
  for (let j = 0; j < n; j++) {
    d[j] = v[j * n + n - 1];
    v[j * n + n - 1] = 0;
  }
  v[(n - 1) * n + n - 1] = 1;
  e[0] = 0;
}

/**
 * tql2's implicit QL iteration with Wilkinson-type shifts: d ends as the eigenvalues, v's rows
 * as the eigenvectors. An off-diagonal entry counts as zero below machine epsilon times the
 * largest |d| + |e| seen so far.
 */
function diagonalise(n: number, e: Float64Array, d: Float64Array, v: Float64Array): void {
  for (let i = 1; i < n; i++) e[i - 1] = e[i];
  e[n - 1] = 0;
  let f = 0;
  let tst1 = 0;
  const eps = Number.EPSILON;
  for (let l = 0; l < n; l++) {
    tst1 = Math.max(tst1, Math.abs(d[l]) + Math.abs(e[l]));
    let m = l;
    while (m < n) {
      if (Math.abs(e[m]) <= eps * tst1) break;
      m++;
    }
    if (m > l) {
      do {
        let g = d[l];
        let p = (d[l + 1] - g) / (2 * e[l]);
        let r = hypotenuse(p, 1);
        if (p < 0) r = -r;
        d[l] = e[l] / (p + r);
        d[l + 1] = e[l] * (p + r);
        const dl1 = d[l + 1];
        let h = g - d[l];
        for (let i = l + 2; i < n; i++) d[i] -= h;
        f = f + h;
        p = d[m];
        let c = 1;
        let c2 = c;
        let c3 = c;
        const el1 = e[l + 1];
        let s = 0;
        let s2 = 0;
        for (let i = m - 1; i >= l; i--) {
          c3 = c2;
          c2 = c;
          s2 = s;
          g = c * e[i];
          h = c * p;
          r = hypotenuse(p, e[i]);
          e[i + 1] = s * r;
          s = e[i] / r;
          c = p / r;
          p = c * d[i] - s * g;
          d[i + 1] = h + s * (c * g + s * d[i]);
          rotateRows(v, n, i, c, s);
        }
        p = (-s * s2 * c3 * el1 * e[l]) / dl1;
        e[l] = s * p;
        d[l] = c * p;
      } while (Math.abs(e[l]) > eps * tst1);
    }
    d[l] = d[l] + f;
    e[l] = 0;
  }
}

/** The plane rotation of rows i and i + 1 of v by (c, s), as tql2 applies it. */
function rotateRows(v: Float64Array, n: number, i: number, c: number, s: number): void {
  const upper = i * n;
  const lower = upper + n;
  for (let k = 0; k < n; k++) {
    const h = v[lower + k];
    v[lower + k] = s * v[upper + k] + c * h;
    v[upper + k] = c * v[upper + k] - s * h;
  }
}

/** tql2's selection sort: eigenvalues ascending, their vectors (rows of v) exchanged with them. */
function sortAscending(n: number, d: Float64Array, v: Float64Array): void {
  for (let i = 0; i < n - 1; i++) {
    let k = i;
    let p = d[i];
    for (let j = i + 1; j < n; j++) {
      if (d[j] < p) {
        k = j;
        p = d[j];
      }
    }
    if (k !== i) {
      d[k] = d[i];
      d[i] = p;
      for (let j = 0; j < n; j++) {
        const t = v[i * n + j];
        v[i * n + j] = v[k * n + j];
        v[k * n + j] = t;
      }
    }
  }
}

/** √(a² + b²) without overflow or needless underflow, as JAMA computes it. */
function hypotenuse(a: number, b: number): number {
  if (Math.abs(a) > Math.abs(b)) {
    const r = b / a;
    return Math.abs(a) * Math.sqrt(1 + r * r);
  }
  if (b !== 0) {
    const r = a / b;
    return Math.abs(b) * Math.sqrt(1 + r * r);
  }
  return 0;
}
