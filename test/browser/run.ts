/*
 * Drives the built pane (dist/, from `npm run build`) in Debian's Chromium, in
 * plain-browser mode: load a sample, run the scan, pick K, see the components,
 * the chart and warning cases, place results, and cancel a scan. office.js
 * requests are refused, as on a machine without Office. Screenshots go to
 * test-results/. Then the worksheet functions from the same build, called as Excel calls
 * them (functionsInChromium.ts), and the built command line with its helper thread
 * (commandLineThreads.ts). Prints one line per check and a closing "N passed, N failed";
 * exits 1 when any check failed.
 */
import { promises as fs } from "fs";
import * as path from "path";
import { chromium, type Page } from "playwright-core";
import { parseCsv } from "../../src/io/readCsv";
import { checkHelpLinks } from "./helpLinks";
import { checkPaneWidths } from "./paneWidth";
import { checkWorksheetFunctions } from "./functionsInChromium";
import { checkCommandLineThreads } from "./commandLineThreads";
import { serveDirectory } from "./staticServer";

const ROOT = path.resolve(__dirname, "../..");
const DIST = path.join(ROOT, "dist");
const RESULTS = path.join(ROOT, "test-results");
const CHROMIUM = "/usr/bin/chromium";
/** Upper bound on any single wait; a check fails when it is reached. */
const WAIT_MS = 120_000;

let passed = 0;
let failed = 0;

function check(name: string, ok: boolean, detail = ""): void {
  if (ok) passed++;
  else failed++;
  console.log(`${ok ? "ok  " : "FAIL"} ${name}${detail ? ` — ${detail}` : ""}`);
}

async function step(name: string, body: () => Promise<void>): Promise<void> {
  try {
    await body();
  } catch (error) {
    check(name, false, error instanceof Error ? error.message.split("\n")[0] : String(error));
  }
}

/** A screenshot of the window as the user sees it, scrolled to `section` first when given. */
async function shot(page: Page, name: string, section?: string): Promise<void> {
  if (section) await page.evaluate((selector) => document.querySelector(selector)?.scrollIntoView({ block: "start" }), section);
  await page.screenshot({ path: path.join(RESULTS, name) });
}

async function text(page: Page, selector: string): Promise<string> {
  return (await page.locator(selector).first().textContent()) ?? "";
}

