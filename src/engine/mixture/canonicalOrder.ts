import type { MixtureParameters } from "./mixtureParameters";

/**
 * Weights closer than this count as tied (they come from the same counts of rows up to
 * rounding), so the order does not flip between runs on rounding noise.
 */
const WEIGHT_TIE = 1e-9;

/**
 * The order components are reported in, so the same fit always reads the same way:
 * descending weight; tied weights by ascending first coefficient (the intercept when there
 * is one), then by ascending second coefficient, and so on.
 *
 * @returns order[j] = index of the component reported in position j
 */
export function canonicalOrder(params: MixtureParameters): number[] {
  const { k, q } = params;
  const order = Array.from({ length: k }, (_, c) => c);
  order.sort((a, b) => {
    const byWeight = params.weights[b] - params.weights[a];
    if (Math.abs(byWeight) > WEIGHT_TIE) return byWeight;
    for (let j = 0; j < q; j++) {
      const byCoefficient = params.coefficients[a * q + j] - params.coefficients[b * q + j];
      if (byCoefficient !== 0) return byCoefficient;
    }
    return a - b;
  });
  return order;
}
