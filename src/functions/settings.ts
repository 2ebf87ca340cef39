/**
 * The optional `settings` argument of every SKEIN function: either text such as
 * "seed=7; intercept=no; model=joint", or a two-column range of name/value pairs. Every name
 * and value is checked once, here, against the table below; a wrong one is rejected with a
 * message that names the setting, what it accepts and what it received.
 */
import { SkeinError } from "../engine/errors";
import type { MixtureModel } from "../engine/mixtureTypes";

export interface FunctionSettings {
  /** Seed of the fit's one random generator. */
  seed: number;
  intercept: boolean;
  model: MixtureModel;
  /** Undefined: the engine's default. */
  restarts?: number;
  tolerance?: number;
  maxIterations?: number;
  /** Header row on the results: yes, no, or "auto" (exactly when the input ranges start with one). */
  headers: boolean | "auto";
  /** A flat background component beside the K regressions (Banfield & Raftery 1993): yes, no, or "auto" (only when the fit without it shows far-off rows). */
  background: boolean | "auto";
}

/** Defaults: seed 1 (the engine's own default), an intercept, the plain model. */
export const DEFAULT_SETTINGS: Readonly<FunctionSettings> = { seed: 1, intercept: true, model: "plain", headers: "auto", background: "auto" };

/** Largest seed accepted: the generator uses the seed's 32-bit integer part. */
const MAX_SEED = 4294967295;
/** More restarts than this only slow a worksheet down; the command line has no such cap. */
const MAX_RESTARTS = 1000;
const MAX_ITERATIONS_CAP = 100000;

type Apply = (settings: FunctionSettings, value: unknown, name: string) => void;

interface SettingRule {
  accepts: string;
  apply: Apply;
}

function yesNo(value: unknown, name: string, accepts: string): boolean {
  if (typeof value === "boolean") return value;
  const text = typeof value === "string" ? value.trim().toLowerCase() : value;
  if (text === "yes" || text === "true" || text === 1) return true;
  if (text === "no" || text === "false" || text === 0) return false;
  throw badValue(name, accepts, value);
}

function wholeNumber(value: unknown, name: string, accepts: string, low: number, high: number): number {
  const number = toNumber(value);
  if (number === undefined || !Number.isInteger(number) || number < low || number > high) throw badValue(name, accepts, value);
  return number;
}

function toNumber(value: unknown): number | undefined {
  if (typeof value === "number") return value;
  if (typeof value === "string" && value.trim() !== "") {
    const number = Number(value.trim());
    return Number.isFinite(number) ? number : undefined;
  }
  return undefined;
}

/** The table of settings: name as the user types it, what it accepts, how it is stored. */
const RULES: Record<string, SettingRule> = {
  seed: {
    accepts: `a whole number from 0 to ${MAX_SEED}`,
    apply: (s, v, n) => (s.seed = wholeNumber(v, n, RULES.seed.accepts, 0, MAX_SEED)),
  },
  intercept: {
    accepts: "yes or no",
    apply: (s, v, n) => (s.intercept = yesNo(v, n, RULES.intercept.accepts)),
  },
  model: {
    accepts: "plain (y given x in each component) or joint (each component also models x)",
    apply: (s, v, n) => {
      const text = typeof v === "string" ? v.trim().toLowerCase() : "";
      if (text !== "plain" && text !== "joint") throw badValue(n, RULES.model.accepts, v);
      s.model = text;
    },
  },
  restarts: {
    accepts: `a whole number from 0 to ${MAX_RESTARTS}`,
    apply: (s, v, n) => (s.restarts = wholeNumber(v, n, RULES.restarts.accepts, 0, MAX_RESTARTS)),
  },
  tolerance: {
    accepts: "a number above 0 and below 1, such as 1e-8",
    apply: (s, v, n) => {
      const number = toNumber(v);
      if (number === undefined || !(number > 0 && number < 1)) throw badValue(n, RULES.tolerance.accepts, v);
      s.tolerance = number;
    },
  },
  max_iterations: {
    accepts: `a whole number from 1 to ${MAX_ITERATIONS_CAP}`,
    apply: (s, v, n) => (s.maxIterations = wholeNumber(v, n, RULES.max_iterations.accepts, 1, MAX_ITERATIONS_CAP)),
  },
  headers: {
    accepts: "yes or no",
    apply: (s, v, n) => (s.headers = yesNo(v, n, RULES.headers.accepts)),
  },
  background: {
    accepts: "auto, yes or no",
    apply: (s, v, n) => {
      const text = typeof v === "string" ? v.trim().toLowerCase() : v;
      s.background = text === "auto" ? "auto" : yesNo(v, n, RULES.background.accepts);
    },
  },
};

