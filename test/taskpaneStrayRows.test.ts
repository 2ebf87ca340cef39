// @vitest-environment jsdom
import { beforeEach, describe, expect, it } from "vitest";
import { mountBrowserPane } from "../taskpane/mountPane";
import { EngineService } from "../src/service/engineService";
import { createRandom } from "../src/engine/random";
import { formulaFor } from "../taskpane/placement";
import { partlyExactRows } from "./support/partlyExact";

const $ = <T extends Element = HTMLElement>(selector: string) => document.querySelector<T>(selector)!;
async function settle(rounds = 20): Promise<void> {
  for (let i = 0; i < rounds; i++) await new Promise((resolve) => setTimeout(resolve, 0));
}

beforeEach(() => {
  document.body.innerHTML = `<main id="app"></main>`;
});

/** Sheet row of the typo (header in row 1). */
const TYPO_SHEET_ROW = 139;

/** Invented: 300 rows from two groups (y = 2 + 3x, y = 20 − x), a region column, one y typed as 1,000,000. */
function typoSheet(): unknown[][] {
  const random = createRandom(11);
  const rows: unknown[][] = [["Cost", "Distance", "Region"]];
  for (let i = 0; i < 300; i++) {
    const x = 10 * random.next();
    const noise = (random.next() + random.next() + random.next() - 1.5) * 0.8;
    const y = i + 2 === TYPO_SHEET_ROW ? 1_000_000 : i % 2 === 1 ? 2 + 3 * x + noise : 20 - x + noise;
    rows.push([y, x, i % 3 === 0 ? "North" : "South"]);
  }
  return rows;
}

describe("the pane: category notes and stray rows", () => {
  it("names the stray row by its sheet row and leaves it out on request, with a way back", async () => {
    const rows = typoSheet();
    const { loadRows, pane } = mountBrowserPane($("#app"), new EngineService(), async () => "");
    await loadRows!(rows, undefined, "typo.csv");
    await pane.setAddresses(`Data!A1:A${rows.length}`, `Data!B1:C${rows.length}`);
    await settle();
    expect(Array.from(document.querySelectorAll("#data-notes li")).map((li) => li.textContent)).toEqual([
      "Region holds text values: made into an indicator column for North, measured against South (the most frequent value, 200 rows).",
    ]);
    pane.setKMax(2);
    await pane.runScan();
    await settle();
    expect(pane.state.chosenK).toBe(2);
    expect($("#stray-summary").textContent).toContain("Stray rows: 1 row that no component explains");
    const listed = Array.from(document.querySelectorAll("#stray-list li")).map((li) => li.textContent);
    expect(listed).toHaveLength(1);
    expect(listed[0]).toMatch(new RegExp(`^Row ${TYPO_SHEET_ROW}: `));
    expect($("#leave-out-stray").hidden).toBe(false);

    $<HTMLButtonElement>("#leave-out-stray").click();
    await settle(200);
    await settle(200);
    expect(pane.state.leftOut).toEqual([TYPO_SHEET_ROW - 2]);
    expect($("#data-left-out").textContent).toBe(`Left out of the fit at your request: row ${TYPO_SHEET_ROW}.`);
    expect(pane.state.design!.n).toBe(299);
    expect(Array.from(document.querySelectorAll("#data-skipped li")).map((li) => li.textContent)).toEqual([`Row ${TYPO_SHEET_ROW}: left out at your request`]);
    expect(pane.state.fit).not.toBeNull();
    expect($("#stray-summary").textContent).toContain("Stray rows: none");

    $<HTMLButtonElement>("#put-back").click();
    await settle(200);
    await settle(200);
    expect(pane.state.leftOut).toEqual([]);
    expect(pane.state.design!.n).toBe(300);
    expect($("#data-left-out").hidden).toBe(true);
  });

  it("says where the scan stopped when the rows do not allow the largest K asked", async () => {
    // Invented: 8 rows on two lines; K = 3 would need 9.
    const rows: unknown[][] = [["y", "x"], [2, 1], [4.1, 2], [5.9, 3], [8.2, 4], [5, 1], [4, 2], [3.1, 3], [1.8, 4]];
    const { loadRows, pane } = mountBrowserPane($("#app"), new EngineService(), async () => "");
    await loadRows!(rows, undefined, "small.csv");
    await pane.setAddresses(`Data!A1:A9`, `Data!B1:B9`);
    pane.setKMax(5);
    await pane.runScan();
    await settle();
    expect($("#scan-stopped").textContent).toBe("Tried K = 1 to 2, not up to 5: K = 3 needs at least 9 usable rows (each component needs one more row than its 2 coefficients), and there are 8. Add rows or use fewer predictors to try more components.");
  });

  it("has a background control from the options table; 'no' lets the typo take the scan back to K = 1, and placed formulas carry it", async () => {
    const rows = typoSheet();
    const { loadRows, pane } = mountBrowserPane($("#app"), new EngineService(), async () => "");
    await loadRows!(rows, undefined, "typo.csv");
    await pane.setAddresses(`Data!A1:A${rows.length}`, `Data!B1:B${rows.length}`);
    const control = $<HTMLSelectElement>("#background");
    expect(control.value).toBe("auto");
    expect(Array.from(control.options).map((o) => o.value)).toEqual(["auto", "yes", "no"]);
    control.value = "no";
    control.dispatchEvent(new Event("change"));
    await settle();
    expect(pane.state.background).toBe("no");
    pane.setKMax(2);
    await pane.runScan();
    await settle();
    expect(pane.state.chosenK).toBe(1);
    expect(pane.state.fit!.background).toBeUndefined();
    expect(formulaFor("fit", { yAddress: "Data!A1:A301", xAddress: "Data!B1:B301", rangeRows: 301, k: 1, seed: 1, background: "no", outputs: ["fit"], mode: "formulas" })).toContain('"seed=1; background=no"');
  });
});

describe("the pane: a fit exact on some components only", () => {
  it("shows the partly exact warning with the button that runs the scan again with the next seed", async () => {
    const { x, y } = partlyExactRows();
    const rows: unknown[][] = [["y", "x"], ...Array.from(x, (v, i) => [y[i], v])];
    const { loadRows, pane } = mountBrowserPane($("#app"), new EngineService(), async () => "");
    await loadRows!(rows, undefined, "partly-exact.csv");
    await pane.setAddresses(`Data!A1:A${rows.length}`, `Data!B1:B${rows.length}`);
    await settle();
    pane.setKMax(2);
    await pane.runScan();
    await settle();
    expect(pane.state.chosenK).toBe(2);
    expect($(".warning-partly-exact .warning-title").textContent).toBe("⚠ Partly exact");
    expect($(".warning-partly-exact").textContent).toContain("1 component fits 120 rows exactly");
    expect($("#try-seed").hidden).toBe(false);
    expect($("#try-seed").textContent).toBe(`Run the scan again with seed ${pane.state.seed + 1}`);
  });
});
