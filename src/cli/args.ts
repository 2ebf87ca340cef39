import { SkeinError } from "../engine/errors";
import type { MixtureModel } from "../engine/mixtureTypes";

/** How each flag of a command is used: followed by a value, or on its own. */
export type FlagKinds = Record<string, "value" | "switch">;

export interface ParsedArgs {
  positionals: string[];
  /** Flags that take a value, by name without the dashes. */
  values: Map<string, string>;
  /** Switches that were given, by name without the dashes. */
  switches: Set<string>;
}

function usageError(command: string, message: string): SkeinError {
  return new SkeinError("bad-input", `${message} (see skein ${command} --help)`);
}

/**
 * Splits a command's arguments into positionals, `--flag value` /
 * `--flag=value` pairs and `--switch`es, checked against `kinds`. Anything
 * unknown, repeated or missing its value is a bad-input SkeinError naming the
 * flag. A lone `--` ends the flags.
 */
export function parseArgs(argv: readonly string[], kinds: FlagKinds, command: string): ParsedArgs {
  const positionals: string[] = [];
  const values = new Map<string, string>();
  const switches = new Set<string>();
  let flagsEnded = false;
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i];
    if (flagsEnded || !arg.startsWith("-") || arg === "-" || /^-\d/.test(arg)) {
      positionals.push(arg);
      continue;
    }
    if (arg === "--") {
      flagsEnded = true;
      continue;
    }
    const equals = arg.indexOf("=");
    const name = (equals >= 0 ? arg.slice(0, equals) : arg).replace(/^--?/, "");
    const kind = kinds[name];
    if (kind === undefined) {
      const known = Object.keys(kinds).map((k) => `--${k}`).join(", ");
      throw usageError(command, `Unknown option ${arg.slice(0, equals >= 0 ? equals : undefined)} for skein ${command}; the options are ${known}`);
    }
    if (values.has(name) || switches.has(name)) throw usageError(command, `--${name} is given twice; give it once`);
    if (kind === "switch") {
      if (equals >= 0) throw usageError(command, `--${name} takes no value; write just --${name}`);
      switches.add(name);
      continue;
    }
    let value: string | undefined;
    if (equals >= 0) {
      value = arg.slice(equals + 1);
    } else if (i + 1 < argv.length && !argv[i + 1].startsWith("--")) {
      value = argv[++i];
    }
    if (value === undefined || value === "") throw usageError(command, `--${name} needs a value, as in --${name} VALUE`);
    values.set(name, value);
  }
  return { positionals, values, switches };
}

/** A whole number from a flag's text, within [min, max]; a bad-input SkeinError otherwise. */
export function parseWholeNumber(text: string, flag: string, command: string, min: number, max: number): number {
  const value = /^[+-]?\d+$/.test(text.trim()) ? Number(text) : NaN;
  if (!Number.isSafeInteger(value) || value < min || value > max) {
    throw usageError(command, `--${flag} must be a whole number from ${min} to ${max}, not "${text}"`);
  }
  return value;
}

/** The items of a comma-separated list, trimmed, empty items rejected. */
export function parseList(text: string, flag: string, command: string): string[] {
  const items = text.split(",").map((item) => item.trim());
  if (items.some((item) => item === "")) {
    throw usageError(command, `--${flag} has an empty name in "${text}"; separate names with single commas`);
  }
  return items;
}

/** The --model value: plain (the default) or joint. */
export function parseModel(text: string | undefined, command: string): MixtureModel {
  if (text === undefined) return "plain";
  if (text === "plain" || text === "joint") return text;
  throw new SkeinError("bad-input", `--model must be plain or joint, not "${text}" (see skein ${command} --help)`);
}

/** A comma-separated list of 1-based data row numbers, such as --leave-out 12,140. */
export function parseRowList(text: string, flag: string, command: string): number[] {
  return parseList(text, flag, command).map((item) => parseWholeNumber(item, flag, command, 1, 2 ** 31 - 1));
}

/** --background: "auto" (the default), "yes" or "no". */
export function parseBackground(text: string | undefined, command: string): boolean | "auto" {
  if (text === undefined) return "auto";
  const value = text.trim().toLowerCase();
  if (value === "auto") return "auto";
  if (value === "yes") return true;
  if (value === "no") return false;
  throw new SkeinError("bad-input", `--background must be auto, yes or no; got "${text}". Example: skein ${command} data.csv --y COLUMN --background yes`);
}
