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
import { alignColumns, formatColumn, formatExact, formatGap, formatNoiseSd, formatNumber, formatPercent, formatPlusMinus } from "../report/formatNumber";
import { exactComponents, isExactFit } from "../engine/exactFit";
import { startsAgree } from "../engine/scanComponents";
import type { CommandIO } from "./commandIO";

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
  --verbose         also show how the starts were made
  --help            show this help
`;

const DEMO_FLAGS: FlagKinds = { out: "value", samples: "value", only: "value", seed: "value", verbose: "switch", help: "switch", h: "switch" };

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
  /** Also show how the starts were made. */
  verbose?: boolean;
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

type ScenarioOutcome = Omit<DemoScenarioResult, "report">;

function formatScenario(result: ScenarioOutcome, outDisplay: string, verbose = false): string {
  const { truth, design, fit, timings } = result;
  const skipped = design.skipped.length ? `, ${design.skipped.length} skipped` : "";
  const exact = exactComponents(fit, design.y);
  const lines = [
    `== ${truth.title}`,
    `   ${truth.workbook}, sheet ${truth.dataSheet}: ${truth.response} on ${truth.predictors.join(", ")}; ${design.n} rows${skipped}; ${fit.model} model`,
    "",
    ...scanLines(result),
    "",
    ...componentLines(result, exact),
    "",
    ...checkLines(result, exact.every(Boolean), verbose),
    truthLine(result),
    `Time: read ${seconds(timings.read)}, scan K = 1..${truth.kMax} ${seconds(timings.scan)}, standard errors and checks ${seconds(timings.checks)}, files ${seconds(timings.write)}`,
    `Wrote ${result.files.map((file) => path.join(outDisplay, path.basename(file))).join(" and ")}`,
  ];
  return lines.join("\n") + "\n";
}

/** The suggested K and its rule, a table of every K tried, and a numbered note on why each other K was not suggested. */
function scanLines({ scan, design }: ScenarioOutcome): string[] {
  const lines = [`How many components: K = ${scan.chosenK}`, `   Rule: ${scan.rule}`];
  const bic = formatColumn(scan.rows.map((row) => row.bic));
  const icl = formatColumn(scan.rows.map((row) => row.icl));
  const logLikelihood = formatColumn(scan.rows.map((row) => row.logLikelihood));
  const scanTable = [["K", "BIC", "ICL", "log-likelihood", "smallest gap (noise SDs)", "starts agree", "converged", "note"]];
  const footnotes: string[] = [];
  scan.rows.forEach((row, r) => {
    const note = row.k === scan.chosenK ? "suggested" : row.note ? `(${footnotes.push(`(${footnotes.length + 1}) K = ${row.k}: ${row.note}`)})` : "";
    const rowExact = isExactFit(row.fit, design.y);
    scanTable.push([String(row.k), bic[r], icl[r], logLikelihood[r], row.k === 1 ? "-" : rowExact ? formatGap(Infinity) : formatGap(row.minSeparation), row.startsAgree ? "yes" : "no", row.converged ? "yes" : "no", note]);
  });
  lines.push(...alignColumns(scanTable, "   ", 2));
  for (const footnote of footnotes) lines.push(`   ${footnote}`);
  return lines;
}

/** Each component's weight, noise SD and coefficients, with standard errors when there are any. */
function componentLines({ design, fit, errors }: ScenarioOutcome, exact: boolean[]): string[] {
  const lines: string[] = [];
  const anyErrors = [...errors.weights, ...errors.sigmas].some(Number.isFinite);
  const source = errors.method === "bootstrap" ? "bootstrap" : errors.method === "exact-fit" ? "exact fit: coefficients known exactly" : "from the curvature of the likelihood";
  lines.push(anyErrors ? `Components (estimate ± standard error, ${source})` : "Components (standard errors not available, see the warnings)");
  if (exact.every(Boolean)) lines.push("   Exact fit (noise about 0): every row lies on its component's regression.");
  const show = (value: number, se: number): string => (anyErrors ? formatPlusMinus(value, se) : formatNumber(value));
  const coefficientNames = ["intercept", ...design.predictorNames];
  fit.components.forEach((component, c) => {
    const weight = anyErrors ? `${formatPlusMinus(100 * component.weight, 100 * errors.weights[c])} %` : formatPercent(component.weight);
    const noise = exact[c] ? formatNoiseSd(component.sigma, true) : show(component.sigma, errors.sigmas[c]);
    lines.push(`   ${c + 1}: weight ${weight}, noise SD ${noise}`);
    const parts = coefficientNames.map((name, j) => `${name} ${exact[c] ? formatExact(component.coefficients[j]) : show(component.coefficients[j], errors.coefficients[c][j])}`);
    if (!fit.intercept) parts.shift();
    // A few coefficients a line keeps lines readable with many predictors.
    const perLine = parts.length > 4 ? 3 : 2;
    for (let j = 0; j < parts.length; j += perLine) lines.push(`      ${parts.slice(j, j + perLine).join(";  ")}`);
  });
  return lines;
}

/** The checks of the suggested K's fit, its warnings, and whether its starts agree and it converged. */
function checkLines(result: ScenarioOutcome, exactFit: boolean, verbose: boolean): string[] {
  const { fit, separation } = result;
  const lines: string[] = [];
  if (fit.k > 1) {
    const closest = separation.pairs.reduce((a, b) => (b.gap < a.gap ? b : a));
    const gap = exactFit ? "no overlap between components (noise about 0)" : `smallest gap ${formatGap(closest.gap)} noise SDs (components ${closest.a + 1} and ${closest.b + 1})`;
    lines.push(`Checks: ${gap}; misassigned rows ${formatPercent(separation.misclassification)}; membership clarity ${formatNumber(separation.normalisedEntropy)}`);
  } else {
    lines.push("Checks: one component, no gap to measure");
  }
  const warnings = demoWarnings(result);
  lines.push(warnings.length ? `Warnings:` : "Warnings: none");
  for (const warning of warnings) lines.push(`   - ${warning}`);
  const iterations = `${fit.refinement.iterations} iteration${fit.refinement.iterations === 1 ? "" : "s"}`;
  lines.push(`Starts agree: ${startsAgree(fit.warmStart) ? "yes" : "no"}. Converged: ${fit.refinement.converged ? "yes" : "no"} (${iterations}).${verbose ? ` Best start: ${fit.warmStart.method}, ${fit.warmStart.startsTried} tried.` : ""}`);
  return lines;
}

/** How close the fit came to the invented truth: K, the largest coefficient difference, the rows given their true component. */
function truthLine({ truth, scan, comparison }: ScenarioOutcome): string {
  const kVerdict = scan.chosenK === comparison.trueK ? "found" : `NOT found (suggested ${scan.chosenK})`;
  const matched = comparison.match.map((c, t) => ({ c, t })).filter(({ c }) => c >= 0);
  const worst = matched.reduce((a, b) => (comparison.coefficientError[b.t] > comparison.coefficientError[a.t] ? b : a), matched[0]);
  let errorText = "";
  if (worst) {
    const inSe = comparison.errorInStandardErrors[worst.t];
    const seText = Number.isFinite(inSe) ? ` (${formatNumber(inSe)} standard errors)` : "";
    errorText = `; largest coefficient difference ${formatNumber(comparison.coefficientError[worst.t])}${seText}, in "${truth.components[worst.t].name}"`;
  }
  return `Against the invented truth: K = ${comparison.trueK} ${kVerdict}${errorText}; ${formatPercent(comparison.labelAgreement)} of rows given their true component`;
}

/** Every warning the demo prints for a scenario (the results workbook carries the same). */
function demoWarnings(result: Pick<DemoScenarioResult, "fit" | "separation" | "errors">): string[] {
  return [...new Set([...result.fit.warnings, ...result.separation.warnings, ...result.errors.warnings])];
}

/** Runs one scenario: read, scan, fit the suggested K, check, compare with the truth, write files. */
export async function runDemoScenario(truth: ScenarioTruth, options: DemoOptions): Promise<DemoScenarioResult> {
  let started = performance.now();
  const table = await readTable(path.join(options.samples, truth.workbook), truth.dataSheet);
  const names = headerNames(table.rows, truth.workbook);
  const yColumn = findColumn(names, truth.response, truth.workbook);
  const xColumns = truth.predictors.map((name) => findColumn(names, name, truth.workbook));
  const design = buildDesign(columnRange(table.rows, yColumn), columnsRange(table.rows, xColumns), { headers: true, numberText: false });
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
  const workbook = await resultsWorkbook({
    rows: table.rows,
    design,
    fit,
    standardErrors: errors,
    separation,
    warnings: demoWarnings({ fit, separation, errors }),
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
  return { ...partial, report: formatScenario(partial, outDisplay, options.verbose) };
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
    verbose: args.switches.has("verbose"),
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
