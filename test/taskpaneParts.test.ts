// @vitest-environment jsdom
import { afterEach, describe, expect, it, vi } from "vitest";
import { blocksOverlap, columnIndex, columnLetters, formatAddress, parseAddress } from "../taskpane/a1";
import { guessRanges } from "../taskpane/browserMode";
import { Grid } from "../taskpane/grid";
import { coveredArea, planPlacement } from "../taskpane/placement";
import { detectHost } from "../taskpane/startup";
import { warningsFor } from "../taskpane/sections/checksSection";
import { initialState } from "../taskpane/paneState";
import { buildDesign } from "../src/engine/design";
import { fitMixture } from "../src/engine/fitMixture";
import { inventedSheet } from "./support/taskpaneFixtures";
import { partlyExactRows } from "./support/partlyExact";
import { messageOf, Pane } from "../taskpane/pane";
import type { EngineService } from "../src/service/engineService";
import type { SheetHost } from "../taskpane/host";
import { SkeinError } from "../src/engine/errors";

describe("A1 addresses", () => {
  it("turns column letters into indices and back", () => {
    // Derivation: A..Z are 0..25, AA follows Z, AZ = 26 + 25, ZZ = 26·26 + 25, AAA = 702.
    for (const [letters, index] of [["A", 0], ["Z", 25], ["AA", 26], ["AZ", 51], ["ZZ", 701], ["AAA", 702]] as const) {
      expect(columnIndex(letters)).toBe(index);
      expect(columnLetters(index)).toBe(letters);
    }
  });

  it("parses sheets, quotes, dollars and reversed corners", () => {
    expect(parseAddress("'Sales 2024'!$C$9:B2")).toEqual({ sheet: "Sales 2024", top: 1, bottom: 8, left: 1, right: 2 });
    expect(parseAddress("D4")).toEqual({ sheet: "", top: 3, bottom: 3, left: 3, right: 3 });
    expect(parseAddress("not a range")).toBeNull();
    expect(parseAddress("A0")).toBeNull();
    expect(formatAddress({ sheet: "Sales 2024", top: 1, bottom: 8, left: 1, right: 2 })).toBe("'Sales 2024'!B2:C9");
    expect(formatAddress({ sheet: "Data", top: 0, bottom: 0, left: 7, right: 7 })).toBe("Data!H1");
  });

  it("tells overlapping blocks from separate ones, sheet by sheet", () => {
    const a = parseAddress("Sheet1!B2:C10")!;
    expect(blocksOverlap(a, parseAddress("Sheet1!C10")!)).toBe(true);
    expect(blocksOverlap(a, parseAddress("Sheet1!D2")!)).toBe(false);
    expect(blocksOverlap(a, parseAddress("Other!C5")!)).toBe(false);
    expect(blocksOverlap(a, parseAddress("C5")!)).toBe(true);
  });
});

describe("guessRanges", () => {
  it("takes the first numeric column as y and the numeric block after it as x", () => {
    const rows = [["Trip", "Fuel", "Distance", "Load", "Note"], ["T1", 3, 40, 1, "a"], ["T2", 4, 55, 2, "b"]];
    expect(guessRanges(rows, "Data")).toEqual({ yAddress: "Data!B1:B3", xAddress: "Data!C1:D3" });
  });

  it("gives up when no numeric column follows y", () => {
    expect(guessRanges([["Name", "Value"], ["a", 1], ["b", 2]], "Data")).toBeNull();
  });
});

