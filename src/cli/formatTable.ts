import { alignColumns, formatColumn, formatGap, formatNoiseSd, formatNumber, formatPercent, formatPlusMinus, formatWithError } from "../report/formatNumber";
import type { FitReport } from "./fitReport";

/** Skipped rows listed one by one before the rest are summarised. */
const SKIPPED_ROWS_SHOWN = 10;

/** Rows whose component the text output shows; --out writes them all. */
export const ROWS_SHOWN = 10;
/** Stray rows listed one by one in the table. */
const STRAY_ROWS_SHOWN = 20;

/** How K was chosen, in words. */
export function kChoiceText(report: Pick<FitReport, "k" | "kChosenBy">): string {
  return report.kChosenBy.by === "scan"
    ? `K = ${report.k}, the number the scan of K = 1 to ${report.kChosenBy.kMax} suggests (give --k to choose another)`
    : `K = ${report.k}, as given with --k`;
}

function yesNo(value: boolean): string {
  return value ? "yes" : "no";
}

type FitTableSource = { file: string; sheetName?: string; verbose?: boolean; out?: string };

/** The readable report of `skein fit`. */
export function formatFitTable(report: FitReport, source: FitTableSource): string {
  const lines = [
    ...summaryLines(report, source),
    ...report.components.flatMap((_, c) => ["", ...componentLines(report, c)]),
    ...checkLines(report),
    ...warningLines(report),
    "",
    ...strayRowLines(report),
    ...skippedRowLines(report),
    "",
    ...rowComponentLines(report, source.out),
  ];
  return lines.join("\n") + "\n";
}

