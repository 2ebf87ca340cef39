/*
 * The worksheet functions as Excel's shared runtime runs them, from the built bundle: the
 * shared-runtime page (dist/taskpane.html) is loaded with a stand-in for Excel's
 * CustomFunctions global injected before functions.js runs. The stand-in records
 * associate(), and the checks call the functions as Excel does: ranges as 2-D arrays with
 * null or "" for blank cells, null for an omitted optional argument, and an invocation with
 * the formula's address and an onCanceled slot that Excel calls when a newer call of the same
 * cell replaces a running one. The numbers are compared with the command line's
 * (`node dist/cli/skein.js ... --json`) on the delivery-fleet sample (invented demo data).
 */
import { execFileSync } from "child_process";
import { promises as fs } from "fs";
import * as path from "path";
import type { Browser, Page } from "playwright-core";
import { parseCsv } from "../../src/io/readCsv";

type Check = (name: string, ok: boolean, detail?: string) => void;

const ROOT = path.resolve(__dirname, "../..");
const DIST = path.join(ROOT, "dist");
const SAMPLE = path.join(ROOT, "sample-workbooks", "delivery-fleet.csv");
const NEW_ROWS = path.join(ROOT, "test", "fixtures", "new-trips.csv");
const Y = "Fuel used (L)";
const X = ["Distance (km)", "Payload (t)"];
const K = 3;
const K_MAX = 4;
/** Same code and seed in the page's worker and in Node: the numbers may differ by rounding only. */
const AGREEMENT = 1e-9;
/** Blank rows after the data, as a whole-column range brings them: y blanks as null, x blanks as "". */
const TRAILING_BLANK_ROWS = 5;

/**
 * Runs in the page before any of its scripts: Excel's CustomFunctions, as far as functions.js
 * uses it. Plain JavaScript text, so nothing of this file's transpiling reaches the page.
 */
const STAND_IN = `
(() => {
  class WorksheetError {
    constructor(code, message) { this.code = code; this.message = message; }
  }
  const associated = {};
  window.skeinAssociated = associated;
  window.CustomFunctions = {
    associate(id, fn) {
      if (typeof id === "string" && typeof fn === "function") associated[id] = fn;
      else if (id && typeof id === "object") Object.assign(associated, id);
    },
    Error: WorksheetError,
    ErrorCode: { invalidValue: "#VALUE!", notAvailable: "#N/A", invalidNumber: "#NUM!", divisionByZero: "#DIV/0!", nullReference: "#NULL!", invalidName: "#NAME?", invalidReference: "#REF!" },
  };
  // Record the workers the page starts and ends, to see where the engine ran.
  const workers = [];
  window.skeinWorkers = workers;
  const RealWorker = window.Worker;
  window.Worker = class extends RealWorker {
    constructor(url, options) {
      super(url, options);
      this.record = { url: String(url), terminated: false };
      workers.push(this.record);
    }
    terminate() {
      this.record.terminated = true;
      super.terminate();
    }
  };
  // Excel's side of a formula cell: a newer call of a cell cancels its running call first.
  const running = new Map();
  window.skeinCall = async (name, args, address) => {
    const before = running.get(address);
    if (before && before.onCanceled) before.onCanceled();
    const invocation = { address };
    running.set(address, invocation);
    try {
      return { ok: true, value: await associated[name](...args, invocation) };
    } catch (error) {
      return { ok: false, isWorksheetError: error instanceof WorksheetError, code: error && error.code, message: error && error.message };
    } finally {
      if (running.get(address) === invocation) running.delete(address);
    }
  };
})();
`;

type CallResult = { ok: true; value: unknown[][] } | { ok: false; isWorksheetError: boolean; code?: string; message?: string };

function call(page: Page, name: string, args: unknown[], address: string): Promise<CallResult> {
  return page.evaluate(([n, a, at]) => (window as unknown as { skeinCall: (n: string, a: unknown[], at: string) => Promise<CallResult> }).skeinCall(n, a, at), [name, args, address] as const);
}

function cli(...args: string[]): any {
  return JSON.parse(execFileSync(process.execPath, [path.join(DIST, "cli", "skein.js"), ...args], { encoding: "utf8", maxBuffer: 64 * 1024 * 1024 }));
}

/** Largest |a − b| / max(1, |b|) over pairs; Infinity when the lengths differ or a value is not a number. */
function largestDifference(a: unknown[], b: number[]): number {
  if (a.length !== b.length) return Infinity;
  let worst = 0;
  a.forEach((value, i) => {
    worst = Math.max(worst, typeof value === "number" ? Math.abs(value - b[i]) / Math.max(1, Math.abs(b[i])) : Infinity);
  });
  return worst;
}

