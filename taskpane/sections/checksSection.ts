import { element, section } from "../dom";
import { formatNumber, formatShare, plural } from "../format";
import { isExactFit, PARTLY_EXACT } from "../../src/engine/exactFit";
import { startsAgree } from "../../src/engine/scanComponents";
import { formatGap } from "../../src/report/formatNumber";
import { markerSwatch } from "../markers";
import type { Pane } from "../pane";
import type { PaneState } from "../paneState";
import { parseAddress } from "../a1";
import { findStrayRows } from "../../src/engine/strayRows";

/** Stray rows listed by number; the rest are counted. */
const STRAY_SHOWN = 10;

/**
 * A tenth of the rows skipped is enough to ask whether the skipped rows differ from
 * the used ones (a component that is mostly blanks would be missing from the fit).
 */
export const SKIPPED_SHARE_WARNING = 0.1;

/** How a gap in noise units reads (the thresholds follow the separation check's OVERLAP_GAP = 2). */
function gapReading(gap: number): string {
  if (gap < 2) return "overlap";
  if (gap < 4) return "apart, with some shared rows";
  return "well apart";
}

export interface Warning {
  id: string;
  title: string;
  text: string;
}

/** The plain-language warnings for the shown fit, most serious first, without repeats. */
export function warningsFor(state: PaneState): Warning[] {
  const { fit, design, description } = state;
  const out: Warning[] = [];
  if (!fit || !design) return out;
  if (!startsAgree(fit.warmStart)) {
    out.push({
      id: "warm-start",
      title: "Starts disagree",
      text: `Different starts reached nearly the same log-likelihood with different components, so this fit may be one of several that describe the data about equally well. Try another seed (change Seed and run the scan again), fewer components, or rescaling predictors whose sizes differ by powers of ten.`,
    });
  }
  if (fit.refinement.stopped !== undefined) {
    out.push({
      id: "refinement",
      title: "Stopped early",
      text: `The scan stopped this fit after ${fit.refinement.iterations} iterations, before it converged: ${fit.refinement.stopped}. Its figures are those it had reached.`,
    });
  } else if (!fit.refinement.converged) {
    out.push({
      id: "refinement",
      title: "Not converged",
      text: `The fit stopped after ${fit.refinement.iterations} iterations with the log-likelihood still changing. Try another seed (change Seed and run the scan again), fewer components, or rescaling the predictors.`,
    });
  }
  const skippedShare = design.skipped.length / design.inputRows;
  if (skippedShare > SKIPPED_SHARE_WARNING) {
    out.push({
      id: "skipped",
      title: "Many rows were skipped",
      text: `${design.skipped.length} of ${design.inputRows} rows (${formatShare(skippedShare)}) were left out for blanks, text or errors (see Data). If those rows differ from the others, a component may be missing from the fit; fill or fix those cells where you can.`,
    });
  }
  const seen = new Set<string>();
  // The engine's own not-converged and starts-disagree warnings are shown above, with the pane's controls.
  const engineWarnings = [...(description?.separation.warnings ?? []), ...fit.warnings].filter((text) => !/^(Not converged|Starts disagree):|^Stopped early /.test(text));
  for (const text of engineWarnings) {
    if (seen.has(text)) continue;
    seen.add(text);
    if (text.startsWith(`${PARTLY_EXACT}:`)) {
      // The pane's way to another seed, as for starts that disagree.
      const body = text.slice(PARTLY_EXACT.length + 1).trim().replace(/try another seed\.$/, "try another seed (change Seed and run the scan again).");
      out.push({ id: "partly-exact", title: PARTLY_EXACT, text: body });
      continue;
    }
    const lower = text.toLowerCase();
    const title = lower.includes("overlap") || lower.includes("apart") || lower.includes("misassigned")
      ? "Components overlap"
      : lower.includes("too few rows") || lower.includes("small component") || lower.includes("few rows") || lower.includes("tiny")
        ? "A component is very small"
        : "Note from the fit";
    out.push({ id: `engine-${seen.size}`, title, text });
  }
  return out;
}

