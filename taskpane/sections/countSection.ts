import { drawBicChart } from "../bicChart";
import { element, section } from "../dom";
import { formatColumn, formatNumber, plural } from "../format";
import { CANNOT_BE_SUGGESTED_MARK } from "../bicChart";
import { formatGap } from "../../src/report/formatNumber";
import { convergedWord } from "../../src/engine/scanComponents";
import type { MixtureModel } from "../../src/engine/mixtureTypes";
import { optionControl } from "../optionControls";
import type { Pane } from "../pane";
import type { PaneState } from "../paneState";

/**
 * How many components: the scan over K = 1..kMax with progress and cancel, the
 * chart of BIC and ICL, and a table where each K can be chosen by radio button
 * (the keyboard path besides the chart's own focusable points).
 */
export function mountCountSection(parent: HTMLElement, pane: Pane): { update(state: PaneState): void } {
  const { root, body } = section("count", "How many components");
  parent.appendChild(root);
  body.appendChild(element("p", { class: "hint" }, "Fit 1, 2, … components and compare them (a component is a group of rows sharing one regression). Lower BIC and ICL are better; ICL also prefers components that are clearly apart."));
  // The controls come from the engine's options table: same ranges and defaults as the SKEIN settings and the command line.
  const settings = element("div", { class: "inline settings" });
  const kMax = optionControl("kmax", "Most components to try");
  const seed = optionControl("seed", "Seed");
  const model = optionControl("model", "Model");
  const intercept = optionControl("intercept", "Intercept");
  const background = optionControl("background", "Background");
  settings.append(kMax.field, seed.field, model.field, intercept.field, background.field);
  body.appendChild(settings);
  kMax.input.addEventListener("change", () => pane.setKMax(kMax.read() as number));
  seed.input.addEventListener("change", () => pane.setSeed(seed.read() as number));
  model.input.addEventListener("change", () => void pane.setFitOptions({ model: model.read() as MixtureModel }));
  intercept.input.addEventListener("change", () => void pane.setFitOptions({ intercept: intercept.read() as boolean }));
  background.input.addEventListener("change", () => void pane.setFitOptions({ background: background.read() as string }));

  const buttons = element("div", { class: "inline" });
  const run = element("button", { type: "button", id: "run-scan", class: "primary" }, "Run scan");
  const cancel = element("button", { type: "button", id: "cancel-scan", class: "secondary", disabled: "" }, "Cancel");
  run.addEventListener("click", () => void pane.runScan());
  cancel.addEventListener("click", () => pane.cancelScan());
  buttons.append(run, cancel);
  body.appendChild(buttons);

  const progressWrap = element("div", { class: "progress", hidden: "" });
  const progressLabel = element("label", { for: "scan-progress", id: "scan-progress-label" }, "Scan progress");
  const progress = element("progress", { id: "scan-progress", max: "1", value: "0" });
  progressWrap.append(progressLabel, progress);
  body.appendChild(progressWrap);
  const status = element("p", { id: "scan-status", class: "status", "aria-live": "polite" });
  const problem = element("p", { id: "scan-problem", class: "problem", role: "alert", hidden: "" });
  const stale = element("p", { id: "scan-stale", class: "notice", hidden: "" }, "The data changed after this scan. The shown fit was refitted on the new rows; run the scan again to re-check the number of components.");
  body.append(status, problem, stale);

  const chart = element("div", { id: "bic-chart", class: "chart" });
  body.appendChild(chart);
  const rule = element("p", { id: "scan-rule", class: "hint" });
  body.appendChild(rule);
  const tableWrap = element("div", { class: "table-wrap" });
  body.appendChild(tableWrap);
  // Notes under the table stay outside its scrolling box, so they wrap to the pane's width.
  const notes = element("div", { id: "scan-notes" });
  body.appendChild(notes);

  let drawn: unknown = null;
  let drawnK: number | null = null;
  return {
    update(state) {
      run.disabled = state.scanning || state.design === null;
      run.textContent = state.scan ? "Run scan again" : "Run scan";
      if (state.scanning) cancel.removeAttribute("disabled");
      else cancel.setAttribute("disabled", "");
      progressWrap.hidden = !state.scanning;
      if (state.progress) {
        progress.max = state.progress.kMax;
        progress.value = state.progress.k;
        status.textContent = state.progress.k < state.progress.kMax ? `Fitting ${state.progress.k + 1} of ${state.progress.kMax} components…` : "Finishing…";
      } else if (state.scan && !state.scanning) {
        status.textContent = `Scan done: K = ${state.scan.chosenK} suggested. Showing K = ${state.chosenK ?? state.scan.chosenK}.`;
      } else {
        status.textContent = "";
      }
      problem.hidden = state.scanProblem === null;
      problem.textContent = state.scanProblem ?? "";
      stale.hidden = !(state.scan && state.scanStale);

      const scan = state.scan;
      if (!scan) {
        chart.innerHTML = "";
        tableWrap.innerHTML = "";
        notes.innerHTML = "";
        rule.textContent = "";
        drawn = null;
        return;
      }
      if (drawn === scan && drawnK === state.chosenK) return;
      drawn = scan;
      drawnK = state.chosenK;
      const hadFocus = chart.contains(document.activeElement);
      drawBicChart(chart, scan.rows, scan.chosenK, state.chosenK, (k) => void pane.chooseK(k));
      if (hadFocus) chart.querySelector<SVGGElement>("g.k-point[tabindex='0']")?.focus();
      rule.textContent = `How the suggestion is made: ${scan.rule}`;

      const table = element("table", { id: "scan-table", class: "numbers" });
      table.appendChild(element("caption", { class: "visually-hidden" }, "Scan results by number of components"));
      table.innerHTML += `<thead><tr><th scope="col">Show</th><th scope="col">K</th><th scope="col">BIC</th><th scope="col">ICL</th><th scope="col">Log-likelihood</th><th scope="col">Smallest gap (noise SDs)</th><th scope="col">Starts agree</th><th scope="col">Converged</th><th scope="col"><span class="visually-hidden">Note</span></th></tr></thead>`;
      const bic = formatColumn(scan.rows.map((r) => r.bic));
      const icl = formatColumn(scan.rows.map((r) => r.icl));
      const logLikelihood = formatColumn(scan.rows.map((r) => r.logLikelihood));
      const tbody = element("tbody");
      for (const row of scan.rows) {
        const tr = element("tr", { class: row.k === state.chosenK ? "chosen" : "" });
        const pick = element("td");
        const radio = element("input", { type: "radio", name: "chosen-k", id: `k-${row.k}`, value: String(row.k), "aria-label": `Show the fit with ${row.k} component${row.k === 1 ? "" : "s"}` });
        if (row.k === state.chosenK) radio.setAttribute("checked", "");
        radio.addEventListener("change", () => void pane.chooseK(row.k));
        pick.appendChild(radio);
        tr.appendChild(pick);
        tr.appendChild(element("th", { scope: "row" }, String(row.k)));
        const r = row.k - 1;
        tr.appendChild(element("td", {}, bic[r]));
        tr.appendChild(element("td", {}, icl[r]));
        tr.appendChild(element("td", {}, logLikelihood[r]));
        tr.appendChild(element("td", {}, row.k === 1 ? "—" : formatGap(row.minSeparation)));
        tr.appendChild(element("td", {}, row.startsAgree ? "yes" : "no"));
        tr.appendChild(element("td", {}, convergedWord(row)));
        // The same mark as the chart's: * on a K that cannot be suggested.
        const note = row.k === scan.chosenK ? "suggested" : row.flag !== null ? CANNOT_BE_SUGGESTED_MARK : "";
        tr.appendChild(element("td", { class: "note-cell" }, note));
        tbody.appendChild(tr);
      }
      table.appendChild(tbody);
      tableWrap.innerHTML = "";
      tableWrap.appendChild(table);
      notes.innerHTML = "";
      // Why each other K is not suggested: full sentences, below the table where they have room.
      const noted = scan.rows.filter((r) => r.note !== null);
      if (noted.length > 0) {
        const list = element("ul", { id: "scan-flags", class: "compact hint", "aria-label": "Why the other K are not suggested" });
        for (const r of noted) {
          const mark = r.flag !== null ? `${CANNOT_BE_SUGGESTED_MARK} ` : "";
          list.appendChild(element("li", {}, `${mark}${plural(r.k, "component")}, not suggested: ${(r.note ?? "").replace(/^not suggested[:,]?\s*/i, "")}`));
        }
        notes.appendChild(list);
      }
      // A scan that stopped before the largest K asked says where and why (too few rows, say).
      if (scan.stoppedEarly) notes.appendChild(element("p", { id: "scan-stopped", class: "hint" }, scan.stoppedEarly));
    },
  };
}
