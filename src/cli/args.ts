import { SkeinError } from "../engine/errors";
import { defaultText, optionSpec, readOptionValue, type OptionName, type OptionValue } from "../engine/options";

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

/**
 * The items of a comma-separated list, trimmed, empty items rejected. An item
 * in double quotes may hold commas ("Cost, total"); "" inside quotes is a quote.
 */
export function parseList(text: string, flag: string, command: string): string[] {
  const items: string[] = [];
  let i = 0;
  for (;;) {
    while (text[i] === " ") i++;
    let item: string;
    if (text[i] === '"') {
      let value = "";
      let from = i + 1;
      for (;;) {
        const close = text.indexOf('"', from);
        if (close < 0) throw usageError(command, `--${flag} has a quote that never closes in ${text}; close the quoted name`);
        value += text.slice(from, close);
        if (text[close + 1] === '"') {
          value += '"';
          from = close + 2;
        } else {
          i = close + 1;
          break;
        }
      }
      while (text[i] === " ") i++;
      if (i < text.length && text[i] !== ",") throw usageError(command, `--${flag} has text after the quoted name "${value}"; put a comma after the closing quote`);
      item = value.trim();
    } else {
      const comma = text.indexOf(",", i);
      const end = comma < 0 ? text.length : comma;
      item = text.slice(i, end).trim();
      i = end;
    }
    if (item === "") throw usageError(command, `--${flag} has an empty name in "${text}"; separate names with single commas`);
    items.push(item);
    if (i >= text.length) return items;
    i++; // the comma
  }
}

/** The largest row number of a worksheet. */
const MAX_SHEET_ROW = 1_048_576;

/** The --header-row value: the 1-based row (sheet row, or line of a text file) holding the column names. */
function parseHeaderRow(text: string | undefined, command: string): number | undefined {
  return text === undefined ? undefined : parseWholeNumber(text, "header-row", command, 1, MAX_SHEET_ROW);
}

/** Which part of the data file a command reads: --sheet, --header-row (checked first), then the --x list. */
export function readFileFlags(parsed: ParsedArgs, command: string): { sheet?: string; headerRow?: number; x?: string[] } {
  const { values } = parsed;
  const headerRow = parseHeaderRow(values.get("header-row"), command);
  const xText = values.get("x");
  return { sheet: values.get("sheet"), headerRow, x: xText === undefined ? undefined : parseList(xText, "x", command) };
}

/** Help lines shared by the commands that read a data file. */
export const FILE_OPTIONS_HELP = `
Reading the file:
  --sheet NAME        the worksheet of an .xlsx file (default: the first sheet
                      holding a table of numbers; the output says which)
  --header-row N      the row (line of a text file) holding the column names
                      (default: the first non-empty one); rows above it are
                      ignored, such as a grouping header
Columns are named by header; when no header has the name, a letter (A, B,
..., AA) or #number (#3 = column C) picks by position, so --x "#3,#4" or
--x C,D. A name holding a comma can be quoted: --x '"Cost, total",Units'.
`;


/** What a flag's value is called in the help: --seed S, --k N, --model NAME. */
const PLACEHOLDERS: Record<OptionName, string> = {
  seed: "S",
  intercept: "",
  model: "plain|joint",
  restarts: "N",
  tolerance: "T",
  max_iterations: "N",
  background: "auto|yes|no",
  k: "N",
  kmax: "N",
};

const HELP_WIDTH = 78;

/** `head` then `text` wrapped from column `column` (where a verb's help starts its explanations). */
function wrapHelp(head: string, text: string, column: number): string {
  const HELP_COLUMN = column;
  const lines: string[] = [];
  let line = head.length >= HELP_COLUMN ? head + "\n" + " ".repeat(HELP_COLUMN) : head.padEnd(HELP_COLUMN);
  let lineLength = line.length - (line.lastIndexOf("\n") + 1);
  for (const word of text.split(" ")) {
    if (lineLength + word.length + 1 > HELP_WIDTH && lineLength > HELP_COLUMN) {
      lines.push(line.trimEnd());
      line = " ".repeat(HELP_COLUMN);
      lineLength = HELP_COLUMN;
    }
    line += (lineLength > HELP_COLUMN ? " " : "") + word;
    lineLength += (lineLength > HELP_COLUMN ? 1 : 0) + word.length;
  }
  lines.push(line.trimEnd());
  return lines.join("\n");
}


/** Help lines for options of the table, made from it: flag, meaning, accepted values and default (or what `defaults` says instead, such as "required"). */
export function optionHelp(names: readonly OptionName[], column: number, defaults: Partial<Record<OptionName, string>> = {}): string {
  return names
    .map((name) => {
      const spec = optionSpec(name);
      if (spec.type === "yes/no") return wrapHelp(`  --${spec.flag}`, `do not ${spec.meaning} (default: with one)`, column);
      const head = `  --${spec.flag} ${PLACEHOLDERS[name]}`;
      const range = spec.type === "choice" ? "" : `; ${spec.accepts}`;
      const given = defaults[name];
      return wrapHelp(head, `${spec.meaning}${range} (${given ?? `default ${defaultText(spec)}`})`, column);
    })
    .join("\n");
}

/** The flags of options of the table, for FlagKinds. */
export function optionFlags(names: readonly OptionName[]): FlagKinds {
  return Object.fromEntries(names.map((name) => [optionSpec(name).flag, optionSpec(name).type === "yes/no" ? "switch" : "value"]));
}

/**
 * An option read from its flag, checked against the options table; the table's default when
 * the flag is absent (a yes/no option's switch turns it off).
 */
export function readOption(parsed: ParsedArgs, name: OptionName, command: string): OptionValue {
  const spec = optionSpec(name);
  if (spec.type === "yes/no") return parsed.switches.has(spec.flag) ? !spec.default : spec.default;
  const text = parsed.values.get(spec.flag);
  if (text === undefined) return spec.default;
  const value = readOptionValue(spec, text);
  if (value === undefined) throw usageError(command, `--${spec.flag} must be ${spec.accepts}, not "${text}"`);
  return value;
}

/** Like readOption, but undefined when the flag is absent (the engine then applies the default). */
export function readGivenOption(parsed: ParsedArgs, name: OptionName, command: string): OptionValue | undefined {
  const spec = optionSpec(name);
  if (spec.type !== "yes/no" && !parsed.values.has(spec.flag)) return undefined;
  return readOption(parsed, name, command);
}

/** A comma-separated list of 1-based data row numbers, such as --leave-out 12,140. */
export function parseRowList(text: string, flag: string, command: string): number[] {
  return parseList(text, flag, command).map((item) => parseWholeNumber(item, flag, command, 1, 2 ** 31 - 1));
}

/** --background as the engine takes it: "auto" (the table's default), true for yes, false for no. */
export function readBackground(parsed: ParsedArgs, command: string): boolean | "auto" {
  const value = readOption(parsed, "background", command);
  return value === "yes" ? true : value === "no" ? false : "auto";
}
