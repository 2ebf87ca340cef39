// @vitest-environment jsdom
import { beforeEach, describe, expect, it } from "vitest";
import { mountBrowserPane } from "../taskpane/mountPane";
import { EngineService } from "../src/service/engineService";
import { inventedSheet } from "./support/taskpaneFixtures";

const rows = inventedSheet();
const $ = <T extends Element = HTMLElement>(selector: string) => document.querySelector<T>(selector)!;
async function settle(rounds = 20): Promise<void> {
  for (let i = 0; i < rounds; i++) await new Promise((resolve) => setTimeout(resolve, 0));
}

beforeEach(() => {
  document.body.innerHTML = `<main id="app"></main>`;
});

describe("plain-browser mode", () => {
  function mount() {
    const csv = rows.map((r) => r.map((v) => (v === null ? "" : String(v))).join(",")).join("\n");
    return mountBrowserPane($("#app"), new EngineService(), async () => csv);
  }

  it("fills the built-in sheet from a file and guesses the ranges", async () => {
    const { loadRows, grid } = mount();
    await loadRows!(rows, undefined, "invented.csv");
    expect(grid!.get(0, 0)).toBe("Output");
    expect($("#grid td[data-r='1'][data-c='1']").textContent).toBe(String(rows[1][1]));
    expect($<HTMLInputElement>("#y-address").value).toBe(`Data!A1:A${rows.length}`);
    expect($<HTMLInputElement>("#x-address").value).toBe(`Data!B1:B${rows.length}`);
    expect($("#load-status").textContent).toContain("guess");
    expect($("#data-rows").textContent).toContain(`of ${rows.length - 1}`);
  });

  it("labels every control", () => {
    mount();
    for (const control of Array.from(document.querySelectorAll("input, select, button"))) {
      const id = control.getAttribute("id");
      const named = control.getAttribute("aria-label") || (id && document.querySelector(`label[for='${id}']`)) || (control.tagName === "BUTTON" && control.textContent!.trim());
      expect(named, control.outerHTML).toBeTruthy();
    }
  });

  it("runs the same sections and puts plain values into the sheet", async () => {
    const { loadRows, grid, pane } = mount();
    await loadRows!(rows, undefined, "invented.csv");
    pane.setKMax(2);
    await pane.runScan();
    await pane.chooseK(2);
    await settle();
    expect(document.querySelectorAll("#components-table th.component").length).toBe(2);
    expect(document.querySelectorAll("#scatter path.fitted-line").length).toBe(2);
    expect($("#place-browser-note").hidden).toBe(false);

    $<HTMLInputElement>("#place-as-values").checked = true;
    $<HTMLInputElement>("#place-at").value = "D1";
    $<HTMLButtonElement>("#place-button").click();
    await settle();
    expect($("#place-result").textContent).toContain("Placed 2 results");
    // The components table: header (as SKEIN.FIT's), then one row per component with its weight in %.
    expect(grid!.get(0, 3)).toBe("component");
    expect(grid!.get(0, 4)).toBe("weight (%)");
    const fit = pane.state.fit!;
    expect(grid!.get(1, 4)).toBe(100 * fit.components[0].weight);
    expect(grid!.get(2, 4)).toBe(100 * fit.components[1].weight);
    // Labels start 4 + p + 1 columns to the right: column J; a skipped row stays empty.
    expect(grid!.get(0, 9)).toBe("component");
    expect(grid!.get(5, 9)).toBe("");
    expect([1, 2]).toContain(grid!.get(1, 9));
  });

  it("cancels a running scan without touching the results, and runs it afresh after", async () => {
    const { loadRows, pane } = mount();
    await loadRows!(rows, undefined, "invented.csv");
    pane.setKMax(2);
    const running = pane.runScan();
    pane.cancelScan();
    await running;
    expect(pane.state.scan).toBeNull();
    expect(pane.state.scanning).toBe(false);
    expect(pane.state.scanProblem).toContain("Scan cancelled");
    // The cancelled scan left nothing behind in the cache: the next one computes and shows its result.
    await pane.runScan();
    expect(pane.state.scan?.rows.map((r) => r.k)).toEqual([1, 2]);
    expect(pane.state.scanProblem).toBeNull();
  });

  it("a newer scan replaces a running one, whose end changes nothing", async () => {
    const { loadRows, pane } = mount();
    await loadRows!(rows, undefined, "invented.csv");
    pane.setKMax(3);
    const first = pane.runScan();
    pane.setKMax(2);
    const second = pane.runScan();
    await Promise.all([first, second]);
    expect(pane.state.scan?.rows.map((r) => r.k)).toEqual([1, 2]);
    expect(pane.state.scanProblem).toBeNull();
    expect(pane.state.scanning).toBe(false);
  });
});
