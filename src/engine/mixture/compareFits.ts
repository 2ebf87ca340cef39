import type { Candidate } from "./fitContext";
import type { MixtureParameters } from "./mixtureParameters";
import { solveAssignment } from "../solveAssignment";

/**
 * Two fits are alike in likelihood when their log-likelihoods are within this much: 6 is
 * "strong evidence" on the 2 ln B scale of Kass & Raftery (1995), so a gap of 3 in ln L.
 */
export const LIKELIHOOD_TIE = 3;
/** Converged fits whose matched coefficients differ by more than this fraction of the coefficient scale disagree. */
export const DISAGREEMENT_RELATIVE = 0.01;
/**
 * Briefly refined starts count as the same fit within this fraction of the coefficient scale:
 * looser than DISAGREEMENT_RELATIVE because short runs have not converged yet.
 */
const SAME_FIT_RELATIVE = 0.05;

/** Whether the best candidate's fit was also reached by another start (same ln L, same coefficients). */
export function bestFoundTwice(candidates: readonly Candidate[]): boolean {
  let best = candidates[0];
  for (const c of candidates) if (c.logLikelihood > best.logLikelihood) best = c;
  return candidates.some((c) => c !== best && c.logLikelihood >= best.logLikelihood - LIKELIHOOD_TIE && coefficientDistance(c.params, best.params) <= SAME_FIT_RELATIVE);
}

/**
 * Largest distance between matched components' coefficients, relative to the largest
 * coefficient norm of either fit; components matched by the optimal assignment on squared
 * distance (solveAssignment, the one matching used everywhere).
 */
export function coefficientDistance(a: MixtureParameters, b: MixtureParameters): number {
  const { k, q } = a;
  // Everything in units of the largest coefficient magnitude, so that squares of coefficients
  // near 1e155 (a fit on values that large) do not overflow; the ratio returned is unchanged.
  let unit = 0;
  for (let i = 0; i < k * q; i++) unit = Math.max(unit, Math.abs(a.coefficients[i]), Math.abs(b.coefficients[i]));
  if (!(unit > 0)) return unit === 0 ? 0 : Infinity;
  if (!Number.isFinite(unit)) return Infinity;
  const cost = new Float64Array(k * k);
  let scale = 0;
  for (let i = 0; i < k; i++) {
    let na = 0;
    let nb = 0;
    for (let l = 0; l < q; l++) {
      na += (a.coefficients[i * q + l] / unit) ** 2;
      nb += (b.coefficients[i * q + l] / unit) ** 2;
    }
    scale = Math.max(scale, Math.sqrt(na), Math.sqrt(nb));
    for (let j = 0; j < k; j++) {
      let s = 0;
      for (let l = 0; l < q; l++) s += (a.coefficients[i * q + l] / unit - b.coefficients[j * q + l] / unit) ** 2;
      cost[i * k + j] = s;
    }
  }
  const rowOfColumn = solveAssignment(cost, k);
  let worst = 0;
  for (let j = 0; j < k; j++) worst = Math.max(worst, Math.sqrt(cost[rowOfColumn[j] * k + j]));
  return scale > 0 ? worst / scale : 0;
}
