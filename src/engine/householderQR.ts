import { SkeinError } from "./errors";
import { euclideanNorm } from "./scaledNorm";

/**
 * Householder QR of a tall n x q matrix (Golub & Van Loan, Matrix Computations,
 * 4th ed., algorithm 5.2.1), with every column scaled to unit 2-norm first.
 *
 * Memory layout: the factor works column by column, so the matrix is copied into
 * a column-major Float64Array (column j occupies [j*n, (j+1)*n)): each reflector
 * then sweeps contiguous memory. The Householder vectors overwrite the part below
 * the diagonal, R is kept apart, as in LINPACK's dqrdc.
 *
 * Column scaling (equilibration) makes the rank test independent of the units of
 * each predictor: a design with one column in dollars and another in millions of
 * dollars is not "nearly singular" just because of the units.
 */
export class HouseholderQR {
  readonly rows: number;
  readonly columns: number;
  /** Column-major working copy: Householder vectors below the diagonal. */
  private readonly factor: Float64Array;
  /** Upper triangle R (q x q, row-major), in scaled units. */
  readonly r: Float64Array;
  /** Scale applied to each column (its 2-norm); coefficients are divided by it. */
  readonly columnScale: Float64Array;
  /** Householder scalars beta_j of H_j = I - beta_j v_j v_jᵀ. */
  private readonly beta: Float64Array;
  /** Numerical rank found by the diagonal test. */
  readonly rank: number;
  /** Index of the first column that failed the rank test, or -1. */
  readonly firstDependentColumn: number;

  /**
   * Relative size below which a diagonal entry of R (in unit-norm column units)
   * counts as zero. 1e-10 sits well above double rounding (about 1e-16 times the
   * growth of a few hundred rows) and well below the conditioning of any design
   * a user would want to fit; NIST's Longley design, a standard hard case, has
   * scaled diagonal entries above 1e-6.
   */
  static readonly RANK_TOLERANCE = 1e-10;

  /**
   * @param matrix row-major n x q (row i occupies [i*q, (i+1)*q))
   * @param rowWeights optional square roots of weights: row i is multiplied by rowWeights[i]
   */
  constructor(matrix: Float64Array, n: number, q: number, rowWeights?: Float64Array) {
    if (n < q) {
      throw new SkeinError("bad-input", `Least squares needs at least as many rows as coefficients: ${n} rows for ${q} coefficients. Add rows or remove predictors.`);
    }
    this.rows = n;
    this.columns = q;
    const a = new Float64Array(n * q);
    for (let i = 0; i < n; i++) {
      const w = rowWeights ? rowWeights[i] : 1;
      const rowOffset = i * q;
      for (let j = 0; j < q; j++) a[j * n + i] = matrix[rowOffset + j] * w;
    }
    const columnScale = new Float64Array(q);
    for (let j = 0; j < q; j++) {
      const start = j * n;
      const norm = euclideanNorm(a, n, 1, start);
      columnScale[j] = norm > 0 ? norm : 1;
      const inv = 1 / columnScale[j];
      for (let i = 0; i < n; i++) a[start + i] *= inv;
    }

    const r = new Float64Array(q * q);
    const beta = new Float64Array(q);
    let rank = q;
    let firstDependent = -1;
    for (let j = 0; j < q; j++) {
      const start = j * n;
      // Norm of the part of column j at and below the diagonal.
      const sigma = euclideanNorm(a, n - j, 1, start + j);
      const alpha = a[start + j] >= 0 ? -sigma : sigma;
      if (sigma <= HouseholderQR.RANK_TOLERANCE) {
        // Column j lies (numerically) in the span of the earlier columns.
        if (firstDependent < 0) firstDependent = j;
        rank--;
        beta[j] = 0;
        r[j * q + j] = 0;
        for (let k = j + 1; k < q; k++) r[j * q + k] = a[k * n + j];
        continue;
      }
      // v = x - alpha e1, stored in place; beta = 1 / (sigma (sigma + |x1|)).
      a[start + j] -= alpha;
      const vTv = 2 * sigma * (sigma + Math.abs(a[start + j] + alpha));
      beta[j] = 2 / vTv;
      r[j * q + j] = alpha;
      for (let k = j + 1; k < q; k++) {
        const other = k * n;
        let dot = 0;
        for (let i = j; i < n; i++) dot += a[start + i] * a[other + i];
        const s = beta[j] * dot;
        for (let i = j; i < n; i++) a[other + i] -= s * a[start + i];
        r[j * q + k] = a[other + j];
      }
    }
    this.factor = a;
    this.r = r;
    this.columnScale = columnScale;
    this.beta = beta;
    this.rank = rank;
    this.firstDependentColumn = firstDependent;
  }

  get isFullRank(): boolean {
    return this.rank === this.columns;
  }

  /** Overwrites b (length n) with Qᵀb. */
  applyQTranspose(b: Float64Array): void {
    const { rows: n, columns: q, factor: a, beta } = this;
    for (let j = 0; j < q; j++) {
      if (beta[j] === 0) continue;
      const start = j * n;
      let dot = 0;
      for (let i = j; i < n; i++) dot += a[start + i] * b[i];
      const s = beta[j] * dot;
      for (let i = j; i < n; i++) b[i] -= s * a[start + i];
    }
  }

  /**
   * Least-squares solution of min ||diag(w)(X c - y)||, in the original (unscaled) units.
   * @param y length n, NOT yet multiplied by the row weights
   */
  solve(y: Float64Array, rowWeights?: Float64Array): Float64Array {
    if (!this.isFullRank) {
      throw new SkeinError("numeric", "Predictors repeat information: one predictor is a combination of the others, so their coefficients cannot be told apart. Remove one of them.");
    }
    const { rows: n, columns: q, r, columnScale } = this;
    const b = new Float64Array(n);
    for (let i = 0; i < n; i++) b[i] = rowWeights ? y[i] * rowWeights[i] : y[i];
    this.applyQTranspose(b);
    const c = new Float64Array(q);
    for (let j = q - 1; j >= 0; j--) {
      let s = b[j];
      for (let k = j + 1; k < q; k++) s -= r[j * q + k] * c[k];
      c[j] = s / r[j * q + j];
    }
    for (let j = 0; j < q; j++) c[j] /= columnScale[j];
    return c;
  }

  /**
   * Diagonal of (XᵀWX)⁻¹ in original units: (RᵀR)⁻¹ = R⁻¹R⁻ᵀ, so entry j is the
   * squared norm of row j of R⁻¹, divided by the squared column scale.
   */
  inverseGramDiagonal(): Float64Array {
    const { columns: q, r, columnScale } = this;
    // R⁻¹ is upper triangular; compute it column by column by back substitution.
    const inv = new Float64Array(q * q);
    for (let col = 0; col < q; col++) {
      for (let j = col; j >= 0; j--) {
        let s = j === col ? 1 : 0;
        for (let k = j + 1; k <= col; k++) s -= r[j * q + k] * inv[k * q + col];
        inv[j * q + col] = s / r[j * q + j];
      }
    }
    const diagonal = new Float64Array(q);
    for (let j = 0; j < q; j++) {
      let s = 0;
      for (let k = j; k < q; k++) s += inv[j * q + k] * inv[j * q + k];
      diagonal[j] = s / (columnScale[j] * columnScale[j]);
    }
    return diagonal;
  }
}

