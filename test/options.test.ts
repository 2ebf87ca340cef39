// @vitest-environment jsdom
/*
 * The one table of options (src/engine/options.ts) against every surface that shows or reads
 * options: the README's table, the worksheet settings parser, the command line's flags and
 * help, and the task pane's controls.
 */
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { FIT_USAGE } from "../src/cli/fitCommand";
import { PREDICT_USAGE } from "../src/cli/predictCommand";
import { SCAN_USAGE } from "../src/cli/scanCommand";
import { defaultText, MAX_COMPONENTS, OPTIONS, optionSpec, type OptionName } from "../src/engine/options";
import { parseSettings, SETTING_NAMES } from "../src/functions/settings";
import { EngineService } from "../src/service/engineService";
import { mountBrowserPane } from "../taskpane/mountPane";
import { formulaFor } from "../taskpane/placement";
import { inventedSheet } from "./support/taskpaneFixtures";
import { runCli } from "./support/runCli";

const ROOT = join(__dirname, "..");
const SAMPLE = join(ROOT, "sample-workbooks", "delivery-fleet.csv");
/** Settings are the options that are not the k / kmax argument. */
const SETTINGS = OPTIONS.filter((spec) => spec.name !== "k" && spec.name !== "kmax");

const run = runCli;

const oneLine = (text: string) => text.replace(/\s+/g, " ");

describe("the README's table of options", () => {
  it("has one row per option of the engine's table, with the same meaning, range and default", () => {
    const readme = readFileSync(join(ROOT, "README.md"), "utf8");
    const rows = readme.split("\n").filter((line) => line.startsWith("| `") && line.split("|").length === 6);
    for (const spec of OPTIONS) {
      expect(rows, spec.name).toContain(`| \`${spec.name}\` | ${spec.meaning} | ${spec.accepts} | ${defaultText(spec)} |`);
    }
  });
});

describe("the worksheet functions' k and kmax", () => {
  it("are documented with the table's K cap", () => {
    const source = readFileSync(join(ROOT, "src", "functions", "functions.ts"), "utf8");
    const documented = source.match(/@param \[k(max)?\] [^\n]*/g) ?? [];
    expect(documented.length).toBe(6);
    for (const line of documented) expect(line).toContain(`from 1 to ${MAX_COMPONENTS}`);
  });
});

describe("the worksheet settings", () => {
  it("are the table's options (without the k argument) plus headers, with the table's defaults", () => {
    expect([...SETTING_NAMES].sort()).toEqual([...SETTINGS.map((spec) => spec.name), "headers"].sort());
    const defaults = parseSettings(null);
    expect(defaults.seed).toBe(optionSpec("seed").default);
    expect(defaults.intercept).toBe(optionSpec("intercept").default);
    expect(defaults.model).toBe(optionSpec("model").default);
  });

  it("accept each whole-number setting's ends and reject one past them, saying what is accepted", () => {
    for (const spec of SETTINGS.filter((s) => s.type === "whole number")) {
      expect(() => parseSettings(`${spec.name}=${spec.low}`)).not.toThrow();
      expect(() => parseSettings(`${spec.name}=${spec.high}`)).not.toThrow();
      for (const outside of [spec.low! - 1, spec.high! + 1]) {
        expect(() => parseSettings(`${spec.name}=${outside}`)).toThrow(`The setting ${spec.name} must be ${spec.accepts}`);
      }
    }
    expect(() => parseSettings("tolerance=1")).toThrow(optionSpec("tolerance").accepts);
    expect(() => parseSettings("model=mixed")).toThrow(optionSpec("model").accepts);
  });
});