/** The setting names, in the order the messages list them. */
export const SETTING_NAMES: readonly string[] = Object.keys(RULES);

function badValue(name: string, accepts: string, value: unknown): SkeinError {
  const shown = typeof value === "string" ? `"${value.trim()}"` : value === null || value === undefined ? "nothing" : String(value);
  return new SkeinError("bad-input", `The setting ${name} must be ${accepts}; it was ${shown}.`);
}

function listOfSettings(): string {
  return SETTING_NAMES.map((name) => `${name} (${RULES[name].accepts})`).join(", ");
}

/** "Max iterations", "max-iterations" and "MAX_ITERATIONS" all name max_iterations. */
function normaliseName(name: string): string {
  return name.trim().toLowerCase().replace(/[\s-]+/g, "_");
}

function isBlank(value: unknown): boolean {
  return value === null || value === undefined || (typeof value === "string" && value.trim() === "");
}

/**
 * Reads the settings argument. It arrives as Excel passes an optional matrix argument: null
 * or undefined when omitted, a 1 x 1 array for a text typed in the formula or one cell, and
 * a table for a range. A cell holding "name=value; name=value" is read as text; a row whose
 * first cell is a name without "=" takes its value from the next cell. Blank cells and rows
 * are ignored.
 */
export function parseSettings(argument: unknown): FunctionSettings {
  const settings: FunctionSettings = { ...DEFAULT_SETTINGS };
  if (isBlank(argument)) return settings;
  const rows: unknown[][] = Array.isArray(argument) ? argument.map((row) => (Array.isArray(row) ? row : [row])) : [[argument]];
  const seen = new Set<string>();
  const set = (rawName: string, value: unknown) => {
    const name = normaliseName(rawName);
    const rule = RULES[name];
    if (rule === undefined) {
      throw new SkeinError("bad-input", `Unknown setting "${rawName.trim()}"; the settings are ${SETTING_NAMES.join(", ")}. Example: "seed=7; intercept=no; model=joint".`);
    }
    if (seen.has(name)) throw new SkeinError("bad-input", `The setting ${name} is given twice; keep one.`);
    seen.add(name);
    if (isBlank(value)) throw badValue(name, rule.accepts, value);
    rule.apply(settings, value, name);
  };

  for (const row of rows) {
    const first = row.findIndex((cell) => !isBlank(cell));
    if (first < 0) continue;
    const head = row[first];
    if (typeof head === "string" && !head.includes("=") && row.length > first + 1) {
      // A name/value pair: the name, then its value in the next cell; nothing after it.
      const rest = row.slice(first + 2);
      if (rest.some((cell) => !isBlank(cell))) {
        throw new SkeinError("bad-input", `A settings range has two columns, name and value; the row for "${head.trim()}" has more. Example: seed | 7.`);
      }
      set(head, row[first + 1]);
      continue;
    }
    for (const cell of row.slice(first)) {
      if (isBlank(cell)) continue;
      if (typeof cell !== "string") {
        throw new SkeinError("bad-input", `Settings are text such as "seed=7; intercept=no" or a two-column range of names and values; found ${String(cell)} without a name.`);
      }
      parseSettingsText(cell, set);
    }
  }
  return settings;
}

function parseSettingsText(text: string, set: (name: string, value: unknown) => void): void {
  for (const part of text.split(/[;\n]/)) {
    if (part.trim() === "") continue;
    const equals = part.indexOf("=");
    if (equals < 0) {
      const name = normaliseName(part);
      const hint = RULES[name] ? `write it as ${name}=value (${RULES[name].accepts})` : `the settings are: ${listOfSettings()}`;
      throw new SkeinError("bad-input", `The setting "${part.trim()}" has no value; ${hint}.`);
    }
    set(part.slice(0, equals), part.slice(equals + 1));
  }
}

/** The settings that change a fit, as text for a cache key (headers only change the layout). */
export function fitSettingsKey(settings: FunctionSettings): string {
  return [settings.seed, settings.intercept ? 1 : 0, settings.model, settings.restarts ?? "", settings.tolerance ?? "", settings.maxIterations ?? "", String(settings.background)].join("|");
}
