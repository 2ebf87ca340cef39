/*
 * The pane at a task pane's narrowest widths (320 and 350 px): nothing may reach past
 * the window's right edge, and wide tables must scroll inside their own box. Called by
 * run.ts on the loaded pane (a fit shown, with checks); screenshots go to test-results/.
 */
import * as path from "path";
import type { Page } from "playwright-core";

export type Check = (name: string, ok: boolean, detail?: string) => void;

export const PANE_WIDTHS = [320, 350] as const;

/** Visible elements whose right edge passes the window, except those clipped by a scrolling box that itself fits. */
async function elementsPastRightEdge(page: Page): Promise<string[]> {
  return page.evaluate(() => {
    const width = document.documentElement.clientWidth;
    const describe = (el: Element) => `${el.tagName.toLowerCase()}${el.id ? `#${el.id}` : ""}${el.classList.length ? `.${Array.from(el.classList).join(".")}` : ""}`;
    const clippedByScrollBox = (el: Element): boolean => {
      for (let up = el.parentElement; up; up = up.parentElement) {
        const overflowX = getComputedStyle(up).overflowX;
        if (overflowX === "auto" || overflowX === "scroll" || overflowX === "hidden" || overflowX === "clip") return true;
      }
      return false;
    };
    const past: string[] = [];
    for (const el of Array.from(document.body.querySelectorAll("*"))) {
      if (el.closest("[hidden], .visually-hidden, .skip-link, title, defs, script, style")) continue;
      const box = el.getBoundingClientRect();
      if (box.width === 0 || box.height === 0) continue;
      if (box.right > width + 0.5 && !clippedByScrollBox(el)) past.push(`${describe(el)} ends at ${Math.round(box.right)} px`);
    }
    return past;
  });
}

interface ScrollBox {
  found: boolean;
  overflowX: string;
  boxRight: number;
  viewport: number;
  scrollWidth: number;
  clientWidth: number;
  lastColumnRightAfterScroll: number;
}

/** The scan table's box: how it overflows, and where the table's last column ends once scrolled fully right. */
async function scanTableBox(page: Page): Promise<ScrollBox> {
  return page.evaluate(() => {
    const table = document.getElementById("scan-table");
    const box = table?.parentElement;
    if (!table || !box) return { found: false, overflowX: "", boxRight: 0, viewport: 0, scrollWidth: 0, clientWidth: 0, lastColumnRightAfterScroll: 0 };
    box.scrollLeft = box.scrollWidth;
    const lastCell = table.querySelector("thead tr")!.lastElementChild!;
    const result = {
      found: true,
      overflowX: getComputedStyle(box).overflowX,
      boxRight: box.getBoundingClientRect().right,
      viewport: document.documentElement.clientWidth,
      scrollWidth: box.scrollWidth,
      clientWidth: box.clientWidth,
      lastColumnRightAfterScroll: Math.min(lastCell.getBoundingClientRect().right, table.getBoundingClientRect().right),
    };
    box.scrollLeft = 0;
    return result;
  });
}

/** Runs the width checks at 320 and 350 px, then restores the viewport it found. */
export async function checkPaneWidths(page: Page, check: Check, resultsDir: string): Promise<void> {
  const before = page.viewportSize();
  // tsx keeps function names with a helper (__name) the page does not have; give it one.
  await page.evaluate("window.__name = window.__name || ((f) => f)");
  try {
    for (const width of PANE_WIDTHS) {
      await page.setViewportSize({ width, height: 900 });
      // Let the layout and the plots settle at the new width.
      await page.evaluate(() => new Promise((resolve) => requestAnimationFrame(() => requestAnimationFrame(resolve))));
      const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
      check(`no sideways scrolling of the page at ${width} px`, overflow <= 0, `${overflow}px too wide`);
      const past = await elementsPastRightEdge(page);
      check(`no element ends past the right edge at ${width} px`, past.length === 0, past.slice(0, 5).join("; "));

      const box = await scanTableBox(page);
      check(`scan table shown at ${width} px`, box.found);
      if (box.found) {
        check(`scan table's box fits the window at ${width} px`, box.boxRight <= box.viewport + 0.5, `box ends at ${Math.round(box.boxRight)} of ${box.viewport} px`);
        const scrolls = box.overflowX === "auto" || box.overflowX === "scroll";
        const wider = box.scrollWidth > box.clientWidth;
        check(
          `scan table scrolls inside its box at ${width} px`,
          scrolls && (!wider || box.lastColumnRightAfterScroll <= box.boxRight + 0.5),
          `overflow-x ${box.overflowX}, table ${box.scrollWidth} px in a ${box.clientWidth} px box, last column ends at ${Math.round(box.lastColumnRightAfterScroll)} after scrolling`,
        );
      }
      // Screenshots: each section at this width, then the scan table scrolled to its end.
      for (const [i, id] of ["data", "count", "components", "checks", "place"].entries()) {
        await page.locator(`#${id}`).screenshot({ path: path.join(resultsDir, `10-pane-${width}px-${i + 1}-${id}.png`) });
      }
      await page.evaluate(() => {
        const box = document.getElementById("scan-table")?.parentElement;
        box?.scrollIntoView({ block: "center" });
        if (box) box.scrollLeft = box.scrollWidth;
      });
      await page.screenshot({ path: path.join(resultsDir, `11-pane-${width}px-scan-table-scrolled.png`) });
      await page.evaluate(() => {
        const box = document.getElementById("scan-table")?.parentElement;
        if (box) box.scrollLeft = 0;
      });
    }
  } finally {
    if (before) await page.setViewportSize(before);
  }
}