describe("planPlacement", () => {
  const sheet = inventedSheet();
  const design = buildDesign(sheet.map((r) => [r[0]]), sheet.map((r) => [r[1]]));
  const fit = fitMixture(design, { k: 2, seed: 3 });
  const request = { yAddress: "Sheet1!A1:A121", xAddress: "Sheet1!B1:B121", rangeRows: sheet.length, k: 2, seed: 3 };

  it("writes formulas that refer to the chosen ranges, side by side with a gap", () => {
    const blocks = planPlacement("Sheet1!D1", { ...request, outputs: ["fit", "labels", "membership"], mode: "formulas" }, design, fit);
    expect(blocks.map((b) => b.anchor)).toEqual(["Sheet1!D1", "Sheet1!J1", "Sheet1!L1"]);
    expect(blocks[0].cells).toEqual([['=SKEIN.FIT(Sheet1!A1:A121, Sheet1!B1:B121, 2, "seed=3")']]);
    expect(blocks[2].cells[0][0]).toBe('=SKEIN.MEMBERSHIP(Sheet1!A1:A121, Sheet1!B1:B121, 2, "seed=3")');
    // FIT spills K + 1 rows by 4 + p columns; the per-row outputs as many rows as the range.
    expect(coveredArea(blocks)).toEqual({ anchor: "Sheet1!D1", rows: sheet.length, columns: 5 + 1 + 1 + 1 + 2, address: `Sheet1!D1:M${sheet.length}` });
  });

  it("writes values lined up with the range's rows, skipped rows left empty", () => {
    const [labels] = planPlacement("Sheet1!D1", { ...request, outputs: ["labels"], mode: "values" }, design, fit);
    expect(labels.cells.length).toBe(sheet.length);
    expect(labels.cells[0]).toEqual(["component"]);
    // Sheet rows 5 and 9 (0-based, header at 0) were skipped by the design.
    expect(labels.cells[5]).toEqual([""]);
    expect(labels.cells[9]).toEqual([""]);
    for (let i = 0; i < design.n; i++) expect(labels.cells[design.rowIndex[i] + 1][0]).toBe(fit.labels[i] + 1);
  });
});

describe("warningsFor", () => {
  const sheet = inventedSheet();
  const design = buildDesign(sheet.map((r) => [r[0]]), sheet.map((r) => [r[1]]));
  const fit = fitMixture(design, { k: 2, seed: 3 });

  it("explains starts that disagree, naming only controls the pane has", () => {
    const unsettled = { ...fit, warmStart: { ...fit.warmStart, disagreement: 0.2 } };
    const warnings = warningsFor({ ...initialState(), design, fit: unsettled });
    const warning = warnings.find((w) => w.id === "warm-start");
    expect(warning?.title).toBe("Starts disagree");
    for (const remedy of ["another seed", "Seed", "rescaling", "fewer components"]) expect(warning!.text).toContain(remedy);
    // The pane has no restarts, tolerance or iteration controls, so its advice does not name them.
    for (const text of warnings.map((w) => w.text)) expect(text).not.toMatch(/restarts|tolerance|max_iterations|iterations setting/);
    // A moment certificate that did not shrink, with the starts agreeing, is not a warning.
    const certificateOnly = { ...fit, warmStart: { ...fit.warmStart, converged: false, disagreement: 0 } };
    expect(warningsFor({ ...initialState(), design, fit: certificateOnly }).some((w) => w.id === "warm-start")).toBe(false);
  });

  it("shows a fit exact on some components only with the pane's way to another seed, and no restarts", () => {
    const { x, y } = partlyExactRows();
    const rows = Array.from(x, (v, i) => [y[i], v]);
    const partlyDesign = buildDesign(rows.map((r) => [r[0]]), rows.map((r) => [r[1]]));
    const partlyFit = fitMixture(partlyDesign, { k: 2, seed: 1 });
    const warning = warningsFor({ ...initialState(), design: partlyDesign, fit: partlyFit }).find((w) => w.id === "partly-exact");
    expect(warning?.title).toBe("Partly exact");
    expect(warning!.text).toMatch(/^1 component fits 120 rows exactly, .*try another seed \(change Seed and run the scan again\)\.$/);
    expect(warning!.text).not.toMatch(/restarts/);
  });

  it("warns about many skipped rows only above a tenth of the rows", () => {
    expect(warningsFor({ ...initialState(), design, fit }).some((w) => w.id === "skipped")).toBe(false);
    const holey = sheet.map((r, i) => (i > 0 && i % 5 === 0 ? [null, r[1]] : r));
    const sparse = buildDesign(holey.map((r) => [r[0]]), holey.map((r) => [r[1]]));
    const skipped = warningsFor({ ...initialState(), design: sparse, fit }).find((w) => w.id === "skipped");
    expect(skipped).toBeDefined();
    // One term per idea: what may be missing is a component, not a "group".
    expect(skipped!.text).toMatch(/a component may be missing from the fit/);
    expect(skipped!.text).not.toMatch(/\bgroup\b/);
  });
});

