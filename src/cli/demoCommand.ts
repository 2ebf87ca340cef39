import { existsSync, promises as fs } from "fs";
import * as path from "path";
import { buildDesign, type Design } from "../engine/design";
import { checkSeparation } from "../engine/checkSeparation";
import { SkeinError } from "../engine/errors";
import type { MixtureFit } from "../engine/mixtureTypes";
import { scanComponents } from "../engine/scanComponents";
import { standardErrors } from "../engine/standardErrors";
import type { ScanResult, SeparationReport, StandardErrorReport } from "../engine/trustTypes";
import { resultsWorkbook } from "../io/resultsWorkbook";
import { readTable } from "../io/readTable";
import { componentPlot } from "../report/componentPlot";
import { scatterSvg } from "../report/scatterSvg";
import { defaultText, optionSpec } from "../engine/options";
import { parseArgs, readOption, type FlagKinds } from "./args";
import { columnRange, columnsRange, findColumn, headerNames } from "./columns";
import { compareWithTruth, type TruthComparison, type TruthComponent } from "./compareWithTruth";
import { formatNumber } from "./formatTable";
import type { CommandIO } from "./main";

export const DEMO_USAGE = `Usage: skein demo [options]

Runs Skein on the sample workbooks (invented data in three made-up scenarios):
for each, reads the Data sheet, tries K = 1 to kmax components, fits the
suggested K, prints what it found beside the hidden truth the data were made
from, and writes OUT/<name>-results.xlsx and OUT/<name>.svg.

  --out DIR         folder for the results (default: out)
  --samples DIR     folder holding truth.json and the workbooks
                    (default: sample-workbooks)
  --only NAME       run one scenario: delivery-fleet, shop-chain or lab-calibration
  --seed S          seed of every fit, ${optionSpec("seed").accepts}
                    (default ${defaultText(optionSpec("seed"))})
  --help            show this help
`;

const DEMO_FLAGS: FlagKinds = { out: "value", samples: "value", only: "value", seed: "value", help: "switch", h: "switch" };

/** One scenario as sample-workbooks/truth.json describes it. */
export interface ScenarioTruth {
  name: string;
  title: string;
  workbook: string;
  csv: string;
  dataSheet: string;
  /** The data ranges the workbook's SKEIN formulas use, such as "Data!B2:B601". */
  yRange: string;
  xRange: string;
  rows: number;
  response: string;
  predictors: string[];
  model: "plain" | "joint";
  kMax: number;
  components: TruthComponent[];
  trueComponents: number[];
}

export interface DemoOptions {
  samples: string;
  out: string;
  seed: number;
}

export interface DemoScenarioResult {
  truth: ScenarioTruth;
  design: Design;
  scan: ScanResult;
  fit: MixtureFit;
  separation: SeparationReport;
  errors: StandardErrorReport & { warnings: string[] };
  comparison: TruthComparison;
  /** Milliseconds: reading, scan, checks (errors and separation), writing files. */
  timings: { read: number; scan: number; checks: number; write: number };
  files: string[];
  /** The printed report of this scenario. */
  report: string;
}

/** Where the sample workbooks are when no --samples is given: ./sample-workbooks, else beside the program. */
function defaultSamples(): string {
  const here = path.resolve("sample-workbooks");
  if (existsSync(path.join(here, "truth.json"))) return here;
  // src/cli (tsx) and dist/cli (bundle) are both two folders below the project.
  return path.resolve(__dirname, "..", "..", "sample-workbooks");
}

export async function readTruth(samples: string): Promise<ScenarioTruth[]> {
  const file = path.join(samples, "truth.json");
  let text: string;
  try {
    text = await fs.readFile(file, "utf8");
  } catch {
    throw new SkeinError("bad-input", `No sample workbooks at ${samples} (truth.json is missing); run npx tsx scripts/makeSampleWorkbooks.ts, or give --samples DIR.`);
  }
  return (JSON.parse(text) as { scenarios: ScenarioTruth[] }).scenarios;
}

function seconds(ms: number): string {
  return `${(ms / 1000).toFixed(2)} s`;
}

/**
 * "value ± se" with the standard error to two significant digits and the
 * estimate to the same decimal place: digits beyond those are noise.
 */
function withError(value: number, se: number): string {
  if (!Number.isFinite(se)) return `${formatNumber(value)} (SE not available)`;
  if (se === 0) return `${formatNumber(value)} ± 0`;
  const decimals = Math.min(12, Math.max(0, 1 - Math.floor(Math.log10(se))));
  return `${value.toFixed(decimals)} ± ${se.toFixed(decimals)}`;
}

/**
 * A separation gap in noise SDs. Past a million the number only says how close
 * to zero the noise floor is, so it is shown as a bound.
 */
function gapText(gap: number): string {
  if (!Number.isFinite(gap)) return gap > 0 ? "unlimited" : "-";
  return gap > 1e6 ? "> 1e6" : formatNumber(gap);
}

