import { parseAddress } from "../a1";
import { element, section } from "../dom";
import { formatShare, plural } from "../format";
import type { Pane } from "../pane";
import type { PaneState } from "../paneState";

/** Skipped rows listed by number; the rest are counted. */
const SKIPPED_SHOWN = 5;

/**
 * Data: the y and x ranges, taken from the selection with one click each or
 * typed, and what the data layer made of them (header row, rows used, rows
 * skipped with the first few reasons).
 */
export function mountDataSection(parent: HTMLElement, pane: Pane): { body: HTMLElement; update(state: PaneState): void } {
  const { root, body } = section("data", "Data");
  parent.appendChild(root);
  const fields = element("div", { class: "range-fields" });
  const makeField = (which: "y" | "x", label: string, hint: string) => {
    const field = element("div", { class: "field" });
    field.appendChild(element("label", { for: `${which}-address` }, label));
    const line = element("div", { class: "inline" });
    const input = element("input", { id: `${which}-address`, type: "text", spellcheck: "false", autocomplete: "off", "aria-describedby": `${which}-hint`, placeholder: which === "y" ? "e.g. Sheet1!B1:B201" : "e.g. Sheet1!C1:E201" });
    const button = element("button", { type: "button", id: `${which}-use`, class: "secondary", "aria-label": `Use the selected cells as the ${label.toLowerCase()}` }, "Use selection");
    button.addEventListener("click", () => void pane.useSelection(which));
    line.append(input, button);
    field.append(line, element("p", { id: `${which}-hint`, class: "hint" }, hint));
    fields.appendChild(field);
    return input;
  };
  const yInput = makeField("y", "Outcome range (y)", "One column; a name in its first row is found on its own.");
  const xInput = makeField("x", "Predictor range (x)", "One or more side-by-side columns over the same rows as y: numbers, or text categories such as regions or yes/no.");
  body.appendChild(fields);
  const commit = () => void pane.setAddresses(yInput.value.trim(), xInput.value.trim());
  for (const input of [yInput, xInput]) {
    input.addEventListener("change", commit);
    input.addEventListener("keydown", (e) => {
      if (e.key === "Enter") commit();
    });
  }
  const summary = element("div", { id: "data-summary", class: "summary", "aria-live": "polite" });
  const leftOut = element("p", { id: "data-left-out", hidden: "" });
  const putBack = element("button", { type: "button", id: "put-back", class: "secondary", hidden: "" }, "Put them back and run the scan again");
  putBack.addEventListener("click", () => void pane.setLeftOut([]));
  const problem = element("p", { id: "data-problem", class: "problem", role: "alert", hidden: "" });
  body.append(summary, leftOut, putBack, problem);

  return {
    body,
    update(state) {
      if (document.activeElement !== yInput) yInput.value = state.yAddress;
      if (document.activeElement !== xInput) xInput.value = state.xAddress;
      problem.hidden = state.dataProblem === null;
      problem.textContent = state.dataProblem ?? "";
      const design = state.design;
      // Rows the user set aside from Checks, by sheet row, with the way back.
      const firstSheetRow = (parseAddress(state.yAddress)?.top ?? 0) + (design?.hasHeaderRow ? 1 : 0) + 1;
      leftOut.hidden = putBack.hidden = state.leftOut.length === 0;
      leftOut.textContent = state.leftOut.length === 0 ? "" : `Left out of the fit at your request: row${state.leftOut.length === 1 ? "" : "s"} ${state.leftOut.map((r) => firstSheetRow + r).join(", ")}.`;
      if (!design) {
        summary.innerHTML = state.dataProblem ? "" : `<p class="hint">Choose the outcome and predictor ranges to begin.</p>`;
        return;
      }
      summary.innerHTML = "";
      const header = design.hasHeaderRow
        ? `Header row found: y is “${design.yName}”, x is ${design.columns.map((c) => `“${c.name}”`).join(", ")}.`
        : `No header row: the columns are called ${design.yName} and ${design.columns.map((c) => c.name).join(", ")}.`;
      summary.appendChild(element("p", { id: "data-headers" }, header));
      if (design.notices.length > 0) {
        // Category columns: which indicators they became and the reference level.
        const notes = element("ul", { id: "data-notes", class: "compact", "aria-label": "What was done to the columns" });
        for (const notice of design.notices) notes.appendChild(element("li", {}, notice));
        summary.appendChild(notes);
      }
      summary.appendChild(element("p", { id: "data-rows" }, `Rows used: ${design.n} of ${design.inputRows}. Rows skipped: ${design.skipped.length}${design.skipped.length > 0 ? ` (${formatShare(design.skipped.length / design.inputRows)})` : ""}.`));
      if (design.skipped.length > 0) {
        // Sheet row numbers, so the user can go straight to the cell.
        const top = parseAddress(state.yAddress)?.top ?? 0;
        const first = top + (design.hasHeaderRow ? 1 : 0) + 1;
        const list = element("ul", { id: "data-skipped", class: "compact", "aria-label": "First skipped rows" });
        for (const s of design.skipped.slice(0, SKIPPED_SHOWN)) list.appendChild(element("li", {}, `Row ${first + s.row}: ${s.reason === "left out" ? "left out at your request" : `${s.reason} in ${s.column}`}`));
        if (design.skipped.length > SKIPPED_SHOWN) list.appendChild(element("li", {}, `and ${plural(design.skipped.length - SKIPPED_SHOWN, "more row")}`));
        summary.appendChild(list);
      }
    },
  };
}
