import { parseCsv } from "../src/io/readCsv";
import { formatAddress } from "./a1";
import { element } from "./dom";
import type { Grid } from "./grid";
import { messageOf, type Pane } from "./pane";
import { readDataFile, type DataFile } from "./readWorkbookFile";
import { SAMPLES, type Sample } from "./samples";

/** A column counts as numeric when at least this share of its filled data cells are numbers. */
const NUMERIC_SHARE = 0.8;

/**
 * A first guess at y and x for a file the user opened: y is the first numeric
 * column, x the numeric (or, when the column rule's kinds are known, category)
 * columns right after it (one block, as x must be). The header row, when there
 * is one, is included so the pane finds the names.
 */
export function guessRanges(rows: unknown[][], sheet: string, columns?: readonly { defaultPredictor: boolean; kind?: string }[]): { yAddress: string; xAddress: string } | null {
  const width = Math.max(0, ...rows.map((r) => r.length));
  const hasHeader = rows.length > 1 && rows[0].some((c) => typeof c === "string");
  const first = hasHeader ? 1 : 0;
  const numeric: boolean[] = [];
  for (let c = 0; c < width; c++) {
    let numbers = 0;
    let filled = 0;
    for (let r = first; r < rows.length; r++) {
      const v = rows[r][c];
      if (v === null || v === undefined || v === "") continue;
      filled++;
      if (typeof v === "number") numbers++;
    }
    // Dates, identifiers and constant columns (the column rule's verdict, when known) are no guess.
    numeric.push(filled > 0 && numbers / filled >= NUMERIC_SHARE && columns?.[c]?.defaultPredictor !== false);
  }
  // A category column can be a predictor (indicator columns) but never the outcome.
  const predictor = numeric.map((isNumeric, c) => isNumeric || columns?.[c]?.kind === "category");
  const y = numeric.indexOf(true);
  if (y < 0 || y + 1 >= width || !predictor[y + 1]) return null;
  let right = y + 1;
  while (right + 1 < width && predictor[right + 1]) right++;
  const bottom = rows.length - 1;
  return {
    yAddress: formatAddress({ sheet, top: 0, bottom, left: y, right: y }),
    xAddress: formatAddress({ sheet, top: 0, bottom, left: y + 1, right }),
  };
}

/**
 * Plain-browser mode's extra controls in the Data section: open a CSV or XLSX
 * file (chooser or drop), or load a bundled sample. The rows go into the
 * built-in grid, and the ranges are set from the sample or a guess.
 */
export function mountBrowserData(dataBody: HTMLElement, pane: Pane, grid: Grid, fetchText: (url: string) => Promise<string>): { loadRows(rows: unknown[][], ranges?: { yAddress: string; xAddress: string }, source?: string, file?: DataFile): Promise<void> } {
  const box = element("div", { class: "browser-data" });
  box.appendChild(element("p", { class: "mode-note", id: "mode-note" }, "Running outside Excel: the data live in the sheet on this page. Open a file or load a sample, then pick ranges as in Excel."));

  const sampleField = element("div", { class: "field" });
  sampleField.appendChild(element("label", { for: "sample-choice" }, "Sample data (invented)"));
  const sampleLine = element("div", { class: "inline" });
  const sampleSelect = element("select", { id: "sample-choice" });
  for (const s of SAMPLES) sampleSelect.appendChild(element("option", { value: s.name }, s.title));
  const sampleButton = element("button", { type: "button", id: "load-sample", class: "secondary" }, "Load sample");
  sampleLine.append(sampleSelect, sampleButton);
  sampleField.appendChild(sampleLine);

  const drop = element("div", { class: "drop-zone", id: "drop-zone" });
  const fileLabel = element("label", { for: "file-input" }, "Open a CSV or XLSX file");
  const fileInput = element("input", { id: "file-input", type: "file", accept: ".csv,.tsv,.txt,.xlsx,.xlsm" });
  drop.append(fileLabel, fileInput, element("span", { class: "hint" }, "or drop one here"));
  const loadStatus = element("p", { id: "load-status", class: "status", "aria-live": "polite" });
  box.append(sampleField, drop, loadStatus);
  dataBody.prepend(box);

  const loadRows = async (rows: unknown[][], ranges?: { yAddress: string; xAddress: string }, source = "the file", file?: DataFile) => {
    grid.load(rows);
    const chosen = ranges ?? guessRanges(rows, grid.sheetName, file?.columns);
    // How the file was read (sheet, encoding, conversions, columns not guessed), in one short line.
    const notices = file && file.notices.length > 0 ? ` ${file.notices.join(" ")}` : "";
    if (!chosen) {
      loadStatus.textContent = `Loaded ${source} into the sheet (${rows.length} rows). Select the y and x columns there and press Use selection.${notices}`;
      return;
    }
    loadStatus.textContent = `Loaded ${source} into the sheet: ${rows.length} rows.${ranges ? "" : " The ranges below are a guess; change them if needed."}${notices}`;
    await pane.setAddresses(chosen.yAddress, chosen.xAddress);
  };

  const readFile = async (file: File) => {
    loadStatus.textContent = `Reading ${file.name}…`;
    try {
      const data = await readDataFile(file.name, await file.arrayBuffer());
      if (data.rows.length === 0) throw new Error(`${file.name} holds no rows.`);
      await loadRows(data.rows, undefined, file.name, data);
    } catch (error) {
      loadStatus.textContent = messageOf(error);
    }
  };
  fileInput.addEventListener("change", () => {
    const file = fileInput.files?.[0];
    if (file) void readFile(file);
  });
  drop.addEventListener("dragover", (e) => {
    e.preventDefault();
    drop.classList.add("dragging");
  });
  drop.addEventListener("dragleave", () => drop.classList.remove("dragging"));
  drop.addEventListener("drop", (e) => {
    e.preventDefault();
    drop.classList.remove("dragging");
    const file = e.dataTransfer?.files?.[0];
    if (file) void readFile(file);
  });
  sampleButton.addEventListener("click", async () => {
    const sample = SAMPLES.find((s) => s.name === sampleSelect.value) as Sample;
    loadStatus.textContent = `Loading ${sample.title}…`;
    try {
      await loadRows(parseCsv(await fetchText(`samples/${sample.csv}`)), { yAddress: sample.yAddress, xAddress: sample.xAddress }, sample.csv);
    } catch (error) {
      loadStatus.textContent = `Could not load the sample: ${messageOf(error)}`;
    }
  });
  return { loadRows };
}
