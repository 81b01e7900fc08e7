import { h } from '../ui/dom.ts';
import type { SheetModel } from './sheet-model.ts';
import type { SheetIssues } from './sheet-issues.ts';
import { formatTsv, parseTsv } from './tsv.ts';

export const ROW_H = 28;
const HEAD_H = 28;
const COL_W = 150;
const RNUM_W = 64;
/** Rows drawn above and below the visible ones, so fast scrolling shows no gaps. */
const OVERSCAN = 6;

interface Pos {
  r: number;
  c: number;
}

export interface GridHooks {
  /** A short note for the status line (what was pasted, undone, refused). */
  say(text: string, tone?: 'plain' | 'good' | 'bad'): void;
  /** The active cell moved or changed. */
  onActive?(): void;
}

/**
 * The site grid: a virtualised view of a SheetModel. Only the rows in sight are in the DOM
 * (about 25 of 100,000), placed over a spacer as tall as the whole table, so scrolling stays
 * smooth at any size. `view` maps display rows to model rows (a filter); display row
 * `rowCount` is an empty row for typing new sites (only without a filter).
 *
 * Keyboard (the grid is one tab stop; the active cell is aria-activedescendant):
 * arrows, Tab, Home/End, Ctrl+Home/End, PageUp/PageDown move; Shift extends the selection;
 * Enter or F2 edits with the caret at the end, typing replaces; Escape cancels an edit; Delete clears; Ctrl+D fills down;
 * Ctrl+Z / Ctrl+Y (or Ctrl+Shift+Z) undo and redo; Ctrl+C / Ctrl+X / Ctrl+V copy, cut and paste
 * tab-separated ranges.
 */
export class GridView {
  readonly element: HTMLElement;
  readonly scroller: HTMLDivElement;
  private readonly inner: HTMLDivElement;
  private readonly head: HTMLDivElement;
  private readonly body: HTMLDivElement;
  private editor: HTMLInputElement | null = null;
  private view: number[] | null = null;
  private issues: SheetIssues | null = null;
  active: Pos = { r: 0, c: 0 };
  private anchor: Pos = { r: 0, c: 0 };
  private frame = 0;
  private dragging = false;
  sortState: { col: number; direction: 'ascending' | 'descending' } | null = null;

  constructor(
    private readonly model: SheetModel,
    private readonly hooks: GridHooks,
  ) {
    this.head = h('div', { class: 'grid-head', role: 'row', 'aria-rowindex': 1 });
    this.body = h('div', { class: 'grid-body', role: 'rowgroup' });
    this.inner = h('div', { style: 'position: relative' }, this.head, this.body);
    this.scroller = h('div', {
      class: 'grid-scroll',
      role: 'grid',
      tabindex: 0,
      'aria-label': 'Site table: arrow keys move, Enter edits, Ctrl+V pastes tab-separated cells',
      'aria-multiselectable': 'true',
    });
    this.scroller.append(this.inner);
    this.element = h('div', { class: 'grid-wrap' }, this.scroller);
    this.scroller.addEventListener('scroll', () => this.schedule());
    this.scroller.addEventListener('keydown', (e) => this.onKey(e));
    this.scroller.addEventListener('copy', (e) => this.onCopy(e, false));
    this.scroller.addEventListener('cut', (e) => this.onCopy(e, true));
    this.scroller.addEventListener('paste', (e) => this.onPaste(e));
    this.scroller.addEventListener('mousedown', (e) => this.onMouseDown(e));
    this.scroller.addEventListener('dblclick', (e) => {
      const pos = this.cellAt(e.target);
      if (pos) this.startEdit();
    });
    window.addEventListener('mouseup', () => (this.dragging = false));
    new ResizeObserver(() => this.schedule()).observe(this.scroller);
    model.onChange(() => this.schedule());
  }

  /** Display rows: the filter's rows, or every row plus the empty row for new sites. */
  get rowCount(): number {
    return this.view ? this.view.length : this.model.rows.length + 1;
  }

  get filtered(): boolean {
    return this.view !== null;
  }

  modelRow(displayRow: number): number {
    return this.view ? this.view[displayRow] ?? -1 : displayRow;
  }

  setView(rows: number[] | null): void {
    this.view = rows;
    this.clampActive();
    this.schedule();
  }