/** Checks: the separation table, summary measures and the warnings, each saying what to try. */
export function mountChecksSection(parent: HTMLElement, pane: Pane): { update(state: PaneState): void } {
  const { root, body } = section("checks", "Checks");
  parent.appendChild(root);
  const empty = element("p", { class: "hint" }, "Checks of the shown fit appear here.");
  const warnings = element("div", { id: "warnings", "aria-live": "polite" });
  const measures = element("dl", { id: "check-measures", class: "measures" });
  const tableWrap = element("div", { class: "table-wrap" });
  const trySeed = element("button", { type: "button", id: "try-seed", class: "secondary", hidden: "" }, "Run the scan again with another seed");
  trySeed.addEventListener("click", () => {
    pane.setSeed(pane.state.seed + 1);
    const seedInput = document.getElementById("seed") as HTMLInputElement | null;
    if (seedInput) seedInput.value = String(pane.state.seed);
    void pane.runScan();
  });
  const stray = element("div", { id: "stray-rows", "aria-live": "polite" });
  const strayList = element("ul", { id: "stray-list", class: "compact", "aria-label": "Stray rows" });
  const leaveOut = element("button", { type: "button", id: "leave-out-stray", class: "secondary", hidden: "" }, "Leave these rows out and run the scan again");
  let strayDataRows: number[] = [];
  leaveOut.addEventListener("click", () => void pane.setLeftOut([...pane.state.leftOut, ...strayDataRows]));
  const straySummary = element("p", { id: "stray-summary" });
  stray.append(straySummary, strayList, leaveOut);
  body.append(empty, warnings, trySeed, stray, measures, tableWrap);

  return {
    update(state) {
      const { fit, description } = state;
      if (!fit || !state.design || fit.p !== state.design.p) {
        empty.hidden = false;
        warnings.innerHTML = "";
        measures.innerHTML = "";
        tableWrap.innerHTML = "";
        trySeed.hidden = true;
        stray.hidden = true;
        return;
      }
      empty.hidden = true;
      // Stray rows: the engine's one rule (strayRows.ts), named by sheet row.
      const design = state.design;
      const report = findStrayRows({ y: design.y, x: design.x, n: design.n, p: design.p }, fit);
      const top = parseAddress(state.yAddress)?.top ?? 0;
      const firstSheetRow = top + (design.hasHeaderRow ? 1 : 0) + 1;
      strayDataRows = report.rows.map((r) => design.rowIndex[r.row]);
      stray.hidden = false;
      strayList.innerHTML = "";
      const bound = formatNumber(report.bound, 3);
      if (report.rows.length === 0) {
        straySummary.textContent = `Stray rows: none. Every row lies within ${bound} noise SDs of some component.`;
      } else {
        straySummary.textContent = `Stray rows: ${plural(report.rows.length, "row")} that no component explains (each lies more than ${bound} noise SDs from every component).${fit.background ? " A background component holds them, so they do not pull on the components." : ""}`;
        for (const r of report.rows.slice(0, STRAY_SHOWN)) {
          strayList.appendChild(element("li", {}, `Row ${firstSheetRow + design.rowIndex[r.row]}: ${formatNumber(r.distance, 3)} noise SDs from component ${r.nearest + 1}, the nearest`));
        }
        if (report.rows.length > STRAY_SHOWN) strayList.appendChild(element("li", {}, `and ${plural(report.rows.length - STRAY_SHOWN, "more row")}`));
      }
      leaveOut.hidden = report.rows.length === 0 || state.scanning;
      const list = warningsFor(state);
      warnings.innerHTML = "";
      if (list.length === 0) {
        warnings.appendChild(element("p", { class: "ok", id: "no-warnings" }, description ? "No warnings for this fit." : "Checking…"));
      }
      for (const w of list) {
        const box = element("div", { class: `warning warning-${w.id}`, role: "group", "aria-label": w.title });
        box.appendChild(element("p", { class: "warning-title" }, `⚠ ${w.title}`));
        box.appendChild(element("p", {}, w.text));
        warnings.appendChild(box);
      }
      // Another seed does not finish a fit the scan stopped because it could not change the
      // suggestion; it may find the components a partly exact fit has not found yet.
      const unsettled = !startsAgree(fit.warmStart) || (!fit.refinement.converged && fit.refinement.stopped === undefined) || list.some((w) => w.id === "partly-exact");
      trySeed.hidden = !unsettled || state.scanning;
      trySeed.textContent = `Run the scan again with seed ${state.seed + 1}`;

      if (!description) {
        measures.innerHTML = "";
        tableWrap.innerHTML = "";
        return;
      }
      const s = description.separation;
      const exact = isExactFit(fit, state.design.y);
      const smallestGap = fit.k === 1 ? "— (one component)" : exact ? "no overlap (noise about 0)" : formatGap(s.minGap);
      measures.innerHTML =
        (exact ? `<div><dt>Exact fit</dt><dd>exact fit (noise about 0): every row lies on its component's regression</dd></div>` : "") +
        `<div><dt>Starts agree</dt><dd>${startsAgree(fit.warmStart) ? "yes" : "no"}</dd></div>` +
        `<div><dt>Converged</dt><dd>${fit.refinement.converged ? "yes" : fit.refinement.stopped !== undefined ? "stopped early" : "no"} (${plural(fit.refinement.iterations, "iteration")})</dd></div>` +
        `<div><dt>Smallest gap (noise SDs)</dt><dd>${smallestGap}</dd></div>` +
        `<div><dt>Misassigned rows (estimated share given the wrong component)</dt><dd>${formatShare(s.misclassification)}</dd></div>` +
        `<div><dt>Membership clarity (1 = every row clearly in one component)</dt><dd>${formatNumber(s.normalisedEntropy)}</dd></div>` +
        `<div><dt>Smallest weight</dt><dd>${formatShare(s.smallestWeight)}</dd></div>`;
      if (s.pairs.length === 0) {
        tableWrap.innerHTML = "";
        return;
      }
      const rows = s.pairs
        .map((pair) => `<tr><th scope="row">${markerSwatch(pair.a)} ${pair.a + 1} and ${markerSwatch(pair.b)} ${pair.b + 1}</th><td>${exact ? "no overlap" : formatGap(pair.gap)}</td><td>${gapReading(pair.gap)}</td></tr>`)
        .join("");
      tableWrap.innerHTML = `<p class="hint" id="separation-caption">Gap (noise SDs) between each pair of components; under 2, they overlap</p><table id="separation-table" class="numbers" aria-describedby="separation-caption"><thead><tr><th scope="col">Components</th><th scope="col">Gap (noise SDs)</th><th scope="col">Reading</th></tr></thead><tbody>${rows}</tbody></table>`;
    },
  };
}
