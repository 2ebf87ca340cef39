// @vitest-environment jsdom
import { afterEach, beforeEach, describe, expect, it, vi } from "vitest";
import { ExcelHost } from "../taskpane/excelHost";
import { mountExcelPane } from "../taskpane/mountPane";
import { EngineService } from "../src/service/engineService";
import { fitMixture } from "../src/engine/fitMixture";
import type { MixtureFit } from "../src/engine/mixtureTypes";
import { REFRESH_DELAY_MS } from "../taskpane/pane";
import { inventedSheet } from "./support/taskpaneFixtures";
import { mockWorkbook, type MockWorkbook } from "./support/mockWorkbook";

let book: MockWorkbook;
const rows = inventedSheet();
const last = rows.length;

beforeEach(() => {
  // Sheet1: y in A, x in B, from row 1 (header) to row `last`.
  book = mockWorkbook({ Sheet1: rows.map((r) => r.slice()) }, "Sheet1", "Sheet1!A1");
  (globalThis as { Excel?: unknown }).Excel = book.excel;
  document.body.innerHTML = `<main id="app"></main>`;
});

afterEach(() => {
  delete (globalThis as { Excel?: unknown }).Excel;
  vi.useRealTimers();
});

const $ = <T extends Element = HTMLElement>(selector: string) => document.querySelector<T>(selector)!;
const click = (selector: string) => $<HTMLButtonElement>(selector).click();
/** Lets pending promise chains (Excel.run batches, engine calls) finish. */
async function settle(rounds = 20): Promise<void> {
  for (let i = 0; i < rounds; i++) await new Promise((resolve) => setTimeout(resolve, 0));
}

describe("ExcelHost", () => {
  it("reads the selection's address and a range's values, blanks as null", async () => {
    const host = new ExcelHost();
    book.selection = "Sheet1!A1:A10";
    expect(await host.selectedAddress()).toBe("Sheet1!A1:A10");
    const values = await host.readValues("Sheet1!A8:B10");
    expect(values).toEqual([rows[7], rows[8], rows[9]]);
    expect(values[2][0]).toBeNull();
  });

  it("counts filled cells and writes formulas into the block", async () => {
    const host = new ExcelHost();
    expect(await host.occupiedCells("Sheet1!B1", 3, 2)).toBe(3);
    expect(await host.occupiedCells("Sheet1!D1", 3, 2)).toBe(0);
    await host.write("Sheet1!D1", [["=SKEIN.FIT(A1:A9, B1:B9, 2)"]]);
    expect(book.writes).toEqual([{ address: "Sheet1!D1", formulas: [["=SKEIN.FIT(A1:A9, B1:B9, 2)"]] }]);
    expect(await host.occupiedCells("Sheet1!D1", 3, 2)).toBe(1);
  });

  it("hears edits inside the watched ranges only", async () => {
    const host = new ExcelHost();
    const heard: number[] = [];
    const stop = await host.watch(["Sheet1!A1:A50", "Sheet1!B1:B50"], () => heard.push(1));
    expect(book.handlerCount("Sheet1")).toBe(1);
    await book.edit("Sheet1", "B7", [[3]]);
    await book.edit("Sheet1", "F7", [[3]]);
    await book.edit("Sheet1", "A51", [[3]]);
    expect(heard.length).toBe(1);
    stop();
    await settle();
    expect(book.handlerCount("Sheet1")).toBe(0);
  });
});

