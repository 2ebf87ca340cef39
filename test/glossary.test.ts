import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { promises as fs, readdirSync, readFileSync, statSync } from "node:fs";
import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import ExcelJS from "exceljs";
import ts from "typescript";
import { generateCustomFunctionsMetadata } from "custom-functions-metadata";
import { main } from "../src/cli/main";

/**
 * One term per idea: the words docs/glossary.md retires (its "not" column) must not appear in
 * text a user reads. Checked on the function descriptions Excel shows, the string literals of
 * every module that writes user-facing text (pane, command line, functions, workbooks, engine
 * messages), the output of real command-line runs, and every text cell of the result and
 * sample workbooks. JSON keys are not text a user reads and are not checked.
 */
const root = join(__dirname, "..");
const glossary = readFileSync(join(root, "docs", "glossary.md"), "utf8");

/** The "not" column of the glossary's table. */
function retiredTerms(): string[] {
  const terms: string[] = [];
  for (const line of glossary.split("\n")) {
    if (!line.startsWith("|") || line.startsWith("|---") || line.startsWith("| idea")) continue;
    const cells = line.split("|").map((cell) => cell.trim());
    const not = cells[cells.length - 2];
    for (const term of not.split(",").map((t) => t.trim())) if (term !== "") terms.push(term);
  }
  return terms;
}

const RETIRED = retiredTerms();

/** A term as a whole word or phrase; matched as written when it has a capital letter, in any case otherwise. */
function matcher(term: string): RegExp {
  const escaped = term.replace(/[.*+?^${}()|[\]\\]/g, "\\$&");
  return new RegExp(`(?<![A-Za-z0-9_])${escaped}(?![A-Za-z0-9_])`, /[A-Z]/.test(term) ? "" : "i");
}

const MATCHERS = RETIRED.map((term) => ({ term, pattern: matcher(term) }));

/**
 * Ids, classes and other kebab-case names (scan-table, separation-caption) are code, not text,
 * unless they are themselves a retired term (moment-subspace).
 */
function withoutCodeNames(text: string): string {
  return text.replace(/[a-z0-9]+(?:-[a-z0-9]+)+/g, (token) => (RETIRED.some((term) => term.toLowerCase() === token.toLowerCase()) ? token : " "));
}

function retiredIn(text: string): string[] {
  const cleaned = withoutCodeNames(text);
  return MATCHERS.filter(({ pattern }) => pattern.test(cleaned)).map(({ term }) => term);
}

/** Every string and template literal of a TypeScript file (template parts without their ${...}). */
function stringLiterals(file: string): string[] {
  const source = ts.createSourceFile(file, readFileSync(file, "utf8"), ts.ScriptTarget.Latest, true);
  const out: string[] = [];
  const visit = (node: ts.Node): void => {
    if (ts.isImportDeclaration(node) || ts.isExportDeclaration(node) || ts.isLiteralTypeNode(node)) return;
    if (ts.isStringLiteral(node) || ts.isNoSubstitutionTemplateLiteral(node)) out.push(node.text);
    else if (ts.isTemplateExpression(node)) out.push([node.head.text, ...node.templateSpans.map((span) => span.literal.text)].join(" "));
    ts.forEachChild(node, visit);
  };
  visit(source);
  return out;
}

function typeScriptFiles(folder: string): string[] {
  return readdirSync(folder).flatMap((name) => {
    const path = join(folder, name);
    if (statSync(path).isDirectory()) return typeScriptFiles(path);
    return name.endsWith(".ts") && !name.endsWith(".d.ts") ? [path] : [];
  });
}

/** Modules whose strings users read. The fit driver is left out: its strings include the start methods' names, shown only in --verbose and JSON. */
const USER_TEXT_MODULES = [
  ...typeScriptFiles(join(root, "taskpane")),
  ...typeScriptFiles(join(root, "src", "cli")),
  ...typeScriptFiles(join(root, "src", "functions")),
  ...typeScriptFiles(join(root, "src", "io")),
  ...typeScriptFiles(join(root, "src", "report")),
  ...typeScriptFiles(join(root, "src", "service")),
  ...typeScriptFiles(join(root, "src", "commands")),
  ...["checkSeparation", "scanComponents", "standardErrors", "leastSquares", "householderQR", "computeMemberships", "design", "predictRows", "options"].map((name) => join(root, "src", "engine", `${name}.ts`)),
  join(root, "scripts", "makeSampleWorkbooks.ts"),
  join(root, "scripts", "sampleScenarios.ts"),
];

async function workbookText(file: string): Promise<string[]> {
  const workbook = new ExcelJS.Workbook();
  await workbook.xlsx.readFile(file);
  const texts: string[] = [];
  workbook.eachSheet((sheet) => {
    texts.push(sheet.name);
    sheet.eachRow((row) => row.eachCell((cell) => {
      if (typeof cell.value === "string") texts.push(cell.value);
    }));
  });
  return texts;
}

