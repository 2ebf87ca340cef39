import { columnLetters, formatAddress, type CellBlock } from "./a1";
import { escapeHtml } from "./dom";

/** Rows and columns shown beyond the data, so results can be placed beside it. */
const SPARE_ROWS = 20;
const SPARE_COLUMNS = 8;
const MIN_ROWS = 30;
const MIN_COLUMNS = 12;

export type GridChange = { block: CellBlock };

/**
 * The built-in sheet of plain-browser mode: a table of cells with A1 headers, a
 * selection made with the mouse (click, shift-click, drag) or the keyboard
 * (arrows, shift+arrows), and editing (Enter, F2 or typing; Enter commits, Escape
 * cancels). It stands in for a worksheet, so it is deliberately plain.
 */
export class Grid {
  readonly sheetName: string;
  private cells: unknown[][] = [];
  private rows = MIN_ROWS;
  private columns = MIN_COLUMNS;
  private selection: CellBlock;
  private anchor = { row: 0, column: 0 };
  private dragging = false;
  private readonly table: HTMLTableElement;
  private readonly announce: HTMLElement;
  private readonly changeListeners = new Set<(change: GridChange) => void>();
  private editor: HTMLInputElement | null = null;

  constructor(readonly container: HTMLElement, sheetName = "Data") {
    this.sheetName = sheetName;
    this.selection = { sheet: sheetName, top: 0, left: 0, bottom: 0, right: 0 };
    container.classList.add("grid");
    container.tabIndex = 0;
    container.setAttribute("role", "grid");
    container.setAttribute("aria-label", `Sheet ${sheetName}: arrows move, shift+arrows select, Enter edits`);
    this.table = document.createElement("table");
    container.appendChild(this.table);
    this.announce = document.createElement("p");
    this.announce.className = "visually-hidden";
    this.announce.setAttribute("aria-live", "polite");
    container.after(this.announce);
    container.addEventListener("keydown", (e) => this.onKey(e));
    this.table.addEventListener("mousedown", (e) => this.onMouseDown(e));
    this.table.addEventListener("mouseover", (e) => this.onMouseOver(e));
    this.table.addEventListener("dblclick", (e) => {
      const cell = this.cellFromEvent(e);
      if (cell) this.startEdit(String(this.get(cell.row, cell.column) ?? ""));
    });
    document.addEventListener("mouseup", () => (this.dragging = false));
    this.render();
  }

  /** Replaces the whole sheet. */
  load(rows: unknown[][]): void {
    this.cells = rows.map((row) => row.slice());
    this.selection = { sheet: this.sheetName, top: 0, left: 0, bottom: 0, right: 0 };
    this.anchor = { row: 0, column: 0 };
    this.render();
    this.emit({ sheet: this.sheetName, top: 0, left: 0, bottom: Math.max(0, rows.length - 1), right: Math.max(0, ...rows.map((r) => r.length - 1)) });
  }

  get(row: number, column: number): unknown {
    const value = this.cells[row]?.[column];
    return value === undefined ? null : value;
  }

  /** Writes a block whose top-left cell is (top, left). */
  setBlock(top: number, left: number, values: unknown[][]): void {
    for (let r = 0; r < values.length; r++) {
      const row = (this.cells[top + r] ??= []);
      for (let c = 0; c < values[r].length; c++) row[left + c] = values[r][c] ?? null;
    }
    for (let r = 0; r < top; r++) this.cells[r] ??= [];
    this.render();
    const width = Math.max(1, ...values.map((r) => r.length));
    this.emit({ sheet: this.sheetName, top, left, bottom: top + values.length - 1, right: left + width - 1 });
  }

  getSelection(): CellBlock {
    return { ...this.selection };
  }

  select(block: CellBlock): void {
    this.selection = { ...block, sheet: this.sheetName };
    this.anchor = { row: block.top, column: block.left };
    this.paintSelection();
  }

  onChange(listener: (change: GridChange) => void): () => void {
    this.changeListeners.add(listener);
    return () => this.changeListeners.delete(listener);
  }

  private emit(block: CellBlock): void {
    for (const listener of this.changeListeners) listener({ block });
  }

  private render(): void {
    const dataRows = this.cells.length;
    const dataColumns = Math.max(0, ...this.cells.map((r) => r?.length ?? 0));
    this.rows = Math.max(MIN_ROWS, dataRows + SPARE_ROWS);
    this.columns = Math.max(MIN_COLUMNS, dataColumns + SPARE_COLUMNS);
    const head = `<thead><tr><th class="corner" scope="col"><span class="visually-hidden">Row</span></th>${Array.from({ length: this.columns }, (_, c) => `<th scope="col">${columnLetters(c)}</th>`).join("")}</tr></thead>`;
    const body: string[] = [];
    for (let r = 0; r < this.rows; r++) {
      const cells: string[] = [`<th scope="row">${r + 1}</th>`];
      for (let c = 0; c < this.columns; c++) {
        const value = this.get(r, c);
        const kind = typeof value === "number" ? "number" : typeof value === "string" && value.startsWith("=") ? "formula" : "";
        cells.push(`<td data-r="${r}" data-c="${c}" role="gridcell" class="${kind}">${escapeHtml(displayValue(value))}</td>`);
      }
      body.push(`<tr>${cells.join("")}</tr>`);
    }
    this.table.innerHTML = `${head}<tbody>${body.join("")}</tbody>`;
    this.paintSelection();
  }

