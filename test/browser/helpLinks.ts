/*
 * Opens every worksheet function's help link from the built dist/functions.json on the
 * local server (the link's path and section, on the test server's origin) and checks
 * that the page loads with that function's section, and that the help page fits 320 px.
 */
import { promises as fs } from "fs";
import * as path from "path";
import type { Page } from "playwright-core";
import type { Check } from "./paneWidth";

export async function checkHelpLinks(newPage: () => Promise<Page>, serverUrl: string, distDir: string, check: Check, resultsDir: string): Promise<void> {
  const metadata = JSON.parse(await fs.readFile(path.join(distDir, "functions.json"), "utf8")) as { functions: { id: string; helpUrl?: string }[] };
  const page = await newPage();
  try {
    for (const f of metadata.functions) {
      const link = new URL(f.helpUrl ?? "");
      // From a blank page each time: a change of section alone is not a page load.
      await page.goto("about:blank");
      const response = await page.goto(`${serverUrl}${link.pathname}${link.hash}`);
      const section = await page.locator(link.hash).first().textContent().catch(() => null);
      check(`help link of ${f.id} opens its section`, response?.ok() === true && (section ?? "").includes(`SKEIN.${f.id}(`), `${link.pathname}${link.hash}: ${response?.status()}`);
    }
    await page.setViewportSize({ width: 320, height: 700 });
    await page.goto(`${serverUrl}/help.html#skein-predict`);
    const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
    check("help page fits 320 px", overflow <= 0, `${overflow}px too wide`);
    const styled = await page.evaluate(() => getComputedStyle(document.documentElement).getPropertyValue("--accent").trim());
    check("help page uses the shared colours", styled.startsWith("#"), styled || "no --accent");
    await page.screenshot({ path: path.join(resultsDir, "12-help-320px.png") });
  } finally {
    await page.close();
  }
}
