/**
 * The shapes a mixture fit takes and returns. Every host (worksheet functions,
 * task pane, command line) reads these; the engine fills them.
 */

/** What the fit needs of the data layer's Design. */
export interface RegressionData {
  /** Responses, length n. */
  y: Float64Array;
  /** Predictors, n x p row-major, without an intercept column. */
  x: Float64Array;
  n: number;
  p: number;
}

export type MixtureModel = "plain" | "joint";

/** A flag the caller can raise to abandon a fit; the engine checks it between passes. */
export interface CancelSignal {
  readonly aborted: boolean;
}

export interface MixtureOptions {
  /** Number of components, 1 ≤ k. */
  k: number;
  /** Seed of the one generator behind every random step (default 1). */
  seed?: number;
  /** Fit an intercept per component (default true). */
  intercept?: boolean;
  /** "plain": y given x per component; "joint": each component also models x (default "plain"). */
  model?: MixtureModel;
  /** Number of alternative starts refined briefly before the best is refined fully. */
  restarts?: number;
  /** Relative change of the log-likelihood per row below which refinement stops. */
  tolerance?: number;
  /** Cap on refinement iterations. */
  maxIterations?: number;
  /**
   * A background component with a flat density over the data's range (Banfield & Raftery
   * 1993), so that rows far from every regression do not pull one onto themselves: true
   * always, false never (the default), "auto" only when the fit without it shows signs of
   * such rows (see chooseBackground in mixture/backgroundComponent.ts).
   */
  background?: boolean | "auto";
  /** A previous fit of the same model on (nearly) the same data: warm start and label order. */
  previous?: MixtureFit;
  /**
   * Whether the fit may restructure (split-and-merge, peeling) when no two starts agree
   * (default true). The K scan turns it off: it starts each K from the fit of K − 1 instead.
   */
  restructure?: boolean;
  /**
   * A BIC the fit only matters below (the K scan's lowest so far plus its tie): the refinement
   * on all rows then stops once the fit's BIC cannot come below `bic` even with the gain in
   * ln L still to come, and reports refinement.stopped = `reason`.
   */
  mattersBelowBic?: { bic: number; reason: string };
  signal?: CancelSignal;
}

export interface MixtureComponent {
  /** Mixing weight π_k. */
  weight: number;
  /** Noise SD σ_k (maximum likelihood). */
  sigma: number;
  /** Intercept first (0 when the fit has none), then one coefficient per predictor. */
  coefficients: Float64Array;
  /** Joint model only: mean of x in this component (length p). */
  xMean?: Float64Array;
  /** Joint model only: covariance of x in this component (p x p row-major). */
  xCovariance?: Float64Array;
}

export interface WarmStartReport {
  /** False when the certificate did not shrink enough or the best starts disagree. */
  converged: boolean;
  /** Which start won, e.g. "moment-subspace", "random-partition", "residual-seeding", "previous". */
  method: string;
  /** Narrowest residual scale reached by the moment search, relative to the SD of y (NaN when not run). */
  certificate: number;
  /** How many starts were tried and refined briefly. */
  startsTried: number;
  /** Relative coefficient disagreement between the two best starts (0 when they agree). */
  disagreement: number;
}

export interface RefinementReport {
  converged: boolean;
  iterations: number;
  /** Log-likelihood after each iteration (non-decreasing for EM). */
  logLikelihoodPath: number[];
  /** Times a collapsed component was re-seeded (the path may dip at those steps). */
  reseeds?: number;
  /** Rows of the seeded subsample the starts ran on (0 when all rows were used). */
  subsampleRows?: number;
  /** EM iterations on the subsample (and intermediate subsample) before the full-data ones. */
  subsampleIterations?: number;
  /** Whether the noiseless hard-assignment polish (exact fits by QR) produced the result. */
  polished?: boolean;
  /** Exact-peeling rounds after the refinement. */
  peeled?: number;
  /** Accepted split-and-merge moves. */
  splits?: number;
  /** Why the refinement stopped before converging (the fit could not matter, see MixtureOptions.mattersBelowBic); absent otherwise. */
  stopped?: string;
}

export interface MixtureFit {
  k: number;
  n: number;
  p: number;
  /** Coefficients per component including the intercept slot. */
  q: number;
  intercept: boolean;
  model: MixtureModel;
  components: MixtureComponent[];
  /** n x k row-major membership probabilities; each row sums to 1. */
  memberships: Float64Array;
  /** Most probable component per used row, 0-based. */
  labels: Int32Array;
  logLikelihood: number;
  /** Number of free parameters used in BIC. */
  parameterCount: number;
  bic: number;
  icl: number;
  warmStart: WarmStartReport;
  refinement: RefinementReport;
  /** Plain-language warnings, each saying what to try. */
  warnings: string[];
  /** The seed used, so a host can show it and the fit can be reproduced. */
  seed: number;
  /**
   * The background component when the fit has one: its weight π₀ (the components' weights
   * sum to 1 − π₀), ln of its flat density, and each used row's membership in it.
   */
  background?: { weight: number; logDensity: number; memberships: Float64Array };
}
