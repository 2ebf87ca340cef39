/**
 * How a colour looks to a reader with one of the three common dichromacies,
 * so Skein's component colours can be chosen and checked to stay apart for
 * them too.
 *
 * Model: Machado, Oliveira & Fernandes (2009), "A physiologically-based model
 * for simulation of color vision deficiency", IEEE Transactions on
 * Visualization and Computer Graphics 15(6), 1291–1298: one 3×3 matrix per
 * deficiency and severity, applied to linear RGB. The matrices below are the
 * paper's severity-1.0 matrices (full protanopia, deuteranopia, tritanopia).
 * Each row sums to 1, so white and greys are unchanged (a test checks this).
 */
import type { Triple } from "./colourSpace";

export type Deficiency = "protanopia" | "deuteranopia" | "tritanopia";

export const DEFICIENCIES: readonly Deficiency[] = ["protanopia", "deuteranopia", "tritanopia"];

/** Row-major 3×3 matrices, Machado, Oliveira & Fernandes (2009), severity 1.0. */
export const MACHADO_2009: Record<Deficiency, readonly number[]> = {
  protanopia: [0.152286, 1.052583, -0.204868, 0.114503, 0.786281, 0.099216, -0.003882, -0.048116, 1.051998],
  deuteranopia: [0.367322, 0.860646, -0.227968, 0.280085, 0.672501, 0.047413, -0.01182, 0.04294, 0.968881],
  tritanopia: [1.255528, -0.076749, -0.178779, -0.078411, 0.930809, 0.147602, 0.004733, 0.691367, 0.3039],
};

/** Linear RGB as seen with the given deficiency, clipped to the displayable cube. */
export function simulateDeficiency(linear: Triple, deficiency: Deficiency): Triple {
  const m = MACHADO_2009[deficiency];
  const out: Triple = [0, 0, 0];
  for (let row = 0; row < 3; row++) {
    const value = m[3 * row] * linear[0] + m[3 * row + 1] * linear[1] + m[3 * row + 2] * linear[2];
    out[row] = Math.min(1, Math.max(0, value));
  }
  return out;
}