async function main(): Promise<void> {
  try {
    await fs.access(path.join(DIST, "taskpane.html"));
  } catch {
    console.error("dist/taskpane.html is missing: run `npm run build` first.");
    process.exit(1);
  }
  await fs.mkdir(RESULTS, { recursive: true });
  const { server, url } = await serveDirectory(DIST);
  const browser = await chromium.launch({
    executablePath: CHROMIUM,
    headless: true,
    args: ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run"],
  });
  const page = await browser.newPage({ viewport: { width: 1280, height: 1100 } });
  page.setDefaultTimeout(WAIT_MS);
  const pageErrors: string[] = [];
  // The worksheet functions and ribbon commands share this page (one shared runtime) and
  // expect office.js; their complaints without it are reported, but are not the pane's.
  const otherErrors: string[] = [];
  page.on("pageerror", (error) => {
    if (/\/(functions|commands)\.js/.test(error.stack ?? "")) otherErrors.push(error.message);
    else pageErrors.push(error.message);
  });
  page.on("console", (message) => {
    if (message.type() === "error" && !/appsforoffice|ERR_FAILED|net::/i.test(message.text())) pageErrors.push(message.text());
  });
  // No Office here: refuse office.js so the pane must find out by itself.
  await page.route(/appsforoffice\.microsoft\.com/, (route) => route.abort());

  try {
    await step("pane starts in plain-browser mode", async () => {
      await page.goto(`${url}/taskpane.html`);
      await page.waitForSelector("body[data-mode='browser']");
      check("pane starts in plain-browser mode", (await page.locator("#mode-note").count()) === 1);
    });

    await step("section names", async () => {
      const headings = await page.locator(".pane-section h2").allTextContents();
      const expected = ["Data", "How many components", "Components", "Checks", "Put in sheet"];
      check("section names", JSON.stringify(headings) === JSON.stringify(expected), headings.join(" | "));
    });

    await step("every control has a label", async () => {
      const unlabelled = await page.evaluate(() =>
        Array.from(document.querySelectorAll("input, select, button"))
          .filter((el) => {
            const e = el as HTMLInputElement;
            if (e.closest("[hidden]")) return false;
            const named = e.getAttribute("aria-label") || (e.id && document.querySelector(`label[for='${e.id}']`)) || (e.tagName === "BUTTON" && e.textContent?.trim());
            return !named;
          })
          .map((el) => el.outerHTML.slice(0, 80)),
      );
      check("every control has a label", unlabelled.length === 0, unlabelled.join(", "));
    });

    const sampleCsv = parseCsv(await fs.readFile(path.join(DIST, "samples", "delivery-fleet.csv"), "utf8"));
    const header = sampleCsv[0] as string[];
    const dataRows = sampleCsv.length - 1;

    await step("load the sample", async () => {
      await page.selectOption("#sample-choice", "delivery-fleet");
      await page.click("#load-sample");
      await page.waitForSelector("#data-rows");
      const rows = await text(page, "#data-rows");
      const headers = await text(page, "#data-headers");
      check("sample rows counted", rows.includes(`of ${dataRows}`), rows);
      check("sample headers found", header.slice(1, 4).every((name) => headers.includes(name)), headers);
      check("grid shows the sample", (await text(page, "#grid td[data-r='0'][data-c='1']")) === header[1]);
      await shot(page, "01-data-loaded.png", "body");
    });

    await step("cancel a scan", async () => {
      // Both clicks in one task: the worker cannot answer between them, so the cancel always wins.
      await page.evaluate(() => {
        (document.getElementById("run-scan") as HTMLButtonElement).click();
        (document.getElementById("cancel-scan") as HTMLButtonElement).click();
      });
      await page.waitForSelector("#scan-problem:not([hidden])");
      check("cancel stops the scan", (await text(page, "#scan-problem")).includes("cancelled"));
      check("run is enabled again after cancel", await page.locator("#run-scan").isEnabled());
    });

    let kMax = 0;
    let suggested = 0;
    await step("run the scan", async () => {
      kMax = Number(await page.inputValue("#k-max"));
      await page.click("#run-scan");
      const sawProgress = await page.locator("#scan-progress").isVisible();
      await page.waitForSelector("#bic-chart svg g.k-point");
      await page.waitForSelector("#components-table");
      check("progress bar shown while scanning", sawProgress);
      const points = await page.locator("#bic-chart g.k-point").count();
      check("chart has one point per K", points === kMax, `${points} points for K up to ${kMax}`);
      check("chart marks the suggested K", (await page.locator("#bic-chart .suggested-label").count()) === 1);
      suggested = Number((await text(page, "#scan-status")).match(/(\d+) suggested/)?.[1] ?? NaN);
      const tableRows = await page.locator("#components-table thead th.component").count();
      check("components table shows the suggested K", tableRows === suggested, `${tableRows} components shown, ${suggested} suggested`);
      const shapes = await page.locator("#scatter svg defs path.marker").evaluateAll((els) => els.map((e) => e.getAttribute("class")));
      check("scatter tells components apart by shape", new Set(shapes).size === suggested, shapes.join(", "));
      check("scatter has a fitted line per component", (await page.locator("#scatter path.fitted-line").count()) === suggested);
      check("use-with-care note near results", (await text(page, "#use-with-care")).includes("not proof"));
      check("standard errors shown", await page.locator("#components-table .se").count().then((n) => n > 0));
      await shot(page, "02-scan.png", "#count");
      await shot(page, "03-components.png", "#components");
    });

    await step("pick K by clicking the chart", async () => {
      const target = suggested === kMax ? 1 : kMax;
      await page.click(`#bic-chart g.k-point[data-k='${target}'] rect.hit`);
      await page.waitForFunction((k) => document.querySelectorAll("#components-table thead th.component").length === k, target);
      check("clicking the chart picks K", (await page.locator(`#k-${target}`).isChecked()), `K = ${target}`);
      await page.waitForSelector("#check-measures dt");
      const warnings = await page.locator("#warnings .warning").count();
      if (target > suggested) check("an over-large K draws a warning", warnings > 0, `${warnings} warnings at K = ${target}`);
      await shot(page, "04-large-k-checks.png", "#checks");
    });

    await step("pick K with the keyboard", async () => {
      await page.focus("#bic-chart g.k-point[tabindex='0']");
      const before = Number(await page.locator("#bic-chart g.k-point[tabindex='0']").getAttribute("data-k"));
      const key = before > 1 ? "ArrowLeft" : "ArrowRight";
      await page.keyboard.press(key);
      await page.keyboard.press("Enter");
      const expected = before + (key === "ArrowLeft" ? -1 : 1);
      await page.waitForFunction((k) => document.querySelectorAll("#components-table thead th.component").length === k, expected);
      check("arrow keys and Enter pick K", await page.locator(`#k-${expected}`).isChecked(), `${before} -> ${expected}`);
      const focusVisible = await page.evaluate(() => {
        const el = document.activeElement as Element | null;
        return !!el && el.matches(".k-point") && getComputedStyle(el.querySelector(".hit")!).strokeWidth !== "0px";
      });
      check("focused K point is visibly marked", focusVisible);
      // Back to the suggested K for the rest.
      await page.click(`#k-${suggested}`);
      await page.waitForFunction((k) => document.querySelectorAll("#components-table thead th.component").length === k, suggested);
      const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
      check("no sideways scrolling of the page", overflow <= 0, `${overflow}px too wide`);
    });

    await step("place formulas in the sheet", async () => {
      const firstFree = header.length + 1; // one empty column after the data
      const column = String.fromCharCode(65 + firstFree);
      await page.fill("#place-at", `${column}1`);
      await page.click("#place-button");
      await page.waitForFunction(() => /Placed/.test(document.getElementById("place-result")?.textContent ?? ""));
      const formula = await text(page, `#grid td[data-r='0'][data-c='${firstFree}']`);
      check("SKEIN.FIT formula placed", formula.startsWith("=SKEIN.FIT(Data!B1:B"), formula);
      await page.click("#place-button");
      await page.waitForSelector("#place-confirm:not([hidden])");
      check("asks before overwriting", (await text(page, "#place-confirm-text")).includes("Replace them?"));
      await shot(page, "05-put-in-sheet.png", "#place");
      await page.click("#place-keep");
      check("keeping leaves the cells", (await text(page, `#grid td[data-r='0'][data-c='${firstFree}']`)).startsWith("=SKEIN.FIT("));
    });

    await step("edits refresh the fit; many skipped rows warn", async () => {
      const labelsBefore = await page.locator("#components-table thead th.component").count();
      // Blank the y cells of the first fifth of the rows, in the grid, as a user would.
      const blank = Math.ceil(dataRows / 5);
      await page.click("#grid td[data-r='1'][data-c='1']");
      await page.click(`#grid td[data-r='${blank}'][data-c='1']`, { modifiers: ["Shift"] });
      await page.keyboard.press("Delete");
      await page.waitForSelector("#warnings .warning-skipped");
      await page.waitForSelector("#refresh-note:not([hidden])");
      const rows = await text(page, "#data-rows");
      check("refresh re-reads the data", rows.includes(`Rows used: ${dataRows - blank} of ${dataRows}`), rows);
      check("many skipped rows warn", (await text(page, "#warnings .warning-skipped")).includes("skipped"));
      check("refit keeps K", (await page.locator("#components-table thead th.component").count()) === labelsBefore);
      check("stale scan is flagged", await page.locator("#scan-stale").isVisible());
      await shot(page, "06-after-edit-data.png", "body");
      await shot(page, "07-after-edit-checks.png", "#checks");
    });

    await step("narrow window, as a task pane is", async () => {
      await page.setViewportSize({ width: 380, height: 900 });
      await page.locator("#count").scrollIntoViewIfNeeded();
      const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
      check("no sideways scrolling of the page at 380 px", overflow <= 0, `${overflow}px too wide`);
      await page.screenshot({ path: path.join(RESULTS, "08-narrow-pane.png"), fullPage: false });
      await page.setViewportSize({ width: 1280, height: 1100 });
    });

    await step("pane at 320 and 350 px", () => checkPaneWidths(page, check, RESULTS));

    await step("open an XLSX file", async () => {
      const workbook = path.join(ROOT, "sample-workbooks", "shop-chain.xlsx");
      try {
        await fs.access(workbook);
      } catch {
        console.log("note: sample-workbooks/shop-chain.xlsx not found; XLSX check skipped");
        return;
      }
      await page.setInputFiles("#file-input", workbook);
      await page.waitForFunction(() => /Loaded shop-chain\.xlsx/.test(document.getElementById("load-status")?.textContent ?? ""));
      const csv = parseCsv(await fs.readFile(path.join(DIST, "samples", "shop-chain.csv"), "utf8"));
      const first = await text(page, "#grid td[data-r='0'][data-c='0']");
      check("XLSX fills the sheet", first === csv[0][0], `A1 = ${first}`);
      await page.waitForSelector("#data-rows");
      check("XLSX ranges guessed and read", (await text(page, "#data-rows")).includes(`of ${csv.length - 1}`), await text(page, "#data-rows"));
      await shot(page, "09-xlsx-opened.png", "body");
    });

    await step("help links", () => checkHelpLinks(() => browser.newPage(), url, DIST, check, RESULTS));

    check("no errors from the pane", pageErrors.length === 0, pageErrors.slice(0, 3).join(" | "));
    if (otherErrors.length > 0) console.log(`note: functions.js/commands.js without office.js: ${otherErrors.join(" | ")}`);

    // The worksheet functions, on their own page with a CustomFunctions stand-in.
    await step("worksheet functions in the shared-runtime page", () => checkWorksheetFunctions(browser, url, check));
  } finally {
    await browser.close();
    server.close();
  }
  // The built command line's helper thread (no browser needed, but the same build).
  await step("command line with its helper thread", () => checkCommandLineThreads(check));
  console.log(`${passed} passed, ${failed} failed`);
  process.exit(failed === 0 ? 0 : 1);
}

main().catch((error) => {
  console.error(error);
  console.log(`${passed} passed, ${failed + 1} failed`);
  process.exit(1);
});