function percent(share: number): string {
  return `${(100 * share).toFixed(1)}%`;
}

/** The columns of a small text table, first column left-aligned, the rest right-aligned. */
function table(rows: string[][], indent: string): string[] {
  const widths = rows[0].map((_, j) => Math.max(...rows.map((row) => row[j].length)));
  return rows.map((row) => indent + row.map((cell, j) => (j === 0 ? cell.padEnd(widths[j]) : cell.padStart(widths[j]))).join("  ").trimEnd());
}

function formatScenario(result: Omit<DemoScenarioResult, "report">, outDisplay: string): string {
  const { truth, design, scan, fit, separation, errors, comparison, timings } = result;
  const lines: string[] = [];
  const skipped = design.skipped.length ? `, ${design.skipped.length} skipped` : "";
  lines.push(`== ${truth.title}`);
  lines.push(`   ${truth.workbook}, sheet ${truth.dataSheet}: ${truth.response} on ${truth.predictors.join(", ")}; ${design.n} rows${skipped}; ${fit.model} model`);
  lines.push("");

  lines.push(`How many components: K = ${scan.chosenK}`);
  lines.push(`   Rule: ${scan.rule}`);
  const scanTable = [["K", "log-likelihood", "BIC", "ICL", "smallest gap", "converged", "note"]];
  const footnotes: string[] = [];
  for (const row of scan.rows) {
    const note = row.k === scan.chosenK ? "suggested" : row.flag ? `(${footnotes.push(`(${footnotes.length + 1}) K = ${row.k}: ${row.flag}`)})` : "";
    scanTable.push([
      String(row.k),
      formatNumber(row.logLikelihood),
      formatNumber(row.bic),
      formatNumber(row.icl),
      row.k === 1 ? "-" : gapText(row.minSeparation),
      row.converged ? "yes" : "no",
      note,
    ]);
  }
  lines.push(...table(scanTable, "   "));
  for (const footnote of footnotes) lines.push(`   ${footnote}`);
  lines.push("");

  // Noiseless fits have no curvature to take standard errors from; say so once, not per number.
  const anyErrors = [...errors.weights, ...errors.sigmas].some(Number.isFinite);
  const source = errors.method === "bootstrap" ? "bootstrap" : "observed information";
  lines.push(anyErrors ? `Components (estimate ± standard error, ${source})` : "Components (standard errors not available, see the warnings)");
  const show = (value: number, se: number): string => (anyErrors ? withError(value, se) : formatNumber(value));
  const coefficientNames = ["intercept", ...design.predictorNames];
  fit.components.forEach((component, c) => {
    lines.push(`   ${c + 1}: weight ${show(component.weight, errors.weights[c])}, noise SD ${show(component.sigma, errors.sigmas[c])}`);
    const parts = coefficientNames.map((name, j) => `${name} ${show(component.coefficients[j], errors.coefficients[c][j])}`);
    if (!fit.intercept) parts.shift();
    // A few coefficients a line keeps lines readable with many predictors.
    const perLine = parts.length > 4 ? 3 : 2;
    for (let j = 0; j < parts.length; j += perLine) lines.push(`      ${parts.slice(j, j + perLine).join(";  ")}`);
  });
  lines.push("");

  if (fit.k > 1) {
    const closest = separation.pairs.reduce((a, b) => (b.gap < a.gap ? b : a));
    lines.push(`Separation: closest pair ${closest.a + 1} and ${closest.b + 1}, gap ${gapText(closest.gap)} noise SDs; estimated misclassification ${percent(separation.misclassification)}; entropy-based crispness ${formatNumber(separation.normalisedEntropy)}`);
  } else {
    lines.push("Separation: one component, nothing to separate");
  }
  const warnings = [...new Set([...fit.warnings, ...separation.warnings, ...errors.warnings])];
  lines.push(warnings.length ? `Warnings:` : "Warnings: none");
  for (const warning of warnings) lines.push(`   - ${warning}`);
  lines.push(`Convergence: warm start ${fit.warmStart.converged ? "converged" : "NOT converged"} (${fit.warmStart.method}), refinement ${fit.refinement.converged ? "converged" : "NOT converged"} after ${fit.refinement.iterations} iteration${fit.refinement.iterations === 1 ? "" : "s"}`);

  const kVerdict = scan.chosenK === comparison.trueK ? "found" : `NOT found (suggested ${scan.chosenK})`;
  const matched = comparison.match.map((c, t) => ({ c, t })).filter(({ c }) => c >= 0);
  const worst = matched.reduce((a, b) => (comparison.coefficientError[b.t] > comparison.coefficientError[a.t] ? b : a), matched[0]);
  let errorText = "";
  if (worst) {
    const inSe = comparison.errorInStandardErrors[worst.t];
    const seText = Number.isFinite(inSe) ? ` (${formatNumber(inSe)} standard errors)` : "";
    errorText = `; largest coefficient difference ${formatNumber(comparison.coefficientError[worst.t])}${seText}, in "${truth.components[worst.t].name}"`;
  }
  lines.push(`Against the invented truth: K = ${comparison.trueK} ${kVerdict}${errorText}; ${percent(comparison.labelAgreement)} of rows given their true component`);
  lines.push(`Time: read ${seconds(timings.read)}, scan K = 1..${truth.kMax} ${seconds(timings.scan)}, standard errors and checks ${seconds(timings.checks)}, files ${seconds(timings.write)}`);
  lines.push(`Wrote ${result.files.map((file) => path.join(outDisplay, path.basename(file))).join(" and ")}`);
  return lines.join("\n") + "\n";
}

