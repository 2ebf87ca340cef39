import { element, section } from "../dom";
import { plural } from "../format";
import { messageOf, type Pane } from "../pane";
import type { PaneState } from "../paneState";
import { coveredArea, planPlacement, type Output, type PlacedBlock } from "../placement";

/**
 * Put in sheet: SKEIN formulas that refer to the chosen ranges (so results stay
 * live), or plain values, at a cell the user picks. The area they will fill is
 * checked first; cells holding anything are never overwritten without asking.
 */
export function mountPlaceSection(parent: HTMLElement, pane: Pane): { update(state: PaneState): void } {
  const { root, body } = section("place", "Put in sheet");
  parent.appendChild(root);
  const empty = element("p", { class: "hint" }, "Once a fit is shown, place it in the sheet from here.");
  const form = element("div", { class: "place-form", hidden: "" });

  const what = element("fieldset");
  what.appendChild(element("legend", {}, "What to place"));
  const outputs: [Output, string][] = [["fit", "Components table (SKEIN.FIT)"], ["labels", "Component of each row (SKEIN.LABELS)"], ["membership", "Memberships of each row (SKEIN.MEMBERSHIP)"]];
  const boxes = new Map<Output, HTMLInputElement>();
  for (const [value, label] of outputs) {
    const id = `place-${value}`;
    const line = element("div", { class: "check" });
    const box = element("input", { type: "checkbox", id, value });
    if (value !== "membership") box.setAttribute("checked", "");
    boxes.set(value, box);
    line.append(box, element("label", { for: id }, label));
    what.appendChild(line);
  }
  const how = element("fieldset");
  how.appendChild(element("legend", {}, "As"));
  const modes: ["formulas" | "values", string][] = [["formulas", "Live formulas (recalculate when the data change)"], ["values", "Plain values (a snapshot of the fit shown)"]];
  const radios = new Map<string, HTMLInputElement>();
  for (const [value, label] of modes) {
    const id = `place-as-${value}`;
    const line = element("div", { class: "check" });
    const radio = element("input", { type: "radio", name: "place-as", id, value });
    if (value === "formulas") radio.setAttribute("checked", "");
    radios.set(value, radio);
    line.append(radio, element("label", { for: id }, label));
    how.appendChild(line);
  }
  const whereField = element("div", { class: "field" });
  whereField.appendChild(element("label", { for: "place-at" }, "Top-left cell"));
  const whereLine = element("div", { class: "inline" });
  const where = element("input", { id: "place-at", type: "text", spellcheck: "false", autocomplete: "off", placeholder: "e.g. H2" });
  const whereUse = element("button", { type: "button", id: "place-use", class: "secondary", "aria-label": "Use the selected cell as the top-left cell" }, "Use selection");
  whereLine.append(where, whereUse);
  whereField.appendChild(whereLine);
  const placeButton = element("button", { type: "button", id: "place-button", class: "primary" }, "Place");
  const confirm = element("div", { id: "place-confirm", class: "confirm", role: "alertdialog", "aria-labelledby": "place-confirm-text", hidden: "" });
  const confirmText = element("p", { id: "place-confirm-text" });
  const replace = element("button", { type: "button", id: "place-replace", class: "danger" }, "Replace those cells");
  const keep = element("button", { type: "button", id: "place-keep", class: "secondary" }, "Keep them");
  const confirmButtons = element("div", { class: "inline" });
  confirmButtons.append(replace, keep);
  confirm.append(confirmText, confirmButtons);
  const result = element("p", { id: "place-result", class: "status", "aria-live": "polite" });
  const browserNote = element("p", { class: "hint", id: "place-browser-note" }, "This built-in sheet shows formula text without calculating it; in Excel the same formulas spill their results and stay live.");
  browserNote.hidden = pane.host.kind !== "browser";
  form.append(what, how, whereField, placeButton, confirm, result, browserNote);
  body.append(empty, form);

  whereUse.addEventListener("click", async () => {
    try {
      const address = await pane.host.selectedAddress();
      // Only the top-left cell matters.
      where.value = address.split(":")[0];
    } catch (error) {
      result.textContent = messageOf(error);
    }
  });

  let pending: PlacedBlock[] | null = null;
  const write = async (blocks: PlacedBlock[]) => {
    for (const block of blocks) await pane.host.write(block.anchor, block.cells);
    const area = coveredArea(blocks);
    result.textContent = `Placed ${plural(blocks.length, "result")} at ${area.address}.`;
  };
  placeButton.addEventListener("click", async () => {
    const state = pane.state;
    confirm.hidden = true;
    pending = null;
    result.textContent = "";
    if (!state.design || !state.fit || state.chosenK === null) return;
    const chosen = outputs.map(([o]) => o).filter((o) => boxes.get(o)!.checked);
    if (chosen.length === 0) {
      result.textContent = "Tick at least one thing to place.";
      return;
    }
    if (where.value.trim() === "") {
      result.textContent = "Type the top-left cell, or select it and press Use selection.";
      where.focus();
      return;
    }
    try {
      const mode = radios.get("values")!.checked ? "values" : "formulas";
      const blocks = planPlacement(where.value.trim(), { yAddress: state.yAddress, xAddress: state.xAddress, rangeRows: state.rangeRows, k: state.fit.k, seed: state.fit.seed, intercept: state.fit.intercept, model: state.fit.model, background: state.background, outputs: chosen, mode }, state.design, state.fit);
      const area = coveredArea(blocks);
      const occupied = await pane.host.occupiedCells(area.anchor, area.rows, area.columns);
      if (occupied > 0) {
        pending = blocks;
        confirmText.textContent = `${area.address} already holds ${plural(occupied, "filled cell")}. ${mode === "formulas" ? "Spilled results need those cells empty. " : ""}Replace them?`;
        confirm.hidden = false;
        keep.focus();
        return;
      }
      await write(blocks);
    } catch (error) {
      result.textContent = messageOf(error);
    }
  });
  replace.addEventListener("click", async () => {
    if (!pending) return;
    const blocks = pending;
    pending = null;
    confirm.hidden = true;
    try {
      // Clear the covered area first so a formula can spill into it.
      const area = coveredArea(blocks);
      await pane.host.write(area.anchor, Array.from({ length: area.rows }, () => new Array(area.columns).fill(null)));
      await write(blocks);
    } catch (error) {
      result.textContent = messageOf(error);
    }
    placeButton.focus();
  });
  keep.addEventListener("click", () => {
    pending = null;
    confirm.hidden = true;
    result.textContent = "Nothing was written. Pick another top-left cell.";
    where.focus();
  });

  return {
    update(state) {
      const ready = state.fit !== null && state.design !== null;
      form.hidden = !ready;
      empty.hidden = ready;
    },
  };
}
