/**
 * The shapes of choosing K and trusting a fit: the K scan, the separation check,
 * standard errors and prediction. Hosts read these; the engine fills them.
 */
import type { CancelSignal, MixtureFit, MixtureModel } from "./mixtureTypes";

export interface ScanOptions {
  /** Largest K tried; the scan runs K = 1..kMax. */
  kMax: number;
  seed?: number;
  intercept?: boolean;
  model?: MixtureModel;
  restarts?: number;
  /** Give every fit a flat background component (Banfield & Raftery 1993); see MixtureOptions. */
  background?: boolean | "auto";
  /** Passed to each fit (see MixtureOptions). */
  tolerance?: number;
  maxIterations?: number;
  /** Also compute a cross-validated log-likelihood per K (Smyth 2000); slower. */
  crossValidate?: boolean;
  signal?: CancelSignal;
  /** Called after each K finishes, for progress bars. */
  onProgress?: (k: number, kMax: number) => void;
}

export interface ScanRow {
  k: number;
  logLikelihood: number;
  bic: number;
  icl: number;
  /** Cross-validated log-likelihood per row, when asked for (NaN otherwise). */
  crossValidatedLogLikelihood: number;
  /** The two best starts reached the same components (scanComponents' startsAgree). */
  startsAgree: boolean;
  /** The refinement stopped by its tolerance, not by running out of iterations or by `stopped`. */
  converged: boolean;
  /**
   * Why the refinement stopped before converging: its BIC could not come near enough to the
   * lowest to change the suggestion (scanComponents); null when it ran to its end.
   */
  stopped: string | null;
  /** Smallest pairwise separation (noise units); Infinity when K = 1. */
  minSeparation: number;
  /** Why this K cannot be suggested (did not converge, starts disagree, too few rows, components too close), or null. */
  flag: string | null;
  /** For every K but the suggested one, why it is not suggested (its flag, or how it lost on BIC); null for the suggested K. */
  note: string | null;
  fit: MixtureFit;
}

export interface ScanResult {
  rows: ScanRow[];
  /** The suggested K. */
  chosenK: number;
  /** The rule that chose it, in plain words. */
  rule: string;
  /** Why the scan stopped before kMax (too few rows, or a fit that failed), or null when it reached kMax. */
  stoppedEarly: string | null;
}

export interface SeparationPair {
  /** 0-based component indices. */
  a: number;
  b: number;
  /** sqrt((β_a − β_b)ᵀ Ê[xxᵀ] (β_a − β_b)) / sqrt((σ_a² + σ_b²)/2). */
  gap: number;
}

export interface SeparationReport {
  pairs: SeparationPair[];
  /** Smallest gap over pairs; Infinity when K = 1. */
  minGap: number;
  /** 1 − mean_i max_k τ_ik (Basford & McLachlan 1985). */
  misclassification: number;
  /** 1 − EN / (n ln K) (Ramaswamy et al. 1993); 1 when K = 1. */
  normalisedEntropy: number;
  smallestWeight: number;
  /** Plain-language warnings with what to try. */
  warnings: string[];
}

export interface StandardErrorReport {
  /** "exact-fit": every component fits its rows exactly, so coefficient and noise SD errors are 0. */
  method: "observed-information" | "bootstrap" | "exact-fit";
  /** Per component: one per coefficient (intercept slot first, 0 when there is none). */
  coefficients: Float64Array[];
  weights: Float64Array;
  sigmas: Float64Array;
  /** Bootstrap only: replicates that produced a usable fit. */
  replicates?: number;
}

export interface Prediction {
  /** m x k row-major: each component's prediction xᵀβ_k. */
  perComponent: Float64Array;
  /** Joint model: membership-weighted prediction Σ_k P(k | x) xᵀβ_k; plain model: weights π_k. */
  weighted: Float64Array;
  /** SD of the prediction under the mixture: sqrt(Σ_k P_k (σ_k² + (μ_k − μ̄)²)). */
  spread: Float64Array;
  /** m x k memberships from x alone (joint model), or the weights π_k repeated (plain model). */
  memberships: Float64Array;
  m: number;
  k: number;
}
