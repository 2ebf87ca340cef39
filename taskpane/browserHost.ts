import { SkeinError } from "../src/engine/errors";
import { blocksOverlap, formatAddress, parseAddress, type CellBlock } from "./a1";
import type { Grid } from "./grid";
import type { SheetHost } from "./host";

/**
 * The built-in grid as a host. Formulas written here stay as formula text (there
 * is no calculation engine behind the grid); the pane says so where it matters.
 */
export class PlainBrowserHost implements SheetHost {
  readonly kind = "browser" as const;

  constructor(readonly grid: Grid) {}

  private block(address: string): CellBlock {
    const block = parseAddress(address);
    if (!block) throw new SkeinError("bad-input", `"${address}" is not a range address; type one such as B2:B101, or select the cells and press "Use selection".`);
    if (block.sheet !== "" && block.sheet.toLowerCase() !== this.grid.sheetName.toLowerCase()) {
      throw new SkeinError("bad-input", `There is no sheet "${block.sheet}" here; the built-in sheet is called ${this.grid.sheetName}.`);
    }
    return block;
  }

  async selectedAddress(): Promise<string> {
    return formatAddress(this.grid.getSelection());
  }

  async readValues(address: string): Promise<unknown[][]> {
    const b = this.block(address);
    const rows: unknown[][] = [];
    for (let r = b.top; r <= b.bottom; r++) {
      const row: unknown[] = [];
      for (let c = b.left; c <= b.right; c++) row.push(this.grid.get(r, c));
      rows.push(row);
    }
    return rows;
  }

  async occupiedCells(anchor: string, rows: number, columns: number): Promise<number> {
    const b = this.block(anchor);
    let count = 0;
    for (let r = b.top; r < b.top + rows; r++) {
      for (let c = b.left; c < b.left + columns; c++) {
        const value = this.grid.get(r, c);
        if (value !== null && value !== "") count++;
      }
    }
    return count;
  }

  async write(anchor: string, cells: unknown[][]): Promise<void> {
    const b = this.block(anchor);
    this.grid.setBlock(b.top, b.left, cells);
  }

  /** The built-in sheet starts empty on every visit, so there is nothing to keep. */
  async saveRanges(): Promise<void> {}

  async savedRanges(): Promise<null> {
    return null;
  }

  async watch(addresses: string[], onChange: () => void): Promise<() => void> {
    const blocks = addresses.map((a) => this.block(a));
    return this.grid.onChange(({ block }) => {
      if (blocks.some((b) => blocksOverlap(b, block))) onChange();
    });
  }
}
