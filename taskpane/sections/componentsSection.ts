import { element, escapeHtml, section } from "../dom";
import { formatNumber, formatWithError } from "../format";
import { exactComponents } from "../../src/engine/exactFit";
import { markerSwatch } from "../markers";
import type { Pane } from "../pane";
import type { PaneState } from "../paneState";
import { defaultAxis, drawScatter, type ScatterAxis } from "../scatterPlot";

export const USE_WITH_CARE =
  "Use with care: every number here is an estimate from the rows given. A component is a pattern in the numbers, not proof that a real group exists. Decisions about people need review by someone qualified and must follow local rules.";

/** An estimate with its standard error in brackets (both rounded where the error says), or the estimate alone when none is known. */
function withError(value: number, error: number | undefined, unit = ""): string {
  if (error === undefined || !Number.isFinite(error)) return `${formatNumber(value)}${unit}`;
  const shown = formatWithError(value, error);
  return `${shown.value}${unit}<span class="se">(${shown.error})</span>`;
}

/**
 * Components: the table of weight, noise SD and coefficients with standard
 * errors, and the scatter of y against a chosen predictor or the fitted value.
 */
export function mountComponentsSection(parent: HTMLElement, _pane: Pane): { update(state: PaneState): void } {
  const { root, body } = section("components", "Components");
  parent.appendChild(root);
  const empty = element("p", { class: "hint" }, "Run the scan and choose a number of components to see them here.");
  const care = element("p", { id: "use-with-care", class: "care", role: "note" }, USE_WITH_CARE);
  const heading = element("p", { id: "components-heading", class: "status" });
  const refresh = element("p", { id: "refresh-note", class: "notice", "aria-live": "polite", hidden: "" });
  const tableWrap = element("div", { class: "table-wrap" });
  const seNote = element("p", { class: "hint", id: "se-note" });
  const axisField = element("div", { class: "field small" });
  axisField.appendChild(element("label", { for: "scatter-axis" }, "Plot the outcome against"));
  const axisSelect = element("select", { id: "scatter-axis" });
  axisField.appendChild(axisSelect);
  const plot = element("div", { id: "scatter", class: "chart" });
  const results = element("div", { class: "results", hidden: "" });
  results.append(care, heading, refresh, tableWrap, seNote, axisField, plot);
  body.append(empty, results);

  let axis: ScatterAxis = 0;
  let last: PaneState | null = null;
  const redrawPlot = () => {
    if (last?.fit && last.design) drawScatter(plot, last.design, last.fit, axis);
  };
  axisSelect.addEventListener("change", () => {
    axis = axisSelect.value === "fitted" ? "fitted" : Number(axisSelect.value);
    redrawPlot();
  });

  let drawnFit: unknown = null;
  let drawnDescription: unknown = null;
  return {
    update(state) {
      const { fit, design } = state;
      refresh.hidden = state.refreshNote === null;
      refresh.textContent = state.refreshNote ?? "";
      if (!fit || !design || fit.p !== design.p) {
        results.hidden = true;
        empty.hidden = false;
        drawnFit = null;
        return;
      }
      results.hidden = false;
      empty.hidden = true;
      if (drawnFit === fit && drawnDescription === state.description) return;
      const axisChanged = drawnFit === null || last?.design?.predictorNames.join("\u0000") !== design.predictorNames.join("\u0000");
      drawnFit = fit;
      drawnDescription = state.description;
      last = state;
      heading.textContent = `${fit.k} component${fit.k === 1 ? "" : "s"}${state.scan && fit.k === state.scan.chosenK ? " (the suggested number)" : ""}, fitted to ${fit.n} rows, seed ${fit.seed}.`;

      const errors = state.description?.errors ?? null;
      const names = ["Intercept", ...design.predictorNames];
      const start = fit.intercept ? 0 : 1;
      // One column per component, one row per estimate: K is small and predictors may be many,
      // so this shape fits a narrow pane.
      const header = fit.components.map((_, c) => `<th scope="col" class="component">${markerSwatch(c)} Component ${c + 1}</th>`).join("");
      const row = (name: string, cell: (c: number) => string, id: string) => `<tr data-row="${id}"><th scope="row">${escapeHtml(name)}</th>${fit.components.map((_, c) => `<td>${cell(c)}</td>`).join("")}</tr>`;
      let html = `<table id="components-table" class="numbers"><caption class="visually-hidden">Estimates per component, each with its standard error in brackets below it</caption><thead><tr><th scope="col">Estimate</th>${header}</tr></thead><tbody>`;
      const exact = exactComponents(fit, design.y);
      const weightError = (c: number) => (errors ? 100 * errors.weights[c] : undefined);
      html += row("Weight", (c) => withError(100 * fit.components[c].weight, weightError(c), "%"), "weight");
      html += row("Noise SD", (c) => (exact[c] ? "about 0 (exact fit)" : withError(fit.components[c].sigma, errors?.sigmas[c])), "sigma");
      for (let j = start; j < names.length; j++) html += row(names[j], (c) => withError(fit.components[c].coefficients[j], errors?.coefficients[c]?.[j]), `coefficient-${j}`);
      html += `</tbody></table>`;
      tableWrap.innerHTML = html;
      seNote.textContent = errors
        ? errors.method === "exact-fit"
          ? "Exact fit (noise about 0): every row lies on its component's regression, so the standard errors of the coefficients are 0."
          : `Standard errors in brackets under each estimate (${errors.method === "bootstrap" ? "bootstrap" : "from the curvature of the likelihood"}).`
        : state.description?.errorsProblem
          ? `No standard errors: ${state.description.errorsProblem}`
          : state.description ? "" : "Working out standard errors…";

      if (axisChanged) {
        axisSelect.innerHTML = "";
        design.predictorNames.forEach((name, j) => axisSelect.appendChild(element("option", { value: String(j) }, name)));
        axisSelect.appendChild(element("option", { value: "fitted" }, "Fitted value"));
        axis = defaultAxis(design, fit);
      }
      axisSelect.value = String(axis);
      redrawPlot();
    },
  };
}
