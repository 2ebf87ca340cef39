import type { CancelSignal, MixtureFit, MixtureModel, RegressionData } from "../mixtureTypes";
import type { Random } from "../random";
import type { MixtureParameters } from "./mixtureParameters";
import type { MixtureWorkspace } from "./mixtureWorkspace";
import type { Guards } from "./mStep";
import type { AnnealingBudget } from "./annealedLanding";

/** The options of one fit after the entrance checks (mixtureSettings.ts). */
export interface Settings {
  k: number;
  seed: number;
  intercept: boolean;
  model: MixtureModel;
  restarts: number;
  tolerance: number;
  maxIterations: number;
  /** A flat background component beside the K regressions (backgroundComponent.ts). */
  background: boolean;
}

/**
 * Asked after each step of a run given one (an EM iteration, or a SQUAREM cycle of several:
 * runEm.ts): whether the run may end before converging, from ln L, Aitken's estimate of the
 * gain still to come (Infinity when the changes do not shrink) and the EM iterations run so
 * far. The run then reports `stopped`.
 */
export type EmStop = (logLikelihood: number, gainToCome: number, iterations: number) => boolean;

/** What every EM run needs besides its rows and parameters. */
export interface EmContext {
  guards: Guards;
  tolerance: number;
  /** Re-seeding of collapsed components draws from it. */
  random: Random;
  signal?: CancelSignal;
  /** A stop every run also obeys beside its own, made for each run from its parameters and iteration limit (null: none). */
  runStop?: ((ws: MixtureWorkspace, params: MixtureParameters, maxIterations: number) => EmStop | null) | null;
}

/**
 * One (sub-)problem as the phases see it: its rows, settings, guards and generator, the
 * workspace on all its rows and the one the starts run on (a seeded subsample of large
 * inputs, else the same workspace), and how deep it sits among sub-problems.
 */
export interface FitContext extends EmContext {
  data: RegressionData;
  settings: Settings;
  full: MixtureWorkspace;
  working: MixtureWorkspace;
  /** Rows of `data` behind `working` when it is a subsample, else null. */
  subsampleRows: Int32Array | null;
  /** 0 for the user's fit, one more for each sub-problem (sub-fit of a subset of rows). */
  depth: number;
  /** A parent's estimate (k·q coefficients) of the components this sub-problem looks for. */
  inherited?: Float64Array;
  /**
   * The rows are expected to lie exactly on K regressions: a parent fitted other rows of the
   * same data exactly and removed them. Only an exact fit then ends the search.
   */
  expectExact: boolean;
  /**
   * Rows of components outside this sub-problem may lie among its rows (they were chosen by a
   * noisy fit: a peel's band or a split's members, here or further up); false for the user's
   * fit and for sub-problems of its rows that exact fits left.
   */
  strays: boolean;
  /**
   * The partitions annealed landing may still try here (annealedLanding.ts), or null where it
   * is not tried: it is tried in the user's fit and in the sub-problems of the finishing
   * phase's peels and of annealed landing's own.
   */
  annealing: AnnealingBudget | null;
  /**
   * Re-seeding in runs that may be given up (a start run on while falling toward an exact fit,
   * exactComponents.ts) draws from this second generator, made from the same seed, so a run
   * given up leaves every later draw of `random` as it would have been.
   */
  trialRandom: Random;
  previous?: MixtureFit;
  /** When the fit only matters below some BIC: the stop of its runs on all rows, the ln L on all rows it must exceed, and why (refineBest.ts). */
  unwanted: { stop: EmStop; needed: number; reason: string } | null;
}

/** A start after its brief refinement: where it came from, its parameters and log-likelihood. */
export interface Candidate {
  method: string;
  params: MixtureParameters;
  logLikelihood: number;
}

/** How an EM run ended. */
export interface EmRun {
  logLikelihood: number;
  iterations: number;
  converged: boolean;
  reseeds: number;
  varianceBoundActive: boolean;
  /** The run's EmStop ended it before it converged. */
  stopped?: boolean;
}
