import { PlainBrowserHost } from "./browserHost";
import { mountBrowserData } from "./browserMode";
import { element } from "./dom";
import { Grid } from "./grid";
import type { SheetHost } from "./host";
import type { EngineService } from "../src/service/engineService";
import { Pane } from "./pane";
import { mountChecksSection } from "./sections/checksSection";
import { mountComponentsSection } from "./sections/componentsSection";
import { mountCountSection } from "./sections/countSection";
import { mountDataSection } from "./sections/dataSection";
import { mountPlaceSection } from "./sections/placeSection";

export interface MountedPane {
  pane: Pane;
  grid: Grid | null;
  loadRows?: (rows: unknown[][], ranges?: { yAddress: string; xAddress: string }, source?: string) => Promise<void>;
}

/** Builds the five sections into `root` against an Excel host. */
export function mountExcelPane(root: HTMLElement, host: SheetHost, engine: EngineService): MountedPane {
  const pane = new Pane(host, engine);
  mountSections(root, pane);
  void pane.restoreRanges();
  return { pane, grid: null };
}

/**
 * Plain-browser mode: the built-in sheet on the left (or on top in a narrow
 * window), the same five sections beside it.
 */
export function mountBrowserPane(root: HTMLElement, engine: EngineService, fetchText: (url: string) => Promise<string>): MountedPane {
  root.classList.add("browser-mode");
  const sheetArea = element("div", { class: "sheet-area", role: "region", "aria-label": "Built-in sheet" });
  sheetArea.appendChild(element("h2", { class: "sheet-title" }, "Sheet: Data"));
  const gridBox = element("div", { id: "grid" });
  sheetArea.appendChild(gridBox);
  const paneArea = element("div", { class: "pane-area" });
  root.append(sheetArea, paneArea);
  const grid = new Grid(gridBox, "Data");
  const pane = new Pane(new PlainBrowserHost(grid), engine);
  const { dataBody } = mountSections(paneArea, pane);
  const { loadRows } = mountBrowserData(dataBody, pane, grid, fetchText);
  return { pane, grid, loadRows };
}

function mountSections(parent: HTMLElement, pane: Pane): { dataBody: HTMLElement } {
  const data = mountDataSection(parent, pane);
  const count = mountCountSection(parent, pane);
  const components = mountComponentsSection(parent, pane);
  const checks = mountChecksSection(parent, pane);
  const place = mountPlaceSection(parent, pane);
  pane.subscribe((state) => {
    data.update(state);
    count.update(state);
    components.update(state);
    checks.update(state);
    place.update(state);
  });
  return { dataBody: data.body };
}