/** A column range as Excel passes it: header cell, values, then blank rows. */
function columns(rows: string[][], names: string[], blank: null | ""): unknown[][] {
  const header = rows[0];
  const indices = names.map((name) => header.indexOf(name));
  const values = rows.slice(1).map((row) => indices.map((j) => Number(row[j])));
  const blanks = Array.from({ length: TRAILING_BLANK_ROWS }, () => indices.map(() => blank));
  return [names, ...values, ...blanks];
}

export async function checkWorksheetFunctions(browser: Browser, url: string, check: Check): Promise<void> {
  const page = await browser.newPage();
  page.setDefaultTimeout(120_000);
  const pageErrors: string[] = [];
  page.on("pageerror", (error) => pageErrors.push(error.message));
  await page.route(/appsforoffice\.microsoft\.com/, (route) => route.abort());
  await page.addInitScript(STAND_IN);
  try {
    await page.goto(`${url}/taskpane.html`);
    const metadata = JSON.parse(await fs.readFile(path.join(DIST, "functions.json"), "utf8")) as { functions: { id: string }[] };
    const ids = metadata.functions.map((f) => f.id);
    await page.waitForFunction((count) => Object.keys((window as unknown as { skeinAssociated: object }).skeinAssociated).length >= count, ids.length);
    const associated = await page.evaluate(() => Object.keys((window as unknown as { skeinAssociated: object }).skeinAssociated));
    const missing = ids.filter((id) => !associated.includes(id));
    check("functions: every function in functions.json is associated", missing.length === 0 && ids.length > 0, `${ids.length} in functions.json (${ids.join(", ")}); missing: ${missing.join(", ") || "none"}`);

    // The weighted-Gram kernel's SIMD module compiles on this page's main thread (synchronously,
    // as the engine does) and gives the sums of a small block: otherwise the engine would fall
    // back to its JavaScript path here, right but slower.
    const moduleText = await fs.readFile(path.join(ROOT, "src", "engine", "wasm", "weightedGramModule.ts"), "utf8");
    const base64 = /"([A-Za-z0-9+/=]+)"/.exec(moduleText)?.[1] ?? "";
    const simd = await page.evaluate((encoded) => {
      try {
        const text = atob(encoded);
        const bytes = Uint8Array.from(text, (c) => c.charCodeAt(0));
        const instance = new WebAssembly.Instance(new WebAssembly.Module(bytes), {});
        const memory = instance.exports.memory as WebAssembly.Memory;
        const heap = new Float64Array(memory.buffer);
        // Two rows of four columns, row-major, weighted then plain: out[l·4 + j] = Σ_i w_ij x_il.
        heap.set([1, 2, 3, 4, 5, 6, 7, 8], 0);
        heap.set([1, 0, 0, 1, 1, 1, 0, 0], 8);
        (instance.exports.gram as (...a: number[]) => void)(0, 64, 2, 4, 4, 128, 0);
        return Array.from(heap.subarray(16, 32)).join(",");
      } catch (error) {
        return `failed: ${String(error)}`;
      }
    }, base64);
    // Column l of the output holds Σ_i w_i· x_il: l = 0 → (1+5, 2+6, 3+7, 4+8); l = 1 → row 2 only; l = 2 → 0; l = 3 → row 1 only.
    const expectedSimd = [6, 8, 10, 12, 5, 6, 7, 8, 0, 0, 0, 0, 1, 2, 3, 4].join(",");
    check("functions: the SIMD module of the weighted-Gram kernel runs in this browser", simd === expectedSimd, simd);

    // Its Cholesky factorisation too (cholesky.ts uses it from 8 x 8 up): F Fᵀ gives back the
    // scaled matrix DGD of a 3 x 3 G (a pair of rows and an odd last row), and a singular G
    // is refused.
    const cholesky = await page.evaluate((encoded) => {
      try {
        const text = atob(encoded);
        const bytes = Uint8Array.from(text, (c) => c.charCodeAt(0));
        const instance = new WebAssembly.Instance(new WebAssembly.Module(bytes), {});
        const heap = new Float64Array((instance.exports.memory as WebAssembly.Memory).buffer);
        const factor = instance.exports.cholesky as (...a: number[]) => number;
        const q = 3;
        // No named inner functions: the page gets this code as text, without the test's helpers.
        const results: Array<{ ok: number; worst: number }> = [];
        for (const g of [[4, 2, 0, 2, 3, 1, 0, 1, 2], [1, 1, 0, 1, 1, 0, 0, 0, 1]]) {
          const d = [0, 1, 2].map((a) => 1 / Math.sqrt(g[a * q + a]));
          heap.set(g, 0);
          heap.set(d, 9);
          const ok = factor(0, 72, q, 0, 1e-13, 96);
          let worst = 0;
          for (let i = 0; i < q; i++) {
            for (let j = 0; j <= i; j++) {
              let product = 0;
              for (let k = 0; k <= j; k++) product += heap[12 + (i >> 1) * 2 * q + 2 * k + (i & 1)] * heap[12 + (j >> 1) * 2 * q + 2 * k + (j & 1)];
              worst = Math.max(worst, Math.abs(product - d[i] * g[j * q + i] * d[j]));
            }
          }
          results.push({ ok, worst });
        }
        const [definite, singular] = results;
        return `${definite.ok} ${definite.worst.toExponential(1)} ${singular.ok}`;
      } catch (error) {
        return `failed: ${String(error)}`;
      }
    }, base64);
    const [factored, residual, refused] = cholesky.split(" ");
    check("functions: the SIMD module's Cholesky factorisation runs in this browser", factored === "1" && Number(residual) <= 1e-15 && refused === "0", `factored ${factored}, largest |F Fᵀ − DGD| ${residual}, singular: ${refused === "0" ? "refused" : cholesky}`);

    const rows = parseCsv(await fs.readFile(SAMPLE, "utf8")) as string[][];
    const y = columns(rows, [Y], null);
    const x = columns(rows, X, "");
    const cells = (rows.length - 1) * (X.length + 1);
    const xFlag = X.join(",");

    // FIT: k = 3, settings omitted (null), as =SKEIN.FIT(B1:B606, C1:D606, 3).
    const workersBefore = await page.evaluate(() => (window as unknown as { skeinWorkers: unknown[] }).skeinWorkers.length);
    const fitted = await call(page, "FIT", [y, x, K, null], "Sheet1!F1");
    const fitReport = cli("fit", SAMPLE, "--y", Y, "--x", xFlag, "--k", String(K), "--json");
    if (!fitted.ok) {
      check("functions: FIT matches skein fit --json", false, `${fitted.code} ${fitted.message}`);
    } else {
      const table = fitted.value.slice(1);
      // FIT shows weights as percentages (the glossary's one style for shares).
      const fromCli = fitReport.components.flatMap((c: { weight: number; sigma: number; coefficients: number[] }) => [100 * c.weight, c.sigma, ...c.coefficients]);
      const fromSheet = table.flatMap((row) => row.slice(1));
      const worst = largestDifference(fromSheet, fromCli);
      check("functions: FIT matches skein fit --json", table.length === K && worst <= AGREEMENT, `${table.length} components, largest relative difference ${worst.toExponential(1)}`);
    }
    const workers = await page.evaluate(() => (window as unknown as { skeinWorkers: { url: string }[] }).skeinWorkers);
    const started = workers.slice(workersBefore);
    let fromBundle = false;
    if (started.length > 0) {
      const file = new URL(started[0].url).pathname.replace(/^\//, "");
      fromBundle = await fs.access(path.join(DIST, file)).then(() => true, () => false);
    }
    check(`functions: a call over ${cells} cells runs in a Web Worker from the built bundle`, cells >= 1000 && started.length > 0 && fromBundle, started.map((w) => w.url).join(", ") || "no worker started");

    // LABELS: the same fit, one label per input row; "" for the blank rows is trimmed away.
    const labels = await call(page, "LABELS", [y, x, K, null], "Sheet1!K1");
    if (!labels.ok) check("functions: LABELS matches skein fit --json labels", false, `${labels.code} ${labels.message}`);
    else {
      const shown = labels.value.slice(1).map((row) => row[0]);
      const same = shown.length === fitReport.labels.length && shown.every((label, i) => label === fitReport.labels[i]);
      check("functions: LABELS matches skein fit --json labels", same, `${shown.length} labels, ${fitReport.labels.length} from the command line`);
    }

    // SCAN: kmax = 4, settings given as text.
    const scanned = await call(page, "SCAN", [y, x, K_MAX, [["seed=1"]]], "Sheet1!M1");
    const scanReport = cli("scan", SAMPLE, "--y", Y, "--x", xFlag, "--k-max", String(K_MAX), "--json");
    if (!scanned.ok) check("functions: SCAN matches skein scan --json", false, `${scanned.code} ${scanned.message}`);
    else {
      const fromSheet = scanned.value.slice(1).flatMap((row) => row.slice(1, 4));
      // SCAN's columns: K, BIC, ICL, log-likelihood, smallest gap, starts agree, converged, suggested, note.
      const fromCli = scanReport.rows.flatMap((row: { logLikelihood: number; bic: number; icl: number }) => [row.bic, row.icl, row.logLikelihood]);
      const worst = largestDifference(fromSheet, fromCli);
      const suggested = scanned.value.slice(1).findIndex((row) => row[7] === true) + 1;
      check("functions: SCAN matches skein scan --json", worst <= AGREEMENT && suggested === scanReport.chosenK, `BIC, ICL, log-likelihood of K = 1..${K_MAX}: largest relative difference ${worst.toExponential(1)}; suggested ${suggested}, command line ${scanReport.chosenK}`);
    }

    // PREDICT: new rows as a range with a header row.
    const newRows = parseCsv(await fs.readFile(NEW_ROWS, "utf8")) as string[][];
    const newX = [X, ...newRows.slice(1).map((row) => X.map((name) => Number(row[newRows[0].indexOf(name)])))];
    const predicted = await call(page, "PREDICT", [y, x, newX, K, null], "Sheet1!R1");
    const predictReport = cli("predict", SAMPLE, "--y", Y, "--x", xFlag, "--k", String(K), "--new", NEW_ROWS, "--json");
    if (!predicted.ok) check("functions: PREDICT matches skein predict --json", false, `${predicted.code} ${predicted.message}`);
    else {
      const fromSheet = predicted.value.slice(1).flat();
      const fromCli = predictReport.rows.flatMap((row: { perComponent: number[]; weighted: number }) => [...row.perComponent, row.weighted]);
      const worst = largestDifference(fromSheet, fromCli);
      check("functions: PREDICT matches skein predict --json", worst <= AGREEMENT, `${predictReport.rows.length} new rows, largest relative difference ${worst.toExponential(1)}`);
    }

    // A newer call of the same cell cancels the running one (new k: not in the cache).
    const [first, second, terminated] = await page.evaluate(
      async ([yRange, xRange]) => {
        const scope = window as unknown as { skeinCall: (n: string, a: unknown[], at: string) => Promise<CallResult>; skeinWorkers: { terminated: boolean }[] };
        const before = scope.skeinWorkers.filter((w) => w.terminated).length;
        const running = scope.skeinCall("FIT", [yRange, xRange, 5, null], "Sheet1!W1");
        await new Promise((resolve) => setTimeout(resolve, 50));
        const newer = scope.skeinCall("FIT", [yRange, xRange, 4, null], "Sheet1!W1");
        const results = await Promise.all([running, newer]);
        return [...results, scope.skeinWorkers.filter((w) => w.terminated).length - before] as const;
      },
      [y, x] as const,
    );
    check(
      "functions: a newer call cancels the running one",
      !first.ok && first.isWorksheetError && first.code === "#N/A" && second.ok && second.value.length === 5 && terminated >= 1,
      `running call: ${first.ok ? "finished" : `${first.code} ${first.message}`}; newer call: ${second.ok ? `${second.value.length - 1} components` : second.code}; workers terminated: ${terminated}`,
    );

    // Bad input comes back as CustomFunctions.Error with its message.
    const bad = await call(page, "FIT", [y, x, 0, null], "Sheet1!Z1");
    check("functions: k = 0 comes back as #VALUE! with its message", !bad.ok && bad.isWorksheetError && bad.code === "#VALUE!" && /k must be a whole number from 1 to 50/.test(bad.message ?? ""), bad.ok ? "no error" : `${bad.code}: ${bad.message}`);
    const badSetting = await call(page, "SCAN", [y, x, null, [["model=mixed"]]], "Sheet1!Z2");
    check("functions: a bad setting comes back as #VALUE! naming it", !badSetting.ok && badSetting.isWorksheetError && badSetting.code === "#VALUE!" && /model must be plain or joint/.test(badSetting.message ?? ""), badSetting.ok ? "no error" : `${badSetting.code}: ${badSetting.message}`);

    check("functions: no page errors", pageErrors.length === 0, pageErrors.slice(0, 3).join(" | "));
  } finally {
    await page.close();
  }
}