  setIssues(issues: SheetIssues): void {
    this.issues = issues;
    this.schedule();
  }

  /** The selection as inclusive display bounds. */
  selection(): { r0: number; r1: number; c0: number; c1: number } {
    return {
      r0: Math.min(this.anchor.r, this.active.r),
      r1: Math.max(this.anchor.r, this.active.r),
      c0: Math.min(this.anchor.c, this.active.c),
      c1: Math.max(this.anchor.c, this.active.c),
    };
  }

  /** Model rows covered by the selection (existing rows only). */
  selectedModelRows(): number[] {
    const { r0, r1 } = this.selection();
    const out: number[] = [];
    for (let r = r0; r <= r1; r++) {
      const m = this.modelRow(r);
      if (m >= 0 && m < this.model.rows.length) out.push(m);
    }
    return out;
  }

  moveTo(pos: Pos, extend = false): void {
    this.active = { r: pos.r, c: pos.c };
    this.clampActive();
    if (!extend) this.anchor = { ...this.active };
    this.scrollIntoView();
    this.schedule();
    this.hooks.onActive?.();
  }

  focus(): void {
    this.scroller.focus();
  }

  /** The issue message of the active cell (or its row), if any. */
  activeMessage(): string | null {
    const m = this.modelRow(this.active.r);
    return this.issues?.byCell.get(`${m}:${this.active.c}`) ?? this.issues?.byCell.get(`${m}:-1`) ?? null;
  }

  render(): void {
    this.frame = 0;
    const cols = this.model.columns.length;
    const width = RNUM_W + cols * COL_W;
    const rows = this.rowCount;
    this.inner.style.width = `${width}px`;
    this.inner.style.height = `${HEAD_H + rows * ROW_H}px`;
    this.scroller.setAttribute('aria-rowcount', String(rows + 1));
    this.scroller.setAttribute('aria-colcount', String(cols + 1));
    this.renderHead();
    const first = Math.max(0, Math.floor(this.scroller.scrollTop / ROW_H) - OVERSCAN);
    const last = Math.min(rows - 1, Math.ceil((this.scroller.scrollTop + this.scroller.clientHeight) / ROW_H) + OVERSCAN);
    this.body.style.top = `${HEAD_H + first * ROW_H}px`;
    this.body.style.width = `${width}px`;
    const sel = this.selection();
    const fragment = document.createDocumentFragment();
    for (let r = first; r <= last; r++) {
      const m = this.modelRow(r);
      const data = this.model.rows[m];
      const rowEl = h('div', { class: 'grid-row', role: 'row', 'aria-rowindex': r + 2 });
      const rowIssue = this.issues?.byCell.get(`${m}:-1`);
      rowEl.append(h('div', { class: 'grid-rnum', role: 'rowheader', title: rowIssue ?? null }, data ? String(m + 1) : '+'));
      for (let c = 0; c < cols; c++) {
        const message = data ? this.issues?.byCell.get(`${m}:${c}`) ?? rowIssue : undefined;
        const selected = r >= sel.r0 && r <= sel.r1 && c >= sel.c0 && c <= sel.c1;
        const isActive = r === this.active.r && c === this.active.c;
        const cell = h(
          'div',
          {
            class: `grid-cell${selected ? ' selected' : ''}${isActive ? ' active' : ''}${message ? ' invalid' : ''}`,
            role: 'gridcell',
            id: `cell-${r}-${c}`,
            'aria-colindex': c + 2,
            'aria-selected': selected ? 'true' : 'false',
            'aria-invalid': message ? 'true' : null,
            title: message ?? null,
            'data-r': r,
            'data-c': c,
          },
          data?.[c] ?? '',
        );
        rowEl.append(cell);
      }
      fragment.append(rowEl);
    }
    this.body.replaceChildren(fragment);
    this.scroller.setAttribute('aria-activedescendant', `cell-${this.active.r}-${this.active.c}`);
  }

