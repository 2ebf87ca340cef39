import { referenceSpread } from "./referenceVariance";
import type { MixtureFit, RegressionData } from "./mixtureTypes";

/**
 * Stray rows: rows that no component explains. The rule, one for every host:
 *
 *   row i is stray when, under every component k, its standardised residual
 *   |y_i − x_iᵀβ_k| / σ_k exceeds z_n = Φ⁻¹(1 − α / (2n)), with α = 0.05.
 *
 * z_n is the Bonferroni bound of the regression outlier test (Weisberg 2005, Applied Linear
 * Regression, 3rd ed., section 9.1; there with studentised residuals, here with r / σ_k,
 * which is close to it when rows are many per coefficient): if every row truly came from
 * some component, the chance that any of the n rows lies that far from its own component is
 * at most α. The bound grows slowly with n (1.96 for one row, 3.76 for 300, 4.56 for 10 000),
 * so large sheets do not flag ordinary tail rows.
 */
export const STRAY_ROWS_LEVEL = 0.05;

export interface StrayRow {
  /** 0-based index among the rows the fit used. */
  row: number;
  /** The smallest |standardised residual| over the components (noise SDs to the nearest component). */
  distance: number;
  /** 0-based component that comes nearest. */
  nearest: number;
}

export interface StrayRowsReport {
  /** The bound z_n in noise SDs. */
  bound: number;
  rows: StrayRow[];
  /** The rule in words, for hosts to show. */
  rule: string;
}

/** The rule as a sentence, with its bound for n rows. */
export function strayRowsRule(n: number): string {
  return `a row is stray when it lies more than ${strayBound(n).toFixed(2)} noise SDs from every component, the Bonferroni bound for ${n} rows at level ${STRAY_ROWS_LEVEL}`;
}

/** z_n = Φ⁻¹(1 − α / (2n)). */
export function strayBound(n: number, level = STRAY_ROWS_LEVEL): number {
  return upperNormalQuantile(level / (2 * Math.max(n, 1)));
}

/**
 * The stray rows of a fit on its own data. Standardised residuals are formed as y/σ minus
 * each term over σ, so that values near the largest doubles do not overflow in between.
 */
export function findStrayRows(data: RegressionData, fit: MixtureFit): StrayRowsReport {
  const { n, p, x, y } = data;
  const bound = strayBound(n);
  // Noise SDs at rounding level (an exact fit) are measured against the rounding instead.
  // The spread is the fit's own reference (robust when a few huge values dominate the plain
  // one), so a typed-in 1e154 does not raise the floor to 1e143 and hide how far it lies.
  const floor = EXACT_FIT_RELATIVE * (referenceSpread(y, n) || 0);
  const rows: StrayRow[] = [];
  const k = fit.k;
  // Each component's coefficients over its noise SD, divided once rather than in every row.
  const sigmas = fit.components.map((component) => Math.max(component.sigma, floor));
  const scaled = fit.components.map(({ coefficients }, c) => coefficients.map((b) => b / sigmas[c]));
  for (let i = 0; i < n; i++) {
    let nearest = 0;
    let distance = Infinity;
    for (let c = 0; c < k; c++) {
      const { coefficients } = fit.components[c];
      const sigma = sigmas[c];
      let d: number;
      if (sigma > 0) {
        const over = scaled[c];
        let r = y[i] / sigma - over[0];
        for (let j = 0; j < p; j++) r -= over[j + 1] * x[i * p + j];
        d = Math.abs(r);
      } else {
        // An exact component (noise SD 0) explains exactly the rows it passes through.
        let r = y[i] - coefficients[0];
        for (let j = 0; j < p; j++) r -= coefficients[j + 1] * x[i * p + j];
        d = r === 0 ? 0 : Infinity;
      }
      if (!(d >= distance)) {
        distance = d;
        nearest = c;
      }
    }
    if (distance > bound) rows.push({ row: i, distance, nearest });
  }
  return { bound, rows, rule: strayRowsRule(n) };
}

/**
 * Noise SDs are taken as at least this fraction of the SD of y: a component that fits its rows
 * exactly has residuals of rounding size (about 1e-16 of y), which are no evidence against a row.
 */
const EXACT_FIT_RELATIVE = 1e-10;

/**
 * Upper-tail normal quantile: z with P(Z > z) = tail, for 0 < tail ≤ 0.5, by bisection on the
 * complementary error function (accurate to about 1e-7 relative, ample for a bound).
 */
export function upperNormalQuantile(tail: number): number {
  if (!(tail > 0)) return Infinity;
  if (tail >= 0.5) return 0;
  let low = 0;
  let high = 40;
  for (let step = 0; step < 100; step++) {
    const middle = 0.5 * (low + high);
    if (0.5 * complementaryErrorFunction(middle / Math.SQRT2) > tail) low = middle;
    else high = middle;
  }
  return 0.5 * (low + high);
}

/**
 * erfc(z) for z ≥ 0 by the Chebyshev-fitted approximation with fractional error below 1.2e-7
 * everywhere (Press, Teukolsky, Vetterling & Flannery, Numerical Recipes, 2nd ed. 1992,
 * section 6.2, erfcc).
 */
function complementaryErrorFunction(z: number): number {
  const t = 1 / (1 + 0.5 * z);
  return (
    t *
    Math.exp(
      -z * z - 1.26551223 +
        t * (1.00002368 + t * (0.37409196 + t * (0.09678418 + t * (-0.18628806 + t * (0.27886807 + t * (-1.13520398 + t * (1.48851587 + t * (-0.82215223 + t * 0.17087277)))))))),
    )
  );
}
