import { SkeinError } from "../src/engine/errors";
import type { Design } from "../src/engine/design";
import type { MixtureFit } from "../src/engine/mixtureTypes";
import { formatAddress, parseAddress, type CellBlock } from "./a1";

export type Output = "fit" | "labels" | "membership";

export interface PlacementRequest {
  yAddress: string;
  xAddress: string;
  /** Rows of the y range as given, header included: LABELS and MEMBERSHIP spill this many. */
  rangeRows: number;
  k: number;
  seed: number;
  /** The fit's intercept and model, when not the defaults, go into the formulas' settings too. */
  intercept?: boolean;
  model?: MixtureFit["model"];
  /** The background setting ("auto", "yes", "no"), written into the formulas when not auto. */
  background?: string;
  outputs: Output[];
  mode: "formulas" | "values";
}

/** One block to write: where, and what (formula text or values). */
export interface PlacedBlock {
  output: Output;
  anchor: string;
  rows: number;
  columns: number;
  cells: unknown[][];
}

function settingsText(request: PlacementRequest): string {
  const parts = [`seed=${request.seed}`];
  if (request.intercept === false) parts.push("intercept=no");
  if (request.model !== undefined && request.model !== "plain") parts.push(`model=${request.model}`);
  if (request.background !== undefined && request.background !== "auto") parts.push(`background=${request.background}`);
  return `"${parts.join("; ")}"`;
}

/** Formula text for one output, referring to the chosen ranges so it stays live. */
export function formulaFor(output: Output, request: PlacementRequest): string {
  const name = output === "fit" ? "FIT" : output === "labels" ? "LABELS" : "MEMBERSHIP";
  return `=SKEIN.${name}(${request.yAddress}, ${request.xAddress}, ${request.k}, ${settingsText(request)})`;
}

/** How big each output spills: FIT K rows (plus a header) by 4 + p, LABELS the range's rows by 1, MEMBERSHIP by K. */
function size(output: Output, request: PlacementRequest, p: number): { rows: number; columns: number } {
  if (output === "fit") return { rows: request.k + 1, columns: 4 + p };
  return { rows: request.rangeRows, columns: output === "labels" ? 1 : request.k };
}

/**
 * Lays the chosen outputs side by side from the anchor, one empty column between
 * them, and fills each with formula text or with the shown fit's values.
 */
export function planPlacement(anchorAddress: string, request: PlacementRequest, design: Design, fit: MixtureFit | null): PlacedBlock[] {
  const anchor = parseAddress(anchorAddress);
  if (!anchor) throw new SkeinError("bad-input", `"${anchorAddress}" is not a cell address; type one such as H2, or select a cell and press "Use selection".`);
  const blocks: PlacedBlock[] = [];
  let column = anchor.left;
  for (const output of request.outputs) {
    const { rows, columns } = size(output, request, design.p);
    const at: CellBlock = { sheet: anchor.sheet, top: anchor.top, left: column, bottom: anchor.top, right: column };
    const cells = request.mode === "formulas" ? [[formulaFor(output, request)]] : valuesFor(output, request, design, fit!);
    blocks.push({ output, anchor: formatAddress(at), rows, columns, cells });
    column += columns + 1;
  }
  return blocks;
}

/** The whole area the outputs cover (their spill areas), for the empty-cells check. */
export function coveredArea(blocks: PlacedBlock[]): { anchor: string; rows: number; columns: number; address: string } {
  const first = parseAddress(blocks[0].anchor)!;
  const last = parseAddress(blocks[blocks.length - 1].anchor)!;
  const rows = Math.max(...blocks.map((b) => b.rows));
  const columns = last.left + blocks[blocks.length - 1].columns - first.left;
  const area = { ...first, bottom: first.top + rows - 1, right: first.left + columns - 1 };
  return { anchor: blocks[0].anchor, rows, columns, address: formatAddress(area) };
}

function valuesFor(output: Output, request: PlacementRequest, design: Design, fit: MixtureFit): unknown[][] {
  const k = fit.k;
  if (output === "fit") {
    const header: unknown[] = ["component", "weight (%)", "noise SD", "intercept", ...design.predictorNames];
    const rows: unknown[][] = [header];
    fit.components.forEach((c, i) => rows.push([i + 1, 100 * c.weight, c.sigma, ...Array.from(c.coefficients)]));
    return rows;
  }
  // Per-row outputs line up with the range's rows: a header row gets a header, skipped rows stay empty ("").
  const offset = design.hasHeaderRow ? 1 : 0;
  const width = output === "labels" ? 1 : k;
  const rows: unknown[][] = Array.from({ length: request.rangeRows }, () => new Array(width).fill(""));
  if (design.hasHeaderRow) rows[0] = output === "labels" ? ["component"] : Array.from({ length: k }, (_, c) => `membership ${c + 1}`);
  for (let i = 0; i < design.n; i++) {
    const target = rows[design.rowIndex[i] + offset];
    if (output === "labels") target[0] = fit.labels[i] + 1;
    else for (let c = 0; c < k; c++) target[c] = fit.memberships[i * k + c];
  }
  return rows;
}