  private renderHead(): void {
    const cells: HTMLElement[] = [h('div', { class: 'grid-rnum', role: 'columnheader' }, '#')];
    this.model.columns.forEach((name, c) => {
      const headerIssue = this.issues?.byCell.get(`-1:${c}`);
      const sort = this.sortState?.col === c ? this.sortState.direction : null;
      cells.push(
        h(
          'div',
          {
            class: `grid-hcell${headerIssue ? ' invalid' : ''}`,
            role: 'columnheader',
            'aria-colindex': c + 2,
            'aria-sort': sort ?? 'none',
            title: headerIssue ?? `${name}: click to sort`,
            'data-col': c,
          },
          name + (sort === 'ascending' ? ' ▲' : sort === 'descending' ? ' ▼' : ''),
        ),
      );
    });
    this.head.replaceChildren(...cells);
    this.head.style.width = `${RNUM_W + this.model.columns.length * COL_W}px`;
  }

  private schedule(): void {
    if (!this.frame) this.frame = requestAnimationFrame(() => this.render());
  }

  private clampActive(): void {
    const maxR = Math.max(0, this.rowCount - 1);
    const maxC = Math.max(0, this.model.columns.length - 1);
    this.active = { r: Math.min(Math.max(0, this.active.r), maxR), c: Math.min(Math.max(0, this.active.c), maxC) };
    this.anchor = { r: Math.min(Math.max(0, this.anchor.r), maxR), c: Math.min(Math.max(0, this.anchor.c), maxC) };
  }

  private scrollIntoView(): void {
    const top = this.active.r * ROW_H;
    const viewTop = this.scroller.scrollTop;
    const viewH = this.scroller.clientHeight - HEAD_H;
    if (top < viewTop) this.scroller.scrollTop = top;
    else if (top + ROW_H > viewTop + viewH) this.scroller.scrollTop = top + ROW_H - viewH;
    const left = RNUM_W + this.active.c * COL_W;
    if (left - RNUM_W < this.scroller.scrollLeft) this.scroller.scrollLeft = left - RNUM_W;
    else if (left + COL_W > this.scroller.scrollLeft + this.scroller.clientWidth) this.scroller.scrollLeft = left + COL_W - this.scroller.clientWidth;
  }

  private pageRows(): number {
    return Math.max(1, Math.floor((this.scroller.clientHeight - HEAD_H) / ROW_H) - 1);
  }

  private onKey(e: KeyboardEvent): void {
    if (this.editor) return; // the editor handles its own keys
    const mod = e.ctrlKey || e.metaKey;
    const { r, c } = this.active;
    const lastR = this.rowCount - 1;
    const lastC = this.model.columns.length - 1;
    const move = (pos: Pos) => {
      e.preventDefault();
      this.moveTo(pos, e.shiftKey);
    };
    switch (e.key) {
      case 'ArrowDown': return move({ r: mod ? lastR : r + 1, c });
      case 'ArrowUp': return move({ r: mod ? 0 : r - 1, c });
      case 'ArrowRight': return move({ r, c: mod ? lastC : c + 1 });
      case 'ArrowLeft': return move({ r, c: mod ? 0 : c - 1 });
      case 'PageDown': return move({ r: r + this.pageRows(), c });
      case 'PageUp': return move({ r: r - this.pageRows(), c });
      case 'Home': return move({ r: mod ? 0 : r, c: 0 });
      case 'End': return move({ r: mod ? lastR : r, c: lastC });
      case 'Tab':
        e.preventDefault();
        return this.moveTo(e.shiftKey ? (c > 0 ? { r, c: c - 1 } : { r: r - 1, c: lastC }) : c < lastC ? { r, c: c + 1 } : { r: r + 1, c: 0 });
      case 'Enter':
      case 'F2':
        e.preventDefault();
        return this.startEdit();
      case 'Delete':
      case 'Backspace':
        e.preventDefault();
        return this.clearSelection();
    }
    if (mod && !e.altKey) {
      const key = e.key.toLowerCase();
      if (key === 'z' && !e.shiftKey) return this.history(e, 'undo');
      if (key === 'y' || (key === 'z' && e.shiftKey)) return this.history(e, 'redo');
      if (key === 'd') {
        e.preventDefault();
        return this.fillDown();
      }
      if (key === 'a') {
        e.preventDefault();
        this.anchor = { r: 0, c: 0 };
        this.active = { r: Math.max(0, this.rowCount - 1), c: lastC };
        return this.schedule();
      }
      return; // copy, cut and paste arrive as clipboard events
    }
    if (e.key.length === 1 && !e.altKey) {
      e.preventDefault();
      this.startEdit(e.key);
    }
  }

