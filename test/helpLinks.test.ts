import { existsSync, readFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { generateCustomFunctionsMetadata } from "custom-functions-metadata";

/*
 * The worksheet functions' help links must open a page the add-in ships, at the
 * function's own section. Checked three ways: the generated metadata (the same
 * generator the build runs) against the webpack config and the page's source;
 * and, after `npm run build`, the built dist/functions.json against the files in
 * dist/. test/browser/helpLinks.ts also opens every link over HTTP.
 */
const ROOT = join(__dirname, "..");
const DIST = join(ROOT, "dist");

/** The origin every URL in manifest.xml uses (where the add-in's files are served from). */
function addinOrigin(): string {
  const manifest = readFileSync(join(ROOT, "manifest.xml"), "utf8");
  const source = /<SourceLocation DefaultValue="([^"]+)"/.exec(manifest);
  if (!source) throw new Error("manifest.xml has no SourceLocation");
  return new URL(source[1]).origin;
}

/** The ids of a page's elements (quoted, or unquoted as the minified build writes them). */
function idsOf(html: string): Set<string> {
  return new Set([...html.matchAll(/\sid=(?:"([^"]+)"|([^\s"'>]+))/g)].map((m) => m[1] ?? m[2]));
}

/** What webpack writes to dist/ as pages: filename → template, from the HtmlWebpackPlugin instances of the add-in build. */
async function emittedPages(): Promise<Map<string, string>> {
  // eslint-disable-next-line @typescript-eslint/no-require-imports
  const config = require(join(ROOT, "webpack.config.js")) as (env: object, options: { mode: string }) => Promise<{ name: string; plugins: unknown[] }[]>;
  const builds = await config({}, { mode: "production" });
  const addin = builds.find((b) => b.name === "addin")!;
  const pages = new Map<string, string>();
  for (const plugin of addin.plugins) {
    const options = (plugin as { userOptions?: { filename?: string; template?: string } }).userOptions;
    if (plugin?.constructor?.name === "HtmlWebpackPlugin" && options?.filename && options.template) pages.set(options.filename, options.template);
  }
  return pages;
}

describe("help links of the worksheet functions", async () => {
  const result = await generateCustomFunctionsMetadata([join(ROOT, "src", "functions", "functions.ts")], false);
  const functions = (JSON.parse(result.metadataJson) as { functions: { id: string; helpUrl?: string }[] }).functions;

  it("every function has its own help link on the add-in's origin, not the pane page", () => {
    const origin = addinOrigin();
    expect(functions.length).toBeGreaterThan(0);
    for (const f of functions) {
      const url = new URL(f.helpUrl ?? "");
      expect(url.origin, f.id).toBe(origin);
      expect(url.pathname, f.id).not.toBe("/taskpane.html");
      expect(url.hash, f.id).toBe(`#skein-${f.id.toLowerCase()}`);
    }
  });

  it("each link's page is built by webpack from a template that has the function's section", async () => {
    const pages = await emittedPages();
    for (const f of functions) {
      const url = new URL(f.helpUrl!);
      const file = url.pathname.replace(/^\//, "");
      const template = pages.get(file);
      expect(template, `${f.id}: no webpack page writes ${file}`).toBeDefined();
      const html = readFileSync(join(ROOT, template!), "utf8");
      expect(idsOf(html), f.id).toContain(url.hash.slice(1));
      // The section names the function as users type it.
      expect(html, f.id).toContain(`SKEIN.${f.id}(`);
    }
  });

  it("the help page shows each function with the arguments the metadata gives, in order", () => {
    const html = readFileSync(join(ROOT, "taskpane", "help.html"), "utf8");
    const all = (JSON.parse(result.metadataJson) as { functions: { id: string; parameters: { name: string; optional?: boolean }[] }[] }).functions;
    for (const f of all) {
      const signature = `SKEIN.${f.id}(${f.parameters.map((p) => (p.optional ? `[${p.name}]` : p.name)).join(", ")})`;
      const section = new RegExp(`id="skein-${f.id.toLowerCase()}"[^>]*>\\s*<h2>([^<]+)</h2>`).exec(html);
      expect(section?.[1], f.id).toBe(signature);
    }
  });

  it.skipIf(!existsSync(join(DIST, "functions.json")))("after a build: every helpUrl in dist/functions.json is a file in dist/ with the function's section", () => {
    const built = JSON.parse(readFileSync(join(DIST, "functions.json"), "utf8")) as { functions: { id: string; helpUrl?: string }[] };
    expect(built.functions.map((f) => f.id).sort()).toEqual(functions.map((f) => f.id).sort());
    for (const f of built.functions) {
      const url = new URL(f.helpUrl ?? "");
      const file = join(DIST, url.pathname.replace(/^\//, ""));
      expect(existsSync(file), `${f.id}: ${file}`).toBe(true);
      expect(idsOf(readFileSync(file, "utf8")), f.id).toContain(url.hash.slice(1));
    }
  });
});
