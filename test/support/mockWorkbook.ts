/**
 * A small in-memory workbook behind office-addin-mock, enough for the pane's
 * ExcelHost: the selection, worksheets by name and the active one, ranges with
 * values and formulas (written back on sync), getResizedRange, and
 * worksheet.onChanged handlers the test can fire.
 */
import { OfficeMockObject } from "office-addin-mock";
import { formatAddress, parseAddress, type CellBlock } from "../../taskpane/a1";

export interface MockWorkbook {
  excel: unknown;
  cells: Record<string, unknown[][]>;
  selection: string;
  /** Fires the onChanged handlers of a sheet as Excel would after an edit of `address`. */
  edit(sheet: string, address: string, values: unknown[][]): Promise<void>;
  handlerCount(sheet: string): number;
  /** Every range a batch wrote, in order. */
  writes: { address: string; formulas: unknown[][] }[];
}

export function mockWorkbook(cells: Record<string, unknown[][]>, active: string, selection: string): MockWorkbook {
  const handlers: Record<string, ((event: { address: string }) => Promise<void> | void)[]> = {};
  const writes: { address: string; formulas: unknown[][] }[] = [];
  let pending: { sheet: string; block: CellBlock; mock: any; original: unknown }[] = [];
  const workbook: MockWorkbook = { excel: null, cells, selection, writes, edit, handlerCount: (s) => (handlers[s] ?? []).length };

  const read = (sheet: string, block: CellBlock) => {
    const values: unknown[][] = [];
    for (let r = block.top; r <= block.bottom; r++) {
      const row: unknown[] = [];
      for (let c = block.left; c <= block.right; c++) {
        const v = cells[sheet]?.[r]?.[c];
        row.push(v === null || v === undefined ? "" : v);
      }
      values.push(row);
    }
    return values;
  };

  function range(sheet: string, block: CellBlock): any {
    const values = read(sheet, block);
    const formulas = values.map((row) => row.map((v) => (typeof v === "number" ? String(v) : v)));
    const mock: any = new OfficeMockObject({
      address: formatAddress({ ...block, sheet }),
      values,
      formulas,
      getResizedRange: (rows: number, columns: number) => range(sheet, { ...block, bottom: block.top + rows, right: block.left + columns }),
    } as any);
    pending.push({ sheet, block, mock, original: mock.formulas });
    return mock;
  }

  function worksheet(name: string): any {
    const mock: any = new OfficeMockObject({
      name,
      getRange: (address: string) => range(name, { ...parseAddress(address)!, sheet: name }),
      onChanged: {
        add: (handler: (event: { address: string }) => void) => {
          (handlers[name] ??= []).push(handler);
          return { remove: () => (handlers[name] = (handlers[name] ?? []).filter((h) => h !== handler)), context: {} };
        },
      },
    } as any);
    pending.push({ sheet: name, block: { sheet: name, top: 0, left: 0, bottom: 0, right: 0 }, mock, original: undefined });
    return mock;
  }

  const context = {
    workbook: {
      getSelectedRange: () => {
        const block = parseAddress(workbook.selection)!;
        return range(block.sheet || active, block);
      },
      worksheets: {
        getItem: (name: string) => worksheet(name),
        getActiveWorksheet: () => worksheet(active),
      },
    },
    // Applies assigned formulas to the cells, then lets every object touched in the batch report its loaded properties.
    sync: async () => {
      const batch = pending;
      pending = [];
      for (const item of batch) {
        const formulas = item.original === undefined ? undefined : item.mock.formulas;
        if (item.original !== undefined && formulas !== item.original && Array.isArray(formulas)) {
          writes.push({ address: formatAddress({ ...item.block, sheet: item.sheet }), formulas });
          const sheetCells = (cells[item.sheet] ??= []);
          formulas.forEach((row: unknown[], r: number) => row.forEach((v, c) => {
            const target = (sheetCells[item.block.top + r] ??= []);
            target[item.block.left + c] = v === "" ? null : v;
          }));
        }
        await item.mock.sync();
      }
    },
  };
  workbook.excel = new OfficeMockObject({
    // Excel.run(batch) or Excel.run(earlierContext, batch).
    run: async (first: unknown, second?: (ctx: typeof context) => Promise<unknown>) =>
      (second ?? (first as (ctx: typeof context) => Promise<unknown>))(context),
  } as any);

  async function edit(sheet: string, address: string, values: unknown[][]): Promise<void> {
    const block = parseAddress(address)!;
    values.forEach((row, r) => row.forEach((v, c) => (((cells[sheet] ??= [])[block.top + r] ??= [])[block.left + c] = v)));
    for (const handler of handlers[sheet] ?? []) await handler({ address });
  }
  return workbook;
}
