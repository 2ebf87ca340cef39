/**
 * The one table of the options a user can set, owned by the engine: name, type, range,
 * default and a one-line meaning. Every surface is made from it or checked against it: the
 * worksheet settings parser (src/functions/settings.ts), the command-line flags and their
 * --help (src/cli), the task pane's controls and the README's settings table
 * (test/options.test.ts compares them). The engine's own defaults are these.
 */

export type OptionName = "seed" | "intercept" | "model" | "restarts" | "tolerance" | "max_iterations" | "background" | "k" | "kmax";
export type OptionValue = number | boolean | string;

export interface OptionSpec {
  /** As the user types it in a worksheet setting; the README uses it too. */
  name: OptionName;
  /** The command-line flag, without the dashes (intercept is the switch no-intercept). */
  flag: string;
  type: "whole number" | "number" | "yes/no" | "choice";
  /** Whole numbers: the smallest and largest accepted; numbers: the open interval. */
  low?: number;
  high?: number;
  choices?: readonly string[];
  default: OptionValue;
  /** What is accepted, as a phrase that follows "must be". */
  accepts: string;
  /** One line: what the option does. */
  meaning: string;
}

/** Largest K anywhere (functions, command line, pane): beyond it fits get slow and BIC rarely has data enough. */
export const MAX_COMPONENTS = 50;
/** Seed of the one random generator when none is given. */
export const DEFAULT_SEED = 1;
/** The generator uses the seed's 32-bit integer part. */
export const MAX_SEED = 4294967295;
/** Random-partition starts besides the seeded ones (residual and location k-means++). */
export const DEFAULT_RESTARTS = 10;
/** More restarts than this only slow a worksheet down. */
export const MAX_RESTARTS = 1000;
/** Relative change of the log-likelihood, |ΔL| / max(|L|, n), at which EM stops. */
export const DEFAULT_TOLERANCE = 1e-8;
export const DEFAULT_MAX_ITERATIONS = 500;
export const MAX_ITERATIONS_CAP = 100000;
/** The scan's largest K when none is given: enough for most data, and cheap. */
export const DEFAULT_KMAX = 5;
/** k's default as users read it: a K left out is the one the scan suggests. */
export const K_FROM_SCAN = "the K the scan suggests";

export const OPTIONS: readonly OptionSpec[] = [
  {
    name: "seed",
    flag: "seed",
    type: "whole number",
    low: 0,
    high: MAX_SEED,
    default: DEFAULT_SEED,
    accepts: `a whole number from 0 to ${MAX_SEED}`,
    meaning: "seed of the random starts: the same seed gives the same fit again",
  },
  {
    name: "intercept",
    flag: "no-intercept",
    type: "yes/no",
    default: true,
    accepts: "yes or no",
    meaning: "fit an intercept in each component's regression",
  },
  {
    name: "model",
    flag: "model",
    type: "choice",
    choices: ["plain", "joint"],
    default: "plain",
    accepts: "plain or joint",
    meaning: "plain: y given x per component; joint: each component also models where its x lie",
  },
  {
    name: "restarts",
    flag: "restarts",
    type: "whole number",
    low: 0,
    high: MAX_RESTARTS,
    default: DEFAULT_RESTARTS,
    accepts: `a whole number from 0 to ${MAX_RESTARTS}`,
    meaning: "random starts refined briefly before the best is refined fully",
  },
  {
    name: "tolerance",
    flag: "tolerance",
    type: "number",
    low: 0,
    high: 1,
    default: DEFAULT_TOLERANCE,
    accepts: "a number above 0 and below 1, such as 1e-8",
    meaning: "the refinement stops when the log-likelihood changes, or is set to gain in all further iterations, by less than this (relative)",
  },
  {
    name: "max_iterations",
    flag: "max-iterations",
    type: "whole number",
    low: 1,
    high: MAX_ITERATIONS_CAP,
    default: DEFAULT_MAX_ITERATIONS,
    accepts: `a whole number from 1 to ${MAX_ITERATIONS_CAP}`,
    meaning: "the refinement stops after this many iterations",
  },
  {
    name: "background",
    flag: "background",
    type: "choice",
    choices: ["auto", "yes", "no"],
    default: "auto",
    accepts: "auto, yes or no",
    meaning: "a background component with a flat density over the range of y takes rows far from every regression; auto adds it only when the fit without it has stray rows or a tiny component",
  },
  {
    name: "k",
    flag: "k",
    type: "whole number",
    low: 1,
    high: MAX_COMPONENTS,
    // Left out, every surface uses the K the scan suggests (kmax DEFAULT_KMAX, or fewer when rows are few).
    default: K_FROM_SCAN,
    accepts: `a whole number from 1 to ${MAX_COMPONENTS}`,
    meaning: "number of components",
  },
  {
    name: "kmax",
    flag: "k-max",
    type: "whole number",
    low: 1,
    high: MAX_COMPONENTS,
    default: DEFAULT_KMAX,
    accepts: `a whole number from 1 to ${MAX_COMPONENTS}`,
    meaning: "the scan tries 1 to this many components",
  },
];

export function optionSpec(name: OptionName): OptionSpec {
  const spec = OPTIONS.find((option) => option.name === name);
  if (spec === undefined) throw new Error(`No option named ${name}`);
  return spec;
}

/** The default as users read it: "yes", "plain", "1e-8", "500". */
export function defaultText(spec: OptionSpec): string {
  if (typeof spec.default === "boolean") return spec.default ? "yes" : "no";
  return String(spec.default);
}

function toNumber(raw: unknown): number | undefined {
  if (typeof raw === "number") return raw;
  if (typeof raw === "string" && raw.trim() !== "") {
    const number = Number(raw.trim());
    return Number.isFinite(number) ? number : undefined;
  }
  return undefined;
}

/**
 * `raw` (a cell value, a setting's text, a flag's text) read as this option, or undefined when
 * it is not acceptable; the surface then says what is wrong with `spec.accepts`.
 */
export function readOptionValue(spec: OptionSpec, raw: unknown): OptionValue | undefined {
  switch (spec.type) {
    case "whole number": {
      const number = toNumber(raw);
      if (number === undefined || !Number.isSafeInteger(number) || number < spec.low! || number > spec.high!) return undefined;
      return number;
    }
    case "number": {
      const number = toNumber(raw);
      if (number === undefined || !(number > spec.low! && number < spec.high!)) return undefined;
      return number;
    }
    case "yes/no": {
      if (typeof raw === "boolean") return raw;
      const text = typeof raw === "string" ? raw.trim().toLowerCase() : raw;
      if (text === "yes" || text === "true" || text === 1) return true;
      if (text === "no" || text === "false" || text === 0) return false;
      return undefined;
    }
    case "choice": {
      const text = typeof raw === "string" ? raw.trim().toLowerCase() : "";
      return spec.choices!.includes(text) ? text : undefined;
    }
  }
}
