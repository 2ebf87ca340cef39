import type { FitReport } from "./fitCommand";

/** Skipped rows listed one by one before the rest are summarised. */
const SKIPPED_ROWS_SHOWN = 10;

/** Stray rows listed one by one in the table. */
const STRAY_ROWS_SHOWN = 20;

/** Significant digits shown: enough to compare runs, few enough to read. */
const DIGITS = 6;

/** A number in at most DIGITS significant digits, without exponent noise for ordinary sizes. */
export function formatNumber(value: number): string {
  if (!Number.isFinite(value)) return String(value);
  if (value === 0) return "0";
  const magnitude = Math.abs(value);
  if (magnitude >= 1e-4 && magnitude < 1e15) {
    // toPrecision, then drop trailing zeros of the fraction ("1.50000" -> "1.5").
    const text = value.toPrecision(DIGITS);
    if (!text.includes("e")) return text.includes(".") ? text.replace(/\.?0+$/, "") : text;
    return Math.round(value).toString();
  }
  return value.toExponential(DIGITS - 1).replace(/\.?0+e/, "e");
}

/** Columns of text, the first left-aligned and the rest right-aligned. */
function alignColumns(rows: string[][], indent: string): string[] {
  const widths = rows[0].map((_, j) => Math.max(...rows.map((row) => row[j].length)));
  return rows.map((row) => indent + row.map((cell, j) => (j === 0 ? cell.padEnd(widths[j]) : cell.padStart(widths[j]))).join("   ").trimEnd());
}

/** The readable report of `skein fit`. */
export function formatFitTable(report: FitReport, source: { file: string; sheetName?: string }): string {
  const lines: string[] = [];
  const where = source.sheetName ? `${source.file}, sheet ${source.sheetName}` : source.file;
  const componentWord = report.k === 1 ? "1 component" : `${report.k} components`;
  lines.push(`${report.response} regressed on ${report.predictors.join(", ")} (${componentWord}, ${report.intercept ? "with" : "without"} intercept)`);
  lines.push(`Data: ${where}; ${report.rowsUsed} rows used, ${report.rowsSkipped} skipped`);
  lines.push(`Log-likelihood ${formatNumber(report.logLikelihood)}; BIC ${formatNumber(report.bic)}; ICL ${formatNumber(report.icl)}`);
  if (report.k > 1) {
    const start = report.warmStart;
    const refinement = report.refinement;
    lines.push(`Warm start: ${start.converged ? "converged" : "NOT converged"} (${start.method}, ${start.startsTried} starts); refinement: ${refinement.converged ? "converged" : "NOT converged"} after ${refinement.iterations} iterations`);
  }

  report.components.forEach((component, c) => {
    lines.push("");
    lines.push(`Component ${c + 1}: weight ${formatNumber(component.weight)}, noise SD ${formatNumber(component.sigma)}`);
    const table: string[][] = [["term", "coefficient", "standard error"]];
    // A standard error that could not be computed reads "not available"; the warnings say why.
    const error = (value: number) => (Number.isNaN(value) ? "not available" : formatNumber(value));
    if (report.intercept) table.push(["intercept", formatNumber(component.coefficients[0]), error(component.stdErrors[0])]);
    report.predictors.forEach((name, j) => {
      table.push([name, formatNumber(component.coefficients[j + 1]), error(component.stdErrors[j + 1])]);
    });
    lines.push(...alignColumns(table, "  "));
  });

  if (report.separation) {
    lines.push("");
    lines.push(`Separation: smallest gap ${formatNumber(report.separation.minGap)} noise SDs; estimated misclassification ${formatNumber(report.separation.misclassification)}; normalised entropy ${formatNumber(report.separation.normalisedEntropy)}`);
    const gaps = report.separation.pairs.map((pair) => `${pair.a + 1}-${pair.b + 1}: ${formatNumber(pair.gap)}`);
    lines.push(`  gaps between components ${gaps.join(", ")}`);
  }

  if (report.warnings.length > 0) {
    lines.push("");
    lines.push("Warnings:");
    for (const warning of report.warnings) lines.push(`  - ${warning}`);
  }

  lines.push("");
  if (report.backgroundWeight !== null) lines.push(`Background component: weight ${formatNumber(report.backgroundWeight)} (rows far from every regression)`);
  if (report.strayRows.length === 0) {
    lines.push(`Stray rows: none (${report.strayRowsRule}).`);
  } else {
    const shown = report.strayRows.slice(0, STRAY_ROWS_SHOWN);
    lines.push(`Stray rows: ${report.strayRows.length} (${report.strayRowsRule}); refit without them with --leave-out ${report.strayRows.map((s) => s.row).join(",")}`);
    for (const s of shown) lines.push(`  data row ${s.row}: ${formatNumber(s.distance)} noise SDs from component ${s.nearest}, the nearest`);
    if (report.strayRows.length > shown.length) lines.push(`  and ${report.strayRows.length - shown.length} more (all in --json)`);
  }

  if (report.rowsSkipped > 0) {
    lines.push("");
    const shown = report.skipped.slice(0, SKIPPED_ROWS_SHOWN);
    lines.push(report.rowsSkipped > shown.length ? `Skipped rows (first ${shown.length} of ${report.rowsSkipped}):` : "Skipped rows:");
    for (const s of shown) lines.push(`  data row ${s.row}: ${s.reason === "left out" ? "left out (--leave-out)" : `${s.reason} in ${s.column}`}`);
  }
  return lines.join("\n") + "\n";
}
