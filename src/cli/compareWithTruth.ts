import type { MixtureFit, RegressionData } from "../engine/mixtureTypes";

/** One hidden component as a sample scenario states it (sample-workbooks/truth.json). */
export interface TruthComponent {
  name: string;
  weight: number;
  noiseSD: number;
  intercept: number;
  coefficients: number[];
}

export interface TruthComparison {
  trueK: number;
  fittedK: number;
  /** For each true component, the fitted component matched to it (0-based), or −1 when none is left. */
  match: number[];
  /** Per matched true component: largest |fitted − true| over intercept and coefficients. */
  coefficientError: number[];
  /** Per matched true component: the same in units of each coefficient's standard error (NaN without them). */
  errorInStandardErrors: number[];
  /** Share of rows whose fitted label is the component matched to their true component. */
  labelAgreement: number;
}

/**
 * Squared distance between two coefficient vectors (intercept first) in the
 * units of y: the mean over rows of ((β_a − β_b)ᵀ x_i)², so predictors on
 * different scales weigh by what they do to the prediction.
 */
function predictionDistance(data: RegressionData, a: ArrayLike<number>, b: ArrayLike<number>): number {
  const { x, n, p } = data;
  let total = 0;
  for (let i = 0; i < n; i++) {
    let difference = a[0] - b[0];
    for (let j = 0; j < p; j++) difference += (a[j + 1] - b[j + 1]) * x[i * p + j];
    total += difference * difference;
  }
  return total / n;
}

/**
 * Matches fitted components to the true ones (least total prediction
 * distance over all one-to-one matchings; exhaustive, fine for the handful of
 * components in a demo) and measures how far each fitted component is from
 * its true one.
 */
export function compareWithTruth(
  data: RegressionData,
  fit: MixtureFit,
  truth: TruthComponent[],
  trueLabels: ArrayLike<number> | null,
  rowIndex: Int32Array,
  standardErrors?: Float64Array[],
): TruthComparison {
  const trueVectors = truth.map((component) => [component.intercept, ...component.coefficients]);
  const cost = trueVectors.map((vector) => fit.components.map((component) => predictionDistance(data, vector, component.coefficients)));
  const match = new Array<number>(truth.length).fill(-1);
  let bestCost = Infinity;
  const used = new Array<boolean>(fit.k).fill(false);
  const current = new Array<number>(truth.length).fill(-1);
  // Depth-first over assignments of true components to distinct fitted ones;
  // when there are fewer fitted than true components, some stay unmatched.
  const search = (t: number, total: number, unmatched: number): void => {
    if (total >= bestCost) return;
    if (t === truth.length) {
      bestCost = total;
      match.splice(0, match.length, ...current);
      return;
    }
    for (let c = 0; c < fit.k; c++) {
      if (used[c]) continue;
      used[c] = true;
      current[t] = c;
      search(t + 1, total + cost[t][c], unmatched);
      used[c] = false;
    }
    if (unmatched > 0) {
      current[t] = -1;
      // An unmatched true component costs more than any match, so matches are preferred.
      search(t + 1, total + 1e300, unmatched - 1);
    }
  };
  search(0, 0, Math.max(0, truth.length - fit.k));

  const coefficientError: number[] = [];
  const errorInStandardErrors: number[] = [];
  truth.forEach((_, t) => {
    const c = match[t];
    if (c < 0) {
      coefficientError.push(NaN);
      errorInStandardErrors.push(NaN);
      return;
    }
    let largest = 0;
    let largestInSe = 0;
    trueVectors[t].forEach((value, j) => {
      const error = Math.abs(fit.components[c].coefficients[j] - value);
      largest = Math.max(largest, error);
      const se = standardErrors?.[c][j];
      largestInSe = se !== undefined && se > 0 ? Math.max(largestInSe, error / se) : NaN;
    });
    coefficientError.push(largest);
    errorInStandardErrors.push(standardErrors ? largestInSe : NaN);
  });

  let agree = 0;
  if (trueLabels) {
    for (let i = 0; i < data.n; i++) if (match[trueLabels[rowIndex[i]]] === fit.labels[i]) agree++;
  }
  return { trueK: truth.length, fittedK: fit.k, match, coefficientError, errorInStandardErrors, labelAgreement: trueLabels ? agree / data.n : NaN };
}