describe("detectHost", () => {
  afterEach(() => {
    delete (globalThis as { Office?: unknown }).Office;
    vi.useRealTimers();
  });

  it("runs in plain-browser mode without office.js", async () => {
    await expect(detectHost()).resolves.toBe("browser");
  });

  it("runs in plain-browser mode when office.js never answers", async () => {
    vi.useFakeTimers();
    (globalThis as { Office?: unknown }).Office = { onReady: () => new Promise(() => undefined), HostType: { Excel: "Excel" } };
    const answer = detectHost(3000);
    await vi.advanceTimersByTimeAsync(3000);
    await expect(answer).resolves.toBe("browser");
  });

  it("uses Excel when office.js reports Excel, and the browser when it reports no host", async () => {
    (globalThis as { Office?: unknown }).Office = { onReady: async () => ({ host: "Excel" }), HostType: { Excel: "Excel" } };
    await expect(detectHost()).resolves.toBe("excel");
    (globalThis as { Office?: unknown }).Office = { onReady: async () => ({ host: null }), HostType: { Excel: "Excel" } };
    await expect(detectHost()).resolves.toBe("browser");
  });
});

describe("Grid", () => {
  it("selects with shift+arrows, edits with Enter, and reports the change", () => {
    const box = document.createElement("div");
    document.body.appendChild(box);
    const grid = new Grid(box, "Data");
    grid.load([["a", "b"], [1, 2]]);
    const changes: string[] = [];
    grid.onChange(({ block }) => changes.push(formatAddress(block)));
    const key = (k: string, shiftKey = false) => box.dispatchEvent(new KeyboardEvent("keydown", { key: k, shiftKey, bubbles: true }));
    key("ArrowDown");
    key("ArrowRight", true);
    expect(formatAddress(grid.getSelection())).toBe("Data!A2:B2");
    key("Enter");
    const editor = box.querySelector<HTMLInputElement>("input.cell-editor")!;
    expect(editor.getAttribute("aria-label")).toBe("Edit cell A2");
    editor.value = "42";
    editor.dispatchEvent(new KeyboardEvent("keydown", { key: "Enter", bubbles: true }));
    expect(grid.get(1, 0)).toBe(42);
    expect(changes).toEqual(["Data!A2"]);
  });
});

describe("a mistyped address in the pane", () => {
  it("reads as a plain message, not as a failure of Skein", async () => {
    // Excel rejects a range on a sheet that does not exist with an error whose code is ItemNotFound
    // (Excel JavaScript API, OfficeExtension.ErrorCodes).
    const officeError = Object.assign(new Error("The requested resource doesn't exist."), { code: "ItemNotFound" });
    const host = {
      kind: "excel",
      readValues: () => Promise.reject(officeError),
      watch: () => Promise.resolve(() => undefined),
      saveRanges: () => Promise.resolve(),
    } as unknown as SheetHost;
    const pane = new Pane(host, {} as EngineService);
    await pane.setAddresses("Shet1!A1:A10", "Sheet1!B1:B10");
    expect(pane.state.dataProblem).toMatch(/^Could not read Shet1!A1:A10 and Sheet1!B1:B10\. Excel has no such range: check the sheet name/);
    expect(pane.state.dataProblem).not.toMatch(/Skein could not finish/);
    // An address that is not an address at all: the placement's own plain message.
    expect(messageOf(new SkeinError("bad-input", '"H" is not a cell address'))).toBe('"H" is not a cell address');
    expect(() => planPlacement("H", { yAddress: "A1:A3", xAddress: "B1:B3", rangeRows: 3, k: 1, seed: 1, outputs: ["fit"], mode: "formulas" }, buildDesign([[1], [2], [3], [4]], [[1], [3], [2], [5]]), null)).toThrow(/is not a cell address; type one such as H2/);
  });
});