  private paintSelection(): void {
    for (const td of Array.from(this.table.querySelectorAll("td.selected, td.active"))) {
      td.classList.remove("selected", "active");
      td.removeAttribute("aria-selected");
    }
    const s = this.selection;
    for (let r = s.top; r <= s.bottom && r < this.rows; r++) {
      for (let c = s.left; c <= s.right && c < this.columns; c++) {
        const td = this.cellElement(r, c);
        if (!td) continue;
        td.classList.add("selected");
        td.setAttribute("aria-selected", "true");
      }
    }
    this.cellElement(this.anchor.row, this.anchor.column)?.classList.add("active");
    this.announce.textContent = `${formatAddress({ ...s, sheet: "" })} selected`;
  }

  private cellElement(row: number, column: number): HTMLTableCellElement | null {
    return this.table.querySelector(`td[data-r="${row}"][data-c="${column}"]`);
  }

  private cellFromEvent(e: Event): { row: number; column: number } | null {
    const td = (e.target as HTMLElement).closest?.("td");
    if (!td) return null;
    return { row: Number(td.getAttribute("data-r")), column: Number(td.getAttribute("data-c")) };
  }

  private extendTo(row: number, column: number): void {
    this.selection = {
      sheet: this.sheetName,
      top: Math.min(this.anchor.row, row),
      bottom: Math.max(this.anchor.row, row),
      left: Math.min(this.anchor.column, column),
      right: Math.max(this.anchor.column, column),
    };
    this.paintSelection();
  }

  private onMouseDown(e: MouseEvent): void {
    const cell = this.cellFromEvent(e);
    if (!cell) return;
    if (this.editor) this.commitEdit();
    if (e.shiftKey) {
      this.extendTo(cell.row, cell.column);
    } else {
      this.anchor = cell;
      this.extendTo(cell.row, cell.column);
    }
    this.dragging = true;
    this.container.focus();
    e.preventDefault();
  }

  private onMouseOver(e: MouseEvent): void {
    if (!this.dragging) return;
    const cell = this.cellFromEvent(e);
    if (cell) this.extendTo(cell.row, cell.column);
  }

  private onKey(e: KeyboardEvent): void {
    if (this.editor) return;
    const moves: Record<string, [number, number]> = { ArrowUp: [-1, 0], ArrowDown: [1, 0], ArrowLeft: [0, -1], ArrowRight: [0, 1] };
    const move = moves[e.key];
    if (move) {
      e.preventDefault();
      // With shift the far corner moves; without, the active cell moves and the selection collapses to it.
      const s = this.selection;
      if (e.shiftKey) {
        const farRow = s.top === this.anchor.row ? s.bottom : s.top;
        const farColumn = s.left === this.anchor.column ? s.right : s.left;
        this.extendTo(clamp(farRow + move[0], this.rows), clamp(farColumn + move[1], this.columns));
      } else {
        this.anchor = { row: clamp(this.anchor.row + move[0], this.rows), column: clamp(this.anchor.column + move[1], this.columns) };
        this.extendTo(this.anchor.row, this.anchor.column);
        this.cellElement(this.anchor.row, this.anchor.column)?.scrollIntoView?.({ block: "nearest", inline: "nearest" });
      }
      return;
    }
    if (e.key === "Enter" || e.key === "F2") {
      e.preventDefault();
      this.startEdit(String(this.get(this.anchor.row, this.anchor.column) ?? ""));
    } else if (e.key === "Delete" || e.key === "Backspace") {
      e.preventDefault();
      const s = this.selection;
      this.setBlock(s.top, s.left, Array.from({ length: s.bottom - s.top + 1 }, () => new Array(s.right - s.left + 1).fill(null)));
    } else if (e.key.length === 1 && !e.ctrlKey && !e.metaKey && !e.altKey) {
      e.preventDefault();
      this.startEdit(e.key);
    }
  }

  private startEdit(initial: string): void {
    const td = this.cellElement(this.anchor.row, this.anchor.column);
    if (!td) return;
    const input = document.createElement("input");
    input.type = "text";
    input.value = initial;
    input.className = "cell-editor";
    input.setAttribute("aria-label", `Edit cell ${columnLetters(this.anchor.column)}${this.anchor.row + 1}`);
    td.textContent = "";
    td.appendChild(input);
    this.editor = input;
    input.focus();
    input.addEventListener("keydown", (e) => {
      if (e.key === "Enter") {
        e.preventDefault();
        this.commitEdit();
        this.container.focus();
      } else if (e.key === "Escape") {
        e.preventDefault();
        this.editor = null;
        this.render();
        this.container.focus();
      }
      e.stopPropagation();
    });
    input.addEventListener("blur", () => this.commitEdit());
  }

  private commitEdit(): void {
    const input = this.editor;
    if (!input) return;
    this.editor = null;
    const text = input.value.trim();
    const value = text === "" ? null : Number.isFinite(Number(text)) ? Number(text) : input.value;
    this.setBlock(this.anchor.row, this.anchor.column, [[value]]);
  }
}

function clamp(value: number, size: number): number {
  return Math.max(0, Math.min(size - 1, value));
}

function displayValue(value: unknown): string {
  if (value === null || value === undefined) return "";
  if (typeof value === "number") return Number.isInteger(value) ? String(value) : String(Number(value.toPrecision(8)));
  return String(value);
}