/** Runs one scenario: read, scan, fit the suggested K, check, compare with the truth, write files. */
export async function runDemoScenario(truth: ScenarioTruth, options: DemoOptions): Promise<DemoScenarioResult> {
  let started = performance.now();
  const table = await readTable(path.join(options.samples, truth.workbook), truth.dataSheet);
  const names = headerNames(table.rows, truth.workbook);
  const yColumn = findColumn(names, truth.response, truth.workbook);
  const xColumns = truth.predictors.map((name) => findColumn(names, name, truth.workbook));
  const design = buildDesign(columnRange(table.rows, yColumn), columnsRange(table.rows, xColumns), { headers: true });
  const read = performance.now() - started;

  started = performance.now();
  const scan = scanComponents(design, { kMax: truth.kMax, seed: options.seed, model: truth.model });
  const chosen = scan.rows.find((row) => row.k === scan.chosenK);
  if (!chosen) throw new Error(`The scan suggested K = ${scan.chosenK} but holds no fit for it.`);
  const fit = chosen.fit;
  const scanTime = performance.now() - started;

  started = performance.now();
  const errors = standardErrors(design, fit);
  const separation = checkSeparation(design, fit);
  const comparison = compareWithTruth(design, fit, truth.components, truth.trueComponents, design.rowIndex, errors.coefficients);
  const checks = performance.now() - started;

  started = performance.now();
  await fs.mkdir(options.out, { recursive: true });
  const workbookFile = path.join(options.out, `${truth.name}-results.xlsx`);
  const svgFile = path.join(options.out, `${truth.name}.svg`);
  const workbook = resultsWorkbook({
    rows: table.rows,
    design,
    fit,
    standardErrors: errors,
    notes: [
      `Invented demo data (${truth.workbook}); K = ${fit.k} suggested by the scan: ${scan.rule}`,
      `Written by skein demo with seed ${options.seed}.`,
    ],
  });
  await workbook.xlsx.writeFile(workbookFile);
  const plot = componentPlot(design, fit, `${truth.title} (invented data)`);
  await fs.writeFile(svgFile, scatterSvg(plot));
  const write = performance.now() - started;

  const partial = { truth, design, scan, fit, separation, errors, comparison, timings: { read, scan: scanTime, checks, write }, files: [workbookFile, svgFile] };
  const outDisplay = path.relative(process.cwd(), options.out) || ".";
  return { ...partial, report: formatScenario(partial, outDisplay) };
}

/** `skein demo`: every sample scenario (or --only one), one report each, then the total time. */
export async function demoCommand(argv: readonly string[], io: CommandIO): Promise<number> {
  const args = parseArgs(argv, DEMO_FLAGS, "demo");
  if (args.switches.has("help") || args.switches.has("h")) {
    io.stdout(DEMO_USAGE);
    return 0;
  }
  if (args.positionals.length > 0) throw new SkeinError("bad-input", `skein demo takes no file; it runs on the sample workbooks (see skein demo --help)`);
  const options: DemoOptions = {
    samples: path.resolve(args.values.get("samples") ?? defaultSamples()),
    out: path.resolve(args.values.get("out") ?? "out"),
    seed: readOption(args, "seed", "demo") as number,
  };
  let scenarios = await readTruth(options.samples);
  const only = args.values.get("only");
  if (only !== undefined) {
    scenarios = scenarios.filter((scenario) => scenario.name === only);
    if (scenarios.length === 0) {
      const known = (await readTruth(options.samples)).map((scenario) => scenario.name).join(", ");
      throw new SkeinError("bad-input", `There is no sample scenario "${only}"; the scenarios are ${known}`);
    }
  }

  const started = performance.now();
  io.stdout(`Skein demo: ${scenarios.length} sample workbook${scenarios.length === 1 ? "" : "s"} of invented data (made-up scenarios; the true hidden structure is on each workbook's About sheet)\n\n`);
  for (const scenario of scenarios) {
    const result = await runDemoScenario(scenario, options);
    io.stdout(result.report + "\n");
  }
  io.stdout(`Done in ${seconds(performance.now() - started)}. Open the .svg files in a browser and the -results.xlsx files in Excel; the sample workbooks themselves hold live SKEIN formulas (sheet "Skein").\n`);
  return 0;
}