describe("the command line", () => {
  const verbs: [string, string, OptionName[]][] = [
    ["fit", FIT_USAGE, ["k", "model", "seed", "restarts", "tolerance", "max_iterations", "intercept"]],
    ["scan", SCAN_USAGE, ["kmax", "model", "seed", "restarts", "tolerance", "max_iterations", "intercept"]],
    ["predict", PREDICT_USAGE, ["k", "model", "seed", "restarts", "tolerance", "max_iterations", "intercept"]],
  ];

  it("documents each option flag with the table's meaning, range and default", () => {
    for (const [verb, usage, names] of verbs) {
      const help = oneLine(usage);
      for (const name of names) {
        const spec = optionSpec(name);
        expect(help, `${verb} --${spec.flag}`).toContain(`--${spec.flag}`);
        expect(help, `${verb} --${spec.flag}`).toContain(oneLine(spec.meaning));
        if (spec.type === "whole number" || spec.type === "number") expect(help, `${verb} --${spec.flag}`).toContain(spec.accepts);
        const required = verb === "scan" && name === "kmax";
        if (required) expect(help).toContain(`(required)`);
        else if (spec.type !== "yes/no") expect(help, `${verb} --${spec.flag}`).toContain(`(default ${defaultText(spec)})`);
      }
    }
  });

  it("has one K cap, the table's, in every verb", async () => {
    const base = [SAMPLE, "--y", "Fuel used (L)"];
    const tooMany = String(MAX_COMPONENTS + 1);
    for (const argv of [["fit", ...base, "--k", tooMany], ["predict", ...base, "--k", tooMany, "--new", SAMPLE], ["scan", ...base, "--k-max", tooMany]]) {
      const { status, stderr } = await run(...argv);
      expect(status, argv.join(" ")).toBe(2);
      expect(stderr).toContain(`must be a whole number from 1 to ${MAX_COMPONENTS}`);
    }
  });

  it("passes --tolerance and --max-iterations to the engine", async () => {
    const { status, stdout } = await run("fit", SAMPLE, "--y", "Fuel used (L)", "--k", "3", "--max-iterations", "2", "--tolerance", "1e-12", "--json");
    expect(status).toBe(0);
    const report = JSON.parse(stdout);
    expect(report.refinement.iterations).toBeLessThanOrEqual(2);
    expect(report.refinement.converged).toBe(false);
    // The not-converged warning names the control skein fit has.
    expect(report.warnings.find((w: string) => /^Not converged/.test(w))).toMatch(/or allow more iterations with --max-iterations\.$/);
    const bad = await run("fit", SAMPLE, "--y", "Fuel used (L)", "--tolerance", "2");
    expect(bad.status).toBe(2);
    expect(bad.stderr).toContain(`--tolerance must be ${optionSpec("tolerance").accepts}`);
  });
});

describe("the task pane's controls", () => {
  function mount() {
    document.body.innerHTML = `<main id="app"></main>`;
    const rows = inventedSheet();
    const csv = rows.map((r) => r.map((v) => (v === null ? "" : String(v))).join(",")).join("\n");
    return { rows, ...mountBrowserPane(document.getElementById("app")!, new EngineService(), async () => csv) };
  }
  const $ = <T extends Element>(selector: string) => document.querySelector<T>(selector)!;

  it("take their ranges, choices and defaults from the table", () => {
    mount();
    for (const [id, name] of [["k-max", "kmax"], ["seed", "seed"]] as const) {
      const input = $<HTMLInputElement>(`#${id}`);
      const spec = optionSpec(name);
      expect([input.min, input.max, input.value]).toEqual([String(spec.low), String(spec.high), String(spec.default)]);
    }
    const model = $<HTMLSelectElement>("#model");
    expect(Array.from(model.options).map((o) => o.value)).toEqual(optionSpec("model").choices);
    expect(model.value).toBe(optionSpec("model").default);
    expect($<HTMLInputElement>("#intercept").checked).toBe(optionSpec("intercept").default);
  });

  it("fit without an intercept and with the joint model when asked, and place formulas that say so", async () => {
    const { pane, loadRows, rows } = mount();
    await loadRows!(rows, undefined, "invented.csv");
    const intercept = $<HTMLInputElement>("#intercept");
    intercept.checked = false;
    intercept.dispatchEvent(new Event("change"));
    const model = $<HTMLSelectElement>("#model");
    model.value = "joint";
    model.dispatchEvent(new Event("change"));
    await new Promise((resolve) => setTimeout(resolve, 0));
    expect([pane.state.intercept, pane.state.model]).toEqual([false, "joint"]);
    pane.setKMax(2);
    await pane.runScan();
    const fit = pane.state.fit!;
    expect([fit.intercept, fit.model]).toEqual([false, "joint"]);
    // The intercept slot stays 0 without an intercept.
    expect(fit.components.map((c) => c.coefficients[0])).toEqual([0, 0]);
    const formula = formulaFor("fit", { yAddress: "Data!A1:A9", xAddress: "Data!B1:B9", rangeRows: 9, k: 2, seed: fit.seed, intercept: fit.intercept, model: fit.model, outputs: ["fit"], mode: "formulas" });
    expect(formula).toBe(`=SKEIN.FIT(Data!A1:A9, Data!B1:B9, 2, "seed=${fit.seed}; intercept=no; model=joint")`);
    // A value the table does not accept is put back to the default.
    const kMax = $<HTMLInputElement>("#k-max");
    kMax.value = String(MAX_COMPONENTS + 5);
    kMax.dispatchEvent(new Event("change"));
    expect(pane.state.kMax).toBe(optionSpec("kmax").default);
  });
});