  private history(e: KeyboardEvent, which: 'undo' | 'redo'): void {
    e.preventDefault();
    const label = which === 'undo' ? this.model.undo() : this.model.redo();
    this.hooks.say(label ? `${which === 'undo' ? 'Undid' : 'Redid'}: ${label}` : `Nothing to ${which}`);
    this.clampActive();
  }

  /** Writes cells given in display coordinates; the empty last row becomes a real row. */
  private writeDisplay(changes: Array<[number, number, string]>, label: string): void {
    const creating = !this.view && changes.some(([r]) => r >= this.model.rows.length);
    if (creating) {
      const r0 = Math.min(...changes.map(([r]) => r));
      const r1 = Math.max(...changes.map(([r]) => r));
      const c0 = Math.min(...changes.map(([, c]) => c));
      const c1 = Math.max(...changes.map(([, c]) => c));
      const block = Array.from({ length: r1 - r0 + 1 }, (_, i) => Array.from({ length: c1 - c0 + 1 }, (_, j) => this.model.cell(r0 + i, c0 + j)));
      for (const [r, c, v] of changes) block[r - r0]![c - c0] = v;
      this.model.setBlock(r0, c0, block, label);
      return;
    }
    this.model.setCells(changes.map(([r, c, v]) => [this.modelRow(r), c, v] as const), label);
  }

  startEdit(initial?: string): void {
    const { r, c } = this.active;
    if (c >= this.model.columns.length) return;
    const m = this.modelRow(r);
    const input = h('input', {
      class: 'grid-editor',
      type: 'text',
      'aria-label': `Edit ${this.model.columns[c]} of row ${m + 1}`,
      spellcheck: 'false',
      autocomplete: 'off',
    });
    input.value = initial ?? this.model.cell(m, c);
    input.style.top = `${HEAD_H + r * ROW_H}px`;
    input.style.left = `${RNUM_W + c * COL_W}px`;
    input.style.width = `${COL_W}px`;
    this.editor = input;
    let done = false;
    const finish = (commit: boolean, next?: Pos) => {
      if (done) return;
      done = true;
      const value = input.value;
      this.editor = null;
      input.remove();
      if (commit && value !== this.model.cell(m, c)) this.writeDisplay([[r, c, value]], 'edit cell');
      if (next) this.moveTo(next);
      this.scroller.focus({ preventScroll: true });
      this.schedule();
    };
    input.addEventListener('keydown', (e) => {
      e.stopPropagation();
      if (e.key === 'Enter') {
        e.preventDefault();
        finish(true, { r: e.shiftKey ? r - 1 : r + 1, c });
      } else if (e.key === 'Tab') {
        e.preventDefault();
        finish(true, { r, c: e.shiftKey ? c - 1 : c + 1 });
      } else if (e.key === 'Escape') {
        e.preventDefault();
        finish(false);
      }
    });
    input.addEventListener('blur', () => finish(true));
    this.inner.append(input);
    input.focus({ preventScroll: true });
    // F2, Enter or a double click edits the text in place (caret at its end), as spreadsheets do;
    // a typed character has already replaced it.
    input.setSelectionRange(input.value.length, input.value.length);
  }

  private clearSelection(): void {
    const { r0, r1, c0, c1 } = this.selection();
    const changes: Array<[number, number, string]> = [];
    for (let r = r0; r <= r1; r++) {
      const m = this.modelRow(r);
      if (m < 0 || m >= this.model.rows.length) continue;
      for (let c = c0; c <= c1; c++) if (this.model.cell(m, c) !== '') changes.push([r, c, '']);
    }
    if (changes.length > 0) this.writeDisplay(changes, 'clear');
  }

  fillDown(): void {
    const { r0, r1, c0, c1 } = this.selection();
    if (r1 <= r0) return this.hooks.say('Fill down: select the cell to copy and the cells below it first (Shift+Down)', 'bad');
    const top = this.modelRow(r0);
    const changes: Array<[number, number, string]> = [];
    for (let r = r0 + 1; r <= r1; r++) {
      if (this.modelRow(r) >= this.model.rows.length && this.view) continue;
      for (let c = c0; c <= c1; c++) changes.push([r, c, this.model.cell(top, c)]);
    }
    this.writeDisplay(changes, 'fill down');
    this.hooks.say(`Filled ${r1 - r0} row${r1 - r0 === 1 ? '' : 's'} down`);
  }

