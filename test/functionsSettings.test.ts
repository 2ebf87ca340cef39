import { describe, expect, it } from "vitest";
import { SkeinError } from "../src/engine/errors";
import { DEFAULT_SETTINGS, fitSettingsKey, parseSettings, SETTING_NAMES } from "../src/functions/settings";

function rejection(argument: unknown): SkeinError {
  try {
    parseSettings(argument);
  } catch (error) {
    expect(error).toBeInstanceOf(SkeinError);
    expect((error as SkeinError).code).toBe("bad-input");
    return error as SkeinError;
  }
  throw new Error("expected the settings to be rejected");
}

describe("the settings argument", () => {
  it("is optional: null, undefined, a blank cell or an empty text give the defaults", () => {
    for (const omitted of [null, undefined, [[null]], [[""]], [["  "]], ""]) {
      expect(parseSettings(omitted)).toEqual(DEFAULT_SETTINGS);
    }
  });

  it("reads the text form, in any case, with spaces, hyphens and a trailing semicolon", () => {
    expect(parseSettings([["Seed = 7; intercept=NO; model=joint; Max Iterations=50; restarts=4; tolerance=1e-9; headers=yes;"]])).toEqual({
      seed: 7,
      intercept: false,
      model: "joint",
      maxIterations: 50,
      restarts: 4,
      tolerance: 1e-9,
      headers: true,
      background: "auto",
    });
    expect(parseSettings([["max-iterations=20"]]).maxIterations).toBe(20);
    expect(parseSettings([["background=YES"]]).background).toBe(true);
    expect(parseSettings([["background=no"]]).background).toBe(false);
    expect(parseSettings([["Background = Auto"]]).background).toBe("auto");
    expect(() => parseSettings([["background=sometimes"]])).toThrow("The setting background must be auto, yes or no; it was \"sometimes\".");
  });

  it("reads a two-column range of names and values, with numbers and logical values as Excel passes them", () => {
    const range = [
      ["seed", 12],
      ["intercept", false],
      [null, null],
      ["model", "plain"],
      ["headers", true],
    ];
    expect(parseSettings(range)).toEqual({ ...DEFAULT_SETTINGS, seed: 12, intercept: false, model: "plain", headers: true });
  });

  it("reads a column of name=value texts", () => {
    expect(parseSettings([["seed=3"], ["model=joint"]])).toMatchObject({ seed: 3, model: "joint" });
  });

  it("rejects an unknown name, listing every valid one", () => {
    const error = rejection([["sed=7"]]);
    expect(error.message).toContain('Unknown setting "sed"');
    for (const name of SETTING_NAMES) expect(error.message).toContain(name);
  });

  it("rejects bad values, naming the setting, what it accepts and what it got", () => {
    const cases: [unknown, string, string][] = [
      [[["seed=-1"]], "seed must be a whole number from 0 to 4294967295", '"-1"'],
      [[["seed", 2.5]], "seed must be a whole number", "2.5"],
      [[["intercept=maybe"]], "intercept must be yes or no", '"maybe"'],
      [[["model=curved"]], "model must be plain", '"curved"'],
      [[["tolerance=0"]], "tolerance must be a number above 0 and below 1", '"0"'],
      [[["max_iterations=0"]], "max_iterations must be a whole number from 1 to 100000", '"0"'],
      [[["restarts=many"]], "restarts must be a whole number from 0 to 1000", '"many"'],
      [[["headers", null]], "headers must be yes or no", "nothing"],
    ];
    for (const [argument, expected, shown] of cases) {
      const message = rejection(argument).message;
      expect(message).toContain(expected);
      expect(message).toContain(`it was ${shown}`);
    }
  });

  it("rejects a name without a value, a setting given twice, and a value without a name", () => {
    expect(rejection([["seed"]]).message).toContain("write it as seed=value");
    expect(rejection([["seed=1; seed=2"]]).message).toContain("seed is given twice");
    expect(rejection([[7]]).message).toContain("found 7 without a name");
    expect(rejection([["seed", 7, 8]]).message).toContain("two columns");
  });

  it("keys a fit by the settings that change it, not by headers", () => {
    const base = parseSettings([["seed=7"]]);
    expect(fitSettingsKey(parseSettings([["seed=7; headers=no"]]))).toBe(fitSettingsKey(base));
    for (const other of ["seed=8", "seed=7; intercept=no", "seed=7; model=joint", "seed=7; restarts=2", "seed=7; tolerance=0.001", "seed=7; max_iterations=9"]) {
      expect(fitSettingsKey(parseSettings([[other]]))).not.toBe(fitSettingsKey(base));
    }
  });
});
