/**
 * Writes the sample workbooks: for each invented scenario in sampleScenarios.ts,
 * sample-workbooks/<name>.xlsx (sheets Data, Skein, About), a matching
 * <name>.csv of the Data sheet (the task pane's plain-browser mode loads it),
 * and sample-workbooks/truth.json with every scenario's hidden structure.
 *
 * Run: npx tsx scripts/makeSampleWorkbooks.ts
 * The output is fully determined by the seeds in sampleScenarios.ts.
 */
import { promises as fs } from "fs";
import * as path from "path";
import ExcelJS from "exceljs";
import { markDynamicArrays } from "./markDynamicArrays";
import { allScenarios, type Scenario } from "./sampleScenarios";
import { INTERFACE_COLOURS, WORKBOOK_FILLS } from "../src/report/componentStyle";

export const OUTPUT_DIRECTORY = path.resolve(__dirname, "..", "sample-workbooks");
export const DATA_SHEET = "Data";
export const FORMULA_SHEET = "Skein";
export const ABOUT_SHEET = "About";
/** Seed given to every SKEIN formula, so the sheet shows the same fit on every machine. */
export const FORMULA_SEED = 7;
/** Columns SKEIN.SCAN spills: K, BIC, ICL, log-likelihood, smallest gap, starts agree, converged, suggested, note. */
const SCAN_COLUMNS = 9;

/** Header fills and accents from the one style module (pane, plots and result workbooks use the same). */
const HEADING = argbOf(INTERFACE_COLOURS.accentInk);
const CAUTION = argbOf(INTERFACE_COLOURS.cautionInk);
const SKEIN_HEADER = WORKBOOK_FILLS.result;
const WHITE = WORKBOOK_FILLS.headerText;

function argbOf(hex: string): string {
  return `FF${hex.slice(1).toUpperCase()}`;
}

/** Column letters of a 1-based column number (1 → A, 27 → AA). */
export function columnLetter(column: number): string {
  let letters = "";
  for (let c = column; c > 0; c = Math.floor((c - 1) / 26)) letters = String.fromCharCode(65 + ((c - 1) % 26)) + letters;
  return letters;
}

/** The Data-sheet ranges the formulas use (data rows only, no header). */
export function dataRanges(scenario: Scenario): { y: string; x: string; rows: number } {
  const rows = scenario.rows.length - 1;
  const last = rows + 1;
  const yColumn = columnLetter(scenario.idColumns.length + 1);
  const xFirst = columnLetter(scenario.idColumns.length + 2);
  const xLast = columnLetter(scenario.idColumns.length + 1 + scenario.predictors.length);
  return { y: `${DATA_SHEET}!${yColumn}2:${yColumn}${last}`, x: `${DATA_SHEET}!${xFirst}2:${xLast}${last}`, rows };
}

function formulaSettings(scenario: Scenario): string {
  return scenario.model === "joint" ? `"seed=${FORMULA_SEED}; model=joint"` : `"seed=${FORMULA_SEED}"`;
}

function styleHeader(row: ExcelJS.Row, fill: string): void {
  row.eachCell((cell) => {
    cell.font = { bold: true, color: { argb: WHITE } };
    cell.fill = { type: "pattern", pattern: "solid", fgColor: { argb: fill } };
  });
}

function addDataSheet(workbook: ExcelJS.Workbook, scenario: Scenario): void {
  const sheet = workbook.addWorksheet(DATA_SHEET, { views: [{ state: "frozen", ySplit: 1 }] });
  for (const row of scenario.rows) sheet.addRow(row);
  styleHeader(sheet.getRow(1), HEADING);
  scenario.rows[0].forEach((header, j) => {
    sheet.getColumn(j + 1).width = Math.max(10, String(header).length + 2);
  });
}

/** A label in bold amber above a formula block. */
function sectionTitle(sheet: ExcelJS.Worksheet, row: number, text: string): void {
  const cell = sheet.getCell(row, 1);
  cell.value = text;
  cell.font = { bold: true, color: { argb: CAUTION }, size: 12 };
}

function note(sheet: ExcelJS.Worksheet, row: number, text: string, column = 1): void {
  const cell = sheet.getCell(row, column);
  cell.value = text;
  cell.font = { italic: true, color: { argb: "FF555555" } };
}

function headerCells(sheet: ExcelJS.Worksheet, row: number, column: number, labels: string[]): void {
  labels.forEach((label, j) => {
    const cell = sheet.getCell(row, column + j);
    cell.value = label;
    cell.font = { bold: true, color: { argb: WHITE } };
    cell.fill = { type: "pattern", pattern: "solid", fgColor: { argb: SKEIN_HEADER } };
  });
}

