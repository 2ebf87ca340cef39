/**
 * The optional `settings` argument of every SKEIN function: either text such as
 * "seed=7; intercept=no; model=joint", or a two-column range of name/value pairs. Every name
 * and value is checked once, here, against the engine's options table (src/engine/options.ts)
 * plus the worksheet-only headers setting; a wrong one is rejected with a message that names
 * the setting, what it accepts and what it received.
 */
import { SkeinError } from "../engine/errors";
import type { MixtureModel } from "../engine/mixtureTypes";
import { OPTIONS, optionSpec, readOptionValue, type OptionName, type OptionSpec, type OptionValue } from "../engine/options";

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

/** Defaults: the options table's seed, intercept and model; the engine's own restarts, tolerance and iterations. */
export const DEFAULT_SETTINGS: Readonly<FunctionSettings> = {
  seed: optionSpec("seed").default as number,
  intercept: optionSpec("intercept").default as boolean,
  model: optionSpec("model").default as MixtureModel,
  headers: "auto",
  background: backgroundSetting(optionSpec("background").default),
};

/** The background option's text ("auto", "yes", "no") or a logical cell as the engine takes it. */
export function backgroundSetting(value: unknown): boolean | "auto" {
  if (typeof value === "boolean") return value;
  const read = readOptionValue(optionSpec("background"), value);
  return read === "yes" ? true : read === "no" ? false : "auto";
}

type Apply = (settings: FunctionSettings, value: unknown, name: string) => void;

interface SettingRule {
  accepts: string;
  apply: Apply;
}

/** Where each engine option goes in FunctionSettings (k and kmax are arguments, not settings). */
const STORED_AS: Partial<Record<OptionName, keyof FunctionSettings>> = {
  seed: "seed",
  intercept: "intercept",
  model: "model",
  restarts: "restarts",
  tolerance: "tolerance",
  max_iterations: "maxIterations",
};

function ruleOf(spec: OptionSpec, field: keyof FunctionSettings): SettingRule {
  return {
    accepts: spec.accepts,
    apply: (settings, value, name) => {
      const read = readOptionValue(spec, value);
      if (read === undefined) throw badValue(name, spec.accepts, value);
      (settings as unknown as Record<string, OptionValue>)[field] = read;
    },
  };
}

/** The table of settings: the engine's options table, then headers (which shapes only the output). */
const RULES: Record<string, SettingRule> = {
  ...Object.fromEntries(OPTIONS.filter((spec) => STORED_AS[spec.name] !== undefined).map((spec) => [spec.name, ruleOf(spec, STORED_AS[spec.name]!)])),
  headers: {
    accepts: "yes or no",
    apply: (s, v, n) => {
      const read = readOptionValue(optionSpec("intercept"), v);
      if (read === undefined) throw badValue(n, "yes or no", v);
      s.headers = read as boolean;
    },
  },
  background: {
    accepts: optionSpec("background").accepts,
    apply: (s, v, n) => {
      if (typeof v !== "boolean" && readOptionValue(optionSpec("background"), v) === undefined) throw badValue(n, optionSpec("background").accepts, v);
      s.background = backgroundSetting(v);
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