  private onCopy(e: ClipboardEvent, cut: boolean): void {
    if (this.editor) return;
    e.preventDefault();
    const { r0, r1, c0, c1 } = this.selection();
    const block: string[][] = [];
    for (let r = r0; r <= r1; r++) {
      const m = this.modelRow(r);
      if (m >= this.model.rows.length) continue;
      block.push(Array.from({ length: c1 - c0 + 1 }, (_, j) => this.model.cell(m, c0 + j)));
    }
    e.clipboardData?.setData('text/plain', formatTsv(block));
    if (cut) this.clearSelection();
    this.hooks.say(`${cut ? 'Cut' : 'Copied'} ${block.length} x ${c1 - c0 + 1} cells`);
  }

  private onPaste(e: ClipboardEvent): void {
    if (this.editor) return;
    e.preventDefault();
    const text = e.clipboardData?.getData('text/plain') ?? '';
    this.pasteText(text);
  }

  /** Pastes a tab-separated block at the active cell (the same path as Ctrl+V). */
  pasteText(text: string): void {
    let block = parseTsv(text);
    if (block.length === 0) return this.hooks.say('Nothing to paste');
    if (this.view) return this.hooks.say('Clear the filter before pasting: pasted rows land in consecutive rows', 'bad');
    const width = Math.max(...block.map((r) => r.length));
    // Into an empty table, a first line naming id, lat and lon is the header row.
    const head = block[0]!.map((x) => x.trim().toLowerCase());
    if (this.model.rows.length === 0 && ['id', 'lat', 'lon'].every((n) => head.includes(n))) {
      const columns = block[0]!.map((x) => x.trim());
      block = block.slice(1);
      this.model.replace(`paste ${block.length} rows with header`, columns, block);
      this.moveTo({ r: 0, c: 0 });
      return this.hooks.say(`Pasted ${block.length} rows and the header row (${columns.join(', ')})`, 'good');
    }
    const { r, c } = this.active;
    this.model.setBlock(r, c, block, `paste ${block.length} x ${width}`);
    this.anchor = { r, c };
    this.active = { r: r + block.length - 1, c: c + width - 1 };
    this.clampActive();
    this.schedule();
    this.hooks.say(`Pasted ${block.length} row${block.length === 1 ? '' : 's'} x ${width} column${width === 1 ? '' : 's'}`, 'good');
  }

  private cellAt(target: EventTarget | null): Pos | null {
    const el = (target as HTMLElement | null)?.closest?.('.grid-cell') as HTMLElement | null;
    if (!el) return null;
    return { r: Number(el.dataset.r), c: Number(el.dataset.c) };
  }

  private onMouseDown(e: MouseEvent): void {
    const header = (e.target as HTMLElement).closest?.('.grid-hcell') as HTMLElement | null;
    if (header) {
      e.preventDefault();
      this.sortColumn(Number(header.dataset.col));
      return;
    }
    const pos = this.cellAt(e.target);
    if (!pos) return;
    e.preventDefault();
    this.scroller.focus({ preventScroll: true });
    this.moveTo(pos, e.shiftKey);
    this.dragging = true;
    const onMove = (ev: MouseEvent) => {
      if (!this.dragging) return window.removeEventListener('mousemove', onMove);
      const over = this.cellAt(document.elementFromPoint(ev.clientX, ev.clientY));
      if (over && (over.r !== this.active.r || over.c !== this.active.c)) {
        this.active = over;
        this.schedule();
      }
    };
    window.addEventListener('mousemove', onMove);
  }

  /** Sorts by a column: ascending first, descending on the second click. */
  sortColumn(col: number): void {
    const direction = this.sortState?.col === col && this.sortState.direction === 'ascending' ? 'descending' : 'ascending';
    this.model.sortBy(col, direction);
    this.sortState = { col, direction };
    this.hooks.say(`Sorted by ${this.model.columns[col]} (${direction}); Ctrl+Z undoes it`);
  }
}