/** Fills the Skein sheet with one block per function, each with a title, a note and its formula. */
function addFormulaSheet(workbook: ExcelJS.Workbook, scenario: Scenario): void {
  const sheet = workbook.addWorksheet(FORMULA_SHEET);
  const { y, x, rows } = dataRanges(scenario);
  const k = scenario.components.length;
  const settings = formulaSettings(scenario);
  const put = (row: number, column: number, formula: string): void => {
    sheet.getCell(row, column).value = { formula } as ExcelJS.CellFormulaValue;
  };

  const title = sheet.getCell(1, 1);
  title.value = `Skein formulas on the ${DATA_SHEET} sheet (${scenario.title})`;
  title.font = { bold: true, size: 14, color: { argb: HEADING } };
  note(sheet, 2, "These cells hold Skein worksheet functions. Excel shows #NAME? until the Skein add-in is loaded; once it is, each formula spills its table below and to the right of its cell.");
  note(sheet, 3, "If #NAME? stays after the add-in has loaded, re-enter the formulas: select a formula cell, press F2 then Enter (or use Find and Replace on this sheet, replacing = with =).");
  note(sheet, 4, `Data: y = ${y} (${scenario.response}), x = ${x} (${scenario.predictors.join(", ")}); ${rows} rows. Settings ${settings}.`);

  let row = 6;
  sectionTitle(sheet, row, `How many components: SKEIN.SCAN tries K = 1 to ${scenario.kMax}`);
  note(sheet, row + 1, "One row per K: BIC, ICL, log-likelihood, smallest gap (noise SDs), starts agree, converged, which K is suggested, and why each other K is not.");
  put(row + 2, 1, `SKEIN.SCAN(${y},${x},${scenario.kMax},${settings})`);
  row += scenario.kMax + 5;

  sectionTitle(sheet, row, `Components: SKEIN.FIT with K = ${k}`);
  headerCells(sheet, row + 1, 1, ["component", "weight (%)", "noise SD", "intercept", ...scenario.predictors]);
  put(row + 2, 1, `SKEIN.FIT(${y},${x},${k},${settings})`);
  row += k + 5;

  sectionTitle(sheet, row, "Checks: SKEIN.CHECK");
  note(sheet, row + 1, "Checks of the same fit: starts agree, converged, iterations, smallest gap (noise SDs), misassigned rows (%), membership clarity, smallest weight (%), warnings.");
  put(row + 2, 1, `SKEIN.CHECK(${y},${x},${k},${settings})`);
  row += 16;

  sectionTitle(sheet, row, "Prediction for new rows: SKEIN.PREDICT");
  note(sheet, row + 1, "Type new predictor values in the plum-headed table; the formula to its right predicts each row per component, then the weighted prediction.");
  headerCells(sheet, row + 2, 1, scenario.predictors);
  scenario.newRows.forEach((values, i) => {
    values.forEach((value, j) => {
      sheet.getCell(row + 3 + i, 1 + j).value = value;
    });
  });
  const newRows = `A${row + 3}:${columnLetter(scenario.predictors.length)}${row + 2 + scenario.newRows.length}`;
  const predictColumn = scenario.predictors.length + 2;
  headerCells(
    sheet,
    row + 2,
    predictColumn,
    [...scenario.components.map((_, c) => `component ${c + 1} prediction`), "weighted prediction"],
  );
  put(row + 3, predictColumn, `SKEIN.PREDICT(${y},${x},${newRows},${k},${settings})`);

  // Per-row results go to the right of every block above, so their spills never collide:
  // SCAN spills SCAN_COLUMNS columns, FIT 4 + p, PREDICT k + 1 beside the new rows.
  const perRowColumn = Math.max(SCAN_COLUMNS, 4 + scenario.predictors.length, predictColumn + k) + 2;
  const perRowTitle = sheet.getCell(6, perRowColumn);
  perRowTitle.value = "Per data row (row 8 here is data row 2)";
  perRowTitle.font = { bold: true, color: { argb: CAUTION }, size: 12 };
  headerCells(sheet, 7, perRowColumn, ["component", ...scenario.components.map((_, c) => `membership ${c + 1}`)]);
  put(8, perRowColumn, `SKEIN.LABELS(${y},${x},${k},${settings})`);
  put(8, perRowColumn + 1, `SKEIN.MEMBERSHIP(${y},${x},${k},${settings})`);

  sheet.getColumn(1).width = 14;
  for (let c = 2; c <= perRowColumn + k; c++) sheet.getColumn(c).width = 12;
}

