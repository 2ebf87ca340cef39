import { SkeinError } from "../src/engine/errors";
import { blocksOverlap, parseAddress, type CellBlock } from "./a1";
import type { SheetHost } from "./host";

function mustParse(address: string): CellBlock {
  const block = parseAddress(address);
  if (!block) throw new SkeinError("bad-input", `"${address}" is not a range address; type one such as Sheet1!B2:B101, or select the cells and press "Use selection".`);
  return block;
}

/** The sheet part of an address, or the active sheet. */
function sheetOf(context: Excel.RequestContext, block: CellBlock): Excel.Worksheet {
  return block.sheet === "" ? context.workbook.worksheets.getActiveWorksheet() : context.workbook.worksheets.getItem(block.sheet);
}

function cellPart(address: string): string {
  const bang = address.lastIndexOf("!");
  return bang < 0 ? address : address.slice(bang + 1);
}

function rangeAt(context: Excel.RequestContext, address: string): Excel.Range {
  const block = mustParse(address);
  return sheetOf(context, block).getRange(cellPart(address));
}

/** Excel hands an empty cell over as "": the pane (like the design) calls that blank. */
function fromExcel(value: unknown): unknown {
  return value === "" ? null : value;
}

/** The document setting that keeps the pane's ranges with the workbook. */
const RANGES_SETTING = "skein.paneRanges";

/** The workbook, through Excel.run. Every call is one batch and one sync where it can be. */
export class ExcelHost implements SheetHost {
  readonly kind = "excel" as const;

  async selectedAddress(): Promise<string> {
    return Excel.run(async (context) => {
      const range = context.workbook.getSelectedRange();
      range.load("address");
      await context.sync();
      return range.address;
    });
  }

  async readValues(address: string): Promise<unknown[][]> {
    return Excel.run(async (context) => {
      const range = rangeAt(context, address);
      range.load("values");
      await context.sync();
      return (range.values as unknown[][]).map((row) => row.map(fromExcel));
    });
  }

  async occupiedCells(anchor: string, rows: number, columns: number): Promise<number> {
    return Excel.run(async (context) => {
      const range = rangeAt(context, anchor).getResizedRange(rows - 1, columns - 1);
      range.load(["values", "formulas"]);
      await context.sync();
      let count = 0;
      const values = range.values as unknown[][];
      const formulas = range.formulas as unknown[][];
      for (let r = 0; r < values.length; r++) {
        for (let c = 0; c < values[r].length; c++) {
          if (values[r][c] !== "" || (formulas[r] && formulas[r][c] !== "")) count++;
        }
      }
      return count;
    });
  }

  async write(anchor: string, cells: unknown[][]): Promise<void> {
    if (cells.length === 0) return;
    await Excel.run(async (context) => {
      const range = rangeAt(context, anchor).getResizedRange(cells.length - 1, cells[0].length - 1);
      range.formulas = cells.map((row) => row.map((cell) => (cell === null || cell === undefined ? "" : cell))) as any[][];
      await context.sync();
    });
  }

  /** Document settings travel with the workbook; saveAsync writes them into it. */
  async saveRanges(ranges: { yAddress: string; xAddress: string }): Promise<void> {
    const settings = Office.context?.document?.settings;
    if (!settings) return;
    settings.set(RANGES_SETTING, ranges);
    await new Promise<void>((resolve) => settings.saveAsync(() => resolve()));
  }

  async savedRanges(): Promise<{ yAddress: string; xAddress: string } | null> {
    const saved = Office.context?.document?.settings?.get(RANGES_SETTING) as { yAddress?: unknown; xAddress?: unknown } | null | undefined;
    if (!saved || typeof saved.yAddress !== "string" || typeof saved.xAddress !== "string") return null;
    return { yAddress: saved.yAddress, xAddress: saved.xAddress };
  }

  async watch(addresses: string[], onChange: () => void): Promise<() => void> {
    const blocks = addresses.map(mustParse);
    return Excel.run(async (context) => {
      // Resolve each watched block's sheet name, so edits on another sheet are ignored.
      const active = context.workbook.worksheets.getActiveWorksheet();
      active.load("name");
      await context.sync();
      const named = blocks.map((b) => (b.sheet === "" ? { ...b, sheet: active.name } : b));
      const sheets = [...new Set(named.map((b) => b.sheet))];
      const handlers: OfficeExtension.EventHandlerResult<Excel.WorksheetChangedEventArgs>[] = [];
      for (const sheet of sheets) {
        const worksheet = context.workbook.worksheets.getItem(sheet);
        worksheet.load("name");
        handlers.push(worksheet.onChanged.add(async (event: Excel.WorksheetChangedEventArgs) => {
          const touched = parseAddress(event.address);
          if (!touched) return;
          const where = { ...touched, sheet: touched.sheet || sheet };
          if (named.some((b) => blocksOverlap(b, where))) onChange();
        }));
      }
      await context.sync();
      // Handlers are removed in the context that added them.
      return () => {
        if (handlers.length === 0) return;
        void Excel.run(handlers[0].context, async (removal) => {
          for (const handler of handlers) handler.remove();
          await removal.sync();
        }).catch(() => undefined);
      };
    });
  }
}