async function run(...argv: string[]): Promise<string> {
  let stdout = "";
  let stderr = "";
  const status = await main(argv, { stdout: (s) => (stdout += s), stderr: (s) => (stderr += s) });
  expect(status, stderr).toBe(0);
  return stdout + stderr;
}

describe("the glossary's retired words stay out of what users read", () => {
  let out: string;
  beforeAll(() => {
    out = mkdtempSync(join(tmpdir(), "skein-glossary-"));
  });
  afterAll(() => rmSync(out, { recursive: true, force: true }));

  it("lists retired words, and the checker finds them (a check that cannot fail proves nothing)", () => {
    expect(RETIRED).toEqual(expect.arrayContaining(["separation", "misclassification", "entropy", "crispness", "response", "new_x", "spread", "(adjusted)", "moment-subspace"]));
    expect(retiredIn("smallest separation 2.5")).toEqual(expect.arrayContaining(["separation", "smallest separation"]));
    expect(retiredIn("smallest gap 2.5 noise SDs")).toEqual([]);
    expect(retiredIn("Warm start converged (moment-subspace)")).toEqual(expect.arrayContaining(["warm start converged", "moment-subspace"]));
    expect(retiredIn("Fuel used (adjusted)")).toEqual(["(adjusted)"]);
    expect(retiredIn("Adjusted to the average Payload (t)")).toEqual(["adjusted to"]);
    expect(retiredIn("A two-column table of diagnostics and their values.")).toEqual(["diagnostics"]);
    expect(retiredIn("Label")).toEqual(["Label"]);
    // Not a retired word: code names, the function LABELS, a form field's <label>.
    expect(retiredIn('id="separation-table"; SKEIN.LABELS; element("label")')).toEqual([]);
  });

  it("in the worksheet functions' descriptions and argument names", async () => {
    const result = await generateCustomFunctionsMetadata([join(root, "src", "functions", "functions.ts")], false);
    const metadata = JSON.parse(result.metadataJson) as { functions: { name: string; description: string; parameters: { name: string; description?: string }[] }[] };
    const found = metadata.functions.flatMap((f) => [f.description, ...f.parameters.flatMap((p) => [p.name, p.description ?? ""])].flatMap((text) => retiredIn(text).map((term) => `${f.name}: ${term} in "${text}"`)));
    expect(found).toEqual([]);
  });

  it("in the strings of the pane, the command line, the functions, the workbooks and the engine's messages", () => {
    const found = USER_TEXT_MODULES.flatMap((file) => stringLiterals(file).flatMap((text) => retiredIn(text).map((term) => `${file.slice(root.length + 1)}: ${term} in "${text.slice(0, 120)}"`)));
    expect(found).toEqual([]);
  });

  it("in the output of real command-line runs and the workbooks they write", async () => {
    const fleet = join(root, "sample-workbooks", "delivery-fleet.csv");
    const rowsFile = join(out, "fleet.xlsx");
    const texts = [
      await run("--help"),
      ...(await Promise.all(["fit", "scan", "predict", "demo"].map((command) => run(command, "--help")))),
      await run("fit", fleet, "--y", "Fuel used (L)", "--out", rowsFile),
      await run("scan", fleet, "--y", "Fuel used (L)", "--k-max", "4"),
      await run("predict", fleet, "--y", "Fuel used (L)", "--k", "3", "--new", join(root, "test", "fixtures", "new-trips.csv")),
      // The exact fit of the lab calibration, and its results workbook.
      await run("demo", "--only", "lab-calibration", "--out", out),
    ];
    const found = texts.flatMap((text) => retiredIn(text));
    expect(found).toEqual([]);
    // The exact fit is said in the glossary's words, with no convergence or standard-error warning.
    expect(texts.join("\n")).toContain("Exact fit (noise about 0)");
    const workbookTexts = [...(await workbookText(rowsFile)), ...(await workbookText(join(out, "lab-calibration-results.xlsx")))];
    expect(workbookTexts.flatMap((text) => retiredIn(text))).toEqual([]);
    expect(workbookTexts).toContain("exact fit (noise about 0)");
  }, 120_000);

  it("in the help page the add-in ships", () => {
    const page = readFileSync(join(root, "taskpane", "help.html"), "utf8").replace(/<[^>]*>/g, " ");
    expect(retiredIn(page)).toEqual([]);
  });

  it("in the sample workbooks", async () => {
    const folder = join(root, "sample-workbooks");
    const files = (await fs.readdir(folder)).filter((name) => name.endsWith(".xlsx"));
    expect(files.length).toBe(3);
    for (const file of files) expect((await workbookText(join(folder, file))).flatMap((text) => retiredIn(text)), file).toEqual([]);
  });
});