describe("the pane inside Excel", () => {
  function mount() {
    return mountExcelPane($("#app"), new ExcelHost(), new EngineService());
  }

  it("takes y and x from the selection and reports rows used and skipped", async () => {
    mount();
    const headings = Array.from(document.querySelectorAll(".pane-section h2")).map((h) => h.textContent);
    expect(headings).toEqual(["Data", "How many components", "Components", "Checks", "Put in sheet"]);
    book.selection = `Sheet1!A1:A${last}`;
    click("#y-use");
    await settle();
    book.selection = `Sheet1!B1:B${last}`;
    click("#x-use");
    await settle();
    expect($<HTMLInputElement>("#y-address").value).toBe(`Sheet1!A1:A${last}`);
    expect($("#data-headers").textContent).toContain("“Output”");
    expect($("#data-headers").textContent).toContain("“Input”");
    expect($("#data-rows").textContent).toBe(`Rows used: ${last - 3} of ${last - 1}. Rows skipped: 2 (1.7%).`);
    const skipped = Array.from(document.querySelectorAll("#data-skipped li")).map((li) => li.textContent);
    // Sheet row 6 holds "n/a" in Input; sheet row 10 a blank Output (fixture).
    expect(skipped).toEqual(["Row 6: text in Input", "Row 10: blank in Output"]);
  });

  it("scans, shows a chosen K, and places live formulas without overwriting data unasked", async () => {
    const { pane } = mount();
    await pane.setAddresses(`Sheet1!A1:A${last}`, `Sheet1!B1:B${last}`);
    pane.setKMax(3);
    await pane.runScan();
    await settle();
    expect(document.querySelectorAll("#bic-chart g.k-point").length).toBe(3);
    expect(document.querySelectorAll("#scan-table tbody tr").length).toBe(3);
    const chosen = pane.state.scan!.chosenK;
    expect(document.querySelectorAll("#components-table th.component").length).toBe(chosen);
    expect($("#use-with-care").textContent).toContain("not proof that a real group exists");

    // Pick K = 1 by clicking its point in the chart.
    $("#bic-chart g.k-point[data-k='1']").dispatchEvent(new MouseEvent("click", { bubbles: true }));
    await settle();
    expect(pane.state.chosenK).toBe(1);
    expect(document.querySelectorAll("#components-table th.component").length).toBe(1);

    // Place formulas over the data: the pane asks first, and writes nothing until told.
    $<HTMLInputElement>("#place-at").value = "Sheet1!B1";
    click("#place-button");
    await settle();
    expect($("#place-confirm").hidden).toBe(false);
    expect(book.writes).toEqual([]);
    click("#place-keep");
    expect(book.writes).toEqual([]);

    $<HTMLInputElement>("#place-at").value = "Sheet1!E1";
    click("#place-button");
    await settle();
    expect($("#place-confirm").hidden).toBe(true);
    expect(book.writes.map((w) => w.address)).toEqual(["Sheet1!E1", "Sheet1!K1"]);
    expect(book.writes[0].formulas).toEqual([[`=SKEIN.FIT(Sheet1!A1:A${last}, Sheet1!B1:B${last}, 1, "seed=1")`]]);
    expect(book.writes[1].formulas).toEqual([[`=SKEIN.LABELS(Sheet1!A1:A${last}, Sheet1!B1:B${last}, 1, "seed=1")`]]);
  });

  it("keeps the ranges with the workbook and listens again when the pane reopens", async () => {
    const store = new Map<string, unknown>();
    (globalThis as { Office?: unknown }).Office = { context: { document: { settings: { get: (k: string) => store.get(k) ?? null, set: (k: string, v: unknown) => store.set(k, v), saveAsync: (done: () => void) => done() } } } };
    try {
      const first = mount();
      await first.pane.setAddresses(`Sheet1!A1:A${last}`, `Sheet1!B1:B${last}`);
      expect(book.handlerCount("Sheet1")).toBe(1);
      // The pane closes and opens again: a fresh pane on the same workbook.
      document.body.innerHTML = `<main id="app"></main>`;
      const second = mount();
      await settle();
      expect(second.pane.state.yAddress).toBe(`Sheet1!A1:A${last}`);
      expect(second.pane.state.design?.n).toBe(last - 3);
      expect(book.handlerCount("Sheet1")).toBe(2);
    } finally {
      delete (globalThis as { Office?: unknown }).Office;
    }
  });

  it("refits after an edit that swaps the components' sizes, keeping each component's number by matching", async () => {
    const { pane } = mount();
    await pane.setAddresses(`Sheet1!A1:A${last}`, `Sheet1!B1:B${last}`);
    pane.setKMax(2);
    await pane.runScan();
    await settle();
    await pane.chooseK(2);
    await settle();
    const before = pane.state.fit!;
    // The fixture's line y = 12 − x keeps all its 60 rows, y = 1 + 2x loses two to skipped
    // cells: the larger component, numbered 1 in the canonical order, is the falling line.
    const slope = (fit: MixtureFit, c: number) => fit.components[c].coefficients[1];
    expect(slope(before, 0)).toBeCloseTo(-1, 1);
    expect(slope(before, 1)).toBeCloseTo(2, 1);
    // The edit moves eight rows of the falling line (odd data rows 11 to 25) onto y = 1 + 2x,
    // so the rising line now has 66 rows and the falling one 52: in the canonical order
    // (largest first) they would swap numbers.
    const edited: number[][] = [];
    for (let i = 11; i <= 25; i++) edited.push([i % 2 === 1 ? Number((1 + 2 * (rows[i + 1][1] as number)).toFixed(3)) : (rows[i + 1][0] as number)]);
    vi.useFakeTimers();
    await book.edit("Sheet1", `A${11 + 2}`, edited);
    await vi.advanceTimersByTimeAsync(REFRESH_DELAY_MS);
    // The refit runs after one turn of the event loop (the service yields before a fit on the page).
    await vi.advanceTimersByTimeAsync(10);
    vi.useRealTimers();
    await settle();
    const after = pane.state.fit!;
    expect(after).not.toBe(before);
    expect($("#refresh-note").textContent).toContain("component numbers were kept");
    expect($("#scan-stale").hidden).toBe(false);

    // Without matching, the new data's fit would put the rising line first.
    const design = pane.state.design!;
    const unmatched = fitMixture(design, { k: 2, seed: pane.state.seed });
    expect(slope(unmatched, 0)).toBeCloseTo(2, 1);
    expect(unmatched.components[0].weight).toBeGreaterThan(unmatched.components[1].weight);
    // The pane's refit kept the numbers: component 1 is still the falling line, now the smaller.
    expect(slope(after, 0)).toBeCloseTo(-1, 1);
    expect(slope(after, 1)).toBeCloseTo(2, 1);
    expect(after.components[0].weight).toBeLessThan(after.components[1].weight);
    // Labels follow: data row 1 (index 1, on the falling line, not edited) is still in component 1.
    expect(after.labels[design.rowIndex.indexOf(1)]).toBe(0);

    // Running the scan again on the edited data: its fit comes in the canonical order (rising
    // line first), but the pane shows it numbered like the fit it showed before.
    await pane.runScan();
    await settle();
    const rescanned = pane.state.fit!;
    expect(pane.state.chosenK).toBe(2);
    expect(slope(pane.state.scan!.rows[1].fit, 0)).toBeCloseTo(2, 1);
    expect(slope(rescanned, 0)).toBeCloseTo(-1, 1);
    expect(slope(rescanned, 1)).toBeCloseTo(2, 1);
  });

});