function addAboutSheet(workbook: ExcelJS.Workbook, scenario: Scenario): void {
  const sheet = workbook.addWorksheet(ABOUT_SHEET);
  sheet.getColumn(1).width = 12;
  sheet.getColumn(2).width = 30;
  const title = sheet.getCell(1, 1);
  title.value = scenario.title;
  title.font = { bold: true, size: 14, color: { argb: HEADING } };
  const warning = sheet.getCell(2, 1);
  warning.value = `INVENTED DATA: every number in this workbook was made up by scripts/makeSampleWorkbooks.ts (seed ${scenario.seed}) for Skein's demo; it describes no real ${scenario.name.replace("-", " ")}.`;
  warning.font = { bold: true, color: { argb: CAUTION } };
  let row = 4;
  for (const line of scenario.story) sheet.getCell(row++, 1).value = line;
  row++;
  const heading = sheet.getCell(row++, 1);
  heading.value = "Hidden structure used to generate the data (what a good fit should find)";
  heading.font = { bold: true, color: { argb: HEADING } };
  sheet.getCell(row++, 1).value = `${scenario.response} = intercept + one coefficient per predictor + noise with the component's noise SD; each row comes from one component.`;
  const header = sheet.getRow(row++);
  header.values = ["Component", "Name", "Weight", "Noise SD", "Intercept", ...scenario.predictors];
  styleHeader(header, HEADING);
  scenario.components.forEach((component, c) => {
    sheet.getRow(row++).values = [c + 1, component.name, component.weight, component.noiseSD, component.intercept, ...component.coefficients];
  });
  row++;
  const counts = scenario.components.map((_, c) => scenario.trueComponents.filter((t) => t === c).length);
  sheet.getCell(row++, 1).value = `Rows: ${scenario.rows.length - 1} (${counts.join(" / ")} per component). Weights are the shares of rows actually drawn.`;
  sheet.getCell(row++, 1).value = `Model to use: ${scenario.model === "joint" ? "joint (settings text \"model=joint\")" : "plain (the default)"}.`;
  sheet.getCell(row++, 1).value = `The ${FORMULA_SHEET} sheet holds ready-made formulas; the ${DATA_SHEET} sheet holds the data (also in ${scenario.name}.csv).`;
}

/** The Data sheet as CSV: header row, then numbers written so they read back exactly. */
export function toCsv(rows: (string | number)[][]): string {
  const field = (value: string | number): string => {
    const text = String(value);
    return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
  };
  return rows.map((row) => row.map(field).join(",")).join("\r\n") + "\r\n";
}

/** What truth.json records of a scenario. */
export function truthOf(scenario: Scenario): object {
  const { y, x, rows } = dataRanges(scenario);
  return {
    name: scenario.name,
    title: scenario.title,
    workbook: `${scenario.name}.xlsx`,
    csv: `${scenario.name}.csv`,
    dataSheet: DATA_SHEET,
    rows,
    yRange: y,
    xRange: x,
    response: scenario.response,
    predictors: scenario.predictors,
    model: scenario.model,
    kMax: scenario.kMax,
    seed: scenario.seed,
    components: scenario.components,
    trueComponents: scenario.trueComponents,
  };
}

async function writeScenario(scenario: Scenario): Promise<void> {
  const workbook = new ExcelJS.Workbook();
  workbook.creator = "Skein sample generator (invented data)";
  workbook.created = new Date(Date.UTC(2024, 0, 1));
  workbook.modified = workbook.created;
  addDataSheet(workbook, scenario);
  addFormulaSheet(workbook, scenario);
  addAboutSheet(workbook, scenario);
  const plain = Buffer.from(await workbook.xlsx.writeBuffer());
  // The formula sheet is the second worksheet part exceljs writes.
  const marked = await markDynamicArrays(plain, "xl/worksheets/sheet2.xml", ["SKEIN."]);
  await fs.writeFile(path.join(OUTPUT_DIRECTORY, `${scenario.name}.xlsx`), marked);
  await fs.writeFile(path.join(OUTPUT_DIRECTORY, `${scenario.name}.csv`), toCsv(scenario.rows));
}

async function run(): Promise<void> {
  await fs.mkdir(OUTPUT_DIRECTORY, { recursive: true });
  const scenarios = allScenarios();
  for (const scenario of scenarios) await writeScenario(scenario);
  const truth = {
    source: "Invented demo data: the true structure the generator scripts/makeSampleWorkbooks.ts used (scenarios in scripts/sampleScenarios.ts). No real data.",
    scenarios: scenarios.map(truthOf),
  };
  await fs.writeFile(path.join(OUTPUT_DIRECTORY, "truth.json"), JSON.stringify(truth, null, 1) + "\n");
  for (const scenario of scenarios) {
    process.stdout.write(`sample-workbooks/${scenario.name}.xlsx and .csv: ${scenario.rows.length - 1} rows, ${scenario.components.length} hidden components (invented data)\n`);
  }
}

if (/makeSampleWorkbooks\.[cm]?[jt]s$/.test(process.argv[1] ?? "")) {
  run().catch((error) => {
    process.stderr.write(`makeSampleWorkbooks: ${error instanceof Error ? error.message : String(error)}\n`);
    process.exitCode = 1;
  });
}