/** What was fitted to which rows, how well, and whether the fit can be trusted to have converged. */
function summaryLines(report: FitReport, source: FitTableSource): string[] {
  const lines: string[] = [];
  const where = source.sheetName ? `${source.file}, sheet ${source.sheetName}` : source.file;
  const componentWord = report.k === 1 ? "1 component" : `${report.k} components`;
  lines.push(`${report.outcome} regressed on ${report.predictors.join(", ")} (${componentWord}, ${report.intercept ? "with" : "without"} intercept)`);
  lines.push(kChoiceText(report));
  lines.push(`Data: ${where}; ${report.rowsUsed} rows used, ${report.rowsSkipped} skipped`);
  lines.push(`Log-likelihood ${formatNumber(report.logLikelihood)}; BIC ${formatNumber(report.bic)}; ICL ${formatNumber(report.icl)}`);
  if (report.k > 1) {
    const refinement = report.refinement;
    lines.push(`Starts agree: ${yesNo(report.startsAgree)}. Converged: ${yesNo(report.converged)} (${refinement.iterations} iteration${refinement.iterations === 1 ? "" : "s"}).`);
  } else if (!report.converged) {
    lines.push(`Converged: no (${report.refinement.iterations} iteration${report.refinement.iterations === 1 ? "" : "s"}).`);
  }
  if (source.verbose) {
    const start = report.warmStart;
    lines.push(`Starts: best from ${start.method}, ${start.startsTried} tried${Number.isFinite(start.certificate) ? `; narrowest residual scale of the search ${formatNumber(start.certificate)} of the outcome's SD` : ""}.`);
  }
  if (report.exactFit) lines.push("Exact fit (noise about 0): every row lies on its component's regression, so the standard errors are 0.");
  return lines;
}

/** Component c: its weight and noise SD, then a table of its coefficients with their standard errors. */
function componentLines(report: FitReport, c: number): string[] {
  const component = report.components[c];
  const weightSe = report.stdErrors.weights[c];
  const sigmaSe = report.stdErrors.sigmas[c];
  const weight = Number.isFinite(weightSe) && report.k > 1 ? `${formatPlusMinus(100 * component.weight, 100 * weightSe)} %` : formatPercent(component.weight);
  const noise = report.exactFit ? formatNoiseSd(component.sigma, true) : Number.isFinite(sigmaSe) ? formatPlusMinus(component.sigma, sigmaSe) : formatNumber(component.sigma);
  const table: string[][] = [["term", "coefficient", "standard error"]];
  const term = (name: string, j: number) => {
    const shown = formatWithError(component.coefficients[j], component.stdErrors[j]);
    table.push([name, shown.value, shown.error]);
  };
  if (report.intercept) term("intercept", 0);
  report.predictors.forEach((name, j) => term(name, j + 1));
  return [`Component ${c + 1}: weight ${weight}, noise SD ${noise}`, ...alignColumns(table, "  ")];
}

/** How distinct the components are; nothing for one component. */
function checkLines(report: FitReport): string[] {
  const separation = report.separation;
  if (!(separation && report.k > 1)) return [];
  const gap = report.exactFit ? "no overlap between components (noise about 0)" : `smallest gap ${formatGap(separation.minGap)} noise SDs`;
  const lines = ["", `Checks: ${gap}; misassigned rows ${formatPercent(separation.misclassification)}; membership clarity ${formatNumber(separation.normalisedEntropy)}; smallest weight ${formatPercent(separation.smallestWeight)}`];
  if (!report.exactFit && separation.pairs.length > 1) {
    const gaps = separation.pairs.map((pair) => `${pair.a + 1} and ${pair.b + 1}: ${formatGap(pair.gap)}`);
    lines.push(`  gap (noise SDs) of each pair of components: ${gaps.join("; ")}`);
  }
  return lines;
}

function warningLines(report: FitReport): string[] {
  if (report.warnings.length === 0) return [];
  return ["", "Warnings:", ...report.warnings.map((warning) => `  - ${warning}`)];
}

/** The background component, if any, and the rows no component explains, with the flag that sets them aside. */
function strayRowLines(report: FitReport): string[] {
  const lines: string[] = [];
  if (report.backgroundWeight !== null) lines.push(`Background component: weight ${formatPercent(report.backgroundWeight)} (rows far from every regression)`);
  if (report.strayRows.length === 0) {
    lines.push(`Stray rows: none (${report.strayRowsRule}).`);
    return lines;
  }
  const shown = report.strayRows.slice(0, STRAY_ROWS_SHOWN);
  lines.push(`Stray rows: ${report.strayRows.length} (${report.strayRowsRule}); refit without them with --leave-out ${report.strayRows.map((s) => s.row).join(",")}`);
  for (const s of shown) lines.push(`  data row ${s.row}: ${formatNumber(s.distance)} noise SDs from component ${s.nearest}, the nearest`);
  if (report.strayRows.length > shown.length) lines.push(`  and ${report.strayRows.length - shown.length} more (all in --json)`);
  return lines;
}

function skippedRowLines(report: FitReport): string[] {
  const lines: string[] = [];
  if (report.rowsSkipped > 0) {
    const shown = report.skipped.slice(0, SKIPPED_ROWS_SHOWN);
    lines.push("", report.rowsSkipped > shown.length ? `Skipped rows (first ${shown.length} of ${report.rowsSkipped}):` : "Skipped rows:");
    for (const s of shown) lines.push(`  data row ${s.row}: ${s.reason === "left out" ? "left out (--leave-out)" : `${s.reason} in ${s.column}`}`);
  }
  return lines;
}

/** The component of the first ROWS_SHOWN rows, and where to find the rest. */
function rowComponentLines(report: FitReport, out: string | undefined): string[] {
  const first = report.labels.slice(0, ROWS_SHOWN);
  const all = report.labels.length;
  const more = out ? `; every row is in ${out}` : all > first.length ? "; --out FILE writes them all" : "";
  const rowTable: string[][] = [["data row", "component"]];
  first.forEach((label, r) => rowTable.push([String(r + 1), label === null ? "skipped" : String(label)]));
  return [`Component of each row (data rows 1 to ${first.length} of ${all}${more}):`, ...alignColumns(rowTable, "  ")];
}

export { formatColumn, formatNumber };
