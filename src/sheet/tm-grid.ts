/**
 * `<tm-grid>`: the worksheet grid. Rows are moments, columns are measures named by label and
 * unit. Keyboard first, after the WAI-ARIA data-grid pattern (the key table is the pure
 * function in ./grid-keys.ts; this element applies its answers with a roving tabindex).
 *
 * Row order: oldest at the top, newest at the bottom, and the grid scrolls itself to the newest
 * row when it first shows and whenever a row is added at the end, so the newest row is where the
 * eye lands. Chosen over newest-on-top because (1) it reads like the paper chart and every
 * export (note timeline, CSV) in time order, (2) a block pasted from a spreadsheet is in time
 * order too and fills downwards without reversing, (3) "Enter stores and moves down" then moves
 * forward in time, and (4) the "Add row" controls sit directly under the newest row.
 *
 * Long worksheets (more than VIRTUALISE_ABOVE rows) are virtualised: only the rows in and near
 * the scroller's viewport are in the DOM, plus the active row wherever it is (so the roving tab
 * stop always exists), with spacer rows standing in for the rest. The table keeps its grid roles:
 * `aria-rowcount` counts every row and each rendered row keeps its `aria-rowindex`, so screen
 * readers announce positions in the whole worksheet; keys move through every row because moving
 * the active cell renders its row first and focusing it scrolls it into view.
 *
 * Data goes down as properties; intent comes up as events (bubbling, composed). The element
 * never changes the worksheet itself: the owner applies each event and passes the new worksheet
 * back down.
 *
 * @fires tm-edit {CustomEvent<TmEditDetail>} one cell typed, cleared or undone by the grid:
 *   `{ edits: [{ rowId, key, cell, input }] }` (`cell: null` clears; `input` is what was typed).
 * @fires tm-paste {CustomEvent<TmPasteDetail>} a confirmed paste, applied as one change and
 *   undone as one step: `{ newRows: [{ time, offset, cells }], edits: [{ rowId, key, cell, input }] }`.
 *   Rows in `newRows` do not exist yet; `edits` touch rows that do. Refused values are never sent.
 * @fires tm-add-row {CustomEvent<TmAddRowDetail>} `{ time, offset }` for "Add row now" (the
 *   `now` property, floored to the minute) or a typed time.
 * @fires tm-row-time {CustomEvent<TmRowTimeDetail>} `{ rowId, time, offset }`: a row's time edited in its row header.
 * @fires tm-delete-row {CustomEvent<TmDeleteRowDetail>} `{ rowId }`, only after the person confirmed.
 * @fires tm-undo {CustomEvent<null>} Ctrl+Z (Command+Z) outside a text field.
 * @fires tm-redo {CustomEvent<null>} Ctrl+Shift+Z or Ctrl+Y outside a text field.
 * @fires tm-columns {CustomEvent<TmColumnsDetail>} `{ columns }` from the column chooser.
 */
import { LitElement, html, nothing, type PropertyValues, type TemplateResult } from 'lit';
import { customElement, property, query, state } from 'lit/decorators.js';
import { classMap } from 'lit/directives/class-map.js';
import { guard } from 'lit/directives/guard.js';
import { repeat } from 'lit/directives/repeat.js';
import { MINUTE_MS, toInstant } from './clock.js';
import { DERIVED_DEFS, type DerivedRow, type DerivedValues } from './derived.js';
import { gridKey, type CellPos, type GridKeyResult, type GridMode, type GridSize } from './grid-keys.js';
import { MEASURE_KEYS, MEASURES, type UnitDef } from './measures.js';
import type { Cell, Row, Worksheet } from './model.js';
import { formatCell, formatNumber } from './parse.js';
import { columnLabel, gridColumns, parseEntered, planPaste, sameCell, type GridColumn, type PasteDetail, type PastePlan } from './paste.js';
import { formatClock, formatDateTime, formatOffset, parseTimeInput } from './time.js';
import { gridStyles } from './tm-grid-styles.js';
import './tm-column-chooser.js';
import type { ColumnOption } from './tm-column-chooser.js';
import type { CellInputEdit } from './worksheet.js';
import { sortRows } from './worksheet.js';

/** Save state of a cell, keyed `${rowId}:${key}` in {@link TmGrid.pending}. */
export type PendingState = 'saving' | 'failed';

export interface TmEditDetail {
  edits: CellInputEdit[];
}
export type TmPasteDetail = PasteDetail;
export interface TmAddRowDetail {
  /** UTC instant, ISO. */
  time: string;
  /** Offset in minutes the time was entered with. */
  offset: number;
}
export interface TmRowTimeDetail {
  rowId: string;
  time: string;
  offset: number;
}
export interface TmDeleteRowDetail {
  rowId: string;
}

/** Column key of the row-header (time) column; measure keys never contain "@". */
const TIME_COL = '@time';
/** How long a kept-but-alarming value's warning stays next to its cell. */
const NOTE_MS = 6000;
/** Most preview lines listed per section; the counts always cover everything. */
const PREVIEW_LIMIT = 200;
/** Worksheets with more rows than this render only the rows near the viewport. */
export const VIRTUALISE_ABOVE = 60;
/** Rows rendered beyond each edge of the viewport when virtualised. */
const OVERSCAN = 10;
/** Row height assumed until one is measured (th/td are 3rem high). */
const ROW_PX_GUESS = 48;
/** Viewport height assumed before the scroller has been laid out. */
const VIEW_PX_GUESS = 640;

/** What the table body shows: rows, and spacers standing in for rows not rendered. */
type BodyItem = { kind: 'row'; row: Row; index: number } | { kind: 'gap'; key: string; rows: number };

type CellNote = { rowId: string; key: string; text: string; kind: 'warn' | 'error' };

@customElement('tm-grid')
export class TmGrid extends LitElement {
  static override styles = gridStyles;

  /** The worksheet to show. Rows are shown in time order. */
  @property({ attribute: false }) worksheet: Worksheet | undefined;

  /**
   * Calculated values per row (built-in measures, scores, the worksheet's own columns), from
   * `deriveWorksheet` and friends. A calculated column shows when its key is in
   * `worksheet.columns` and is a built-in calculated key or one of `worksheet.derivedColumns`.
   */
  @property({ attribute: false }) derived: readonly DerivedRow[] = [];

  /** Rows to pick out (for example the rows that met a goal selected in the goal panel). */
  @property({ attribute: false }) highlightRows: ReadonlySet<string> = new Set();

  /** Cells not yet saved or that failed to save, keyed `${rowId}:${key}`. */
  @property({ attribute: false }) pending: ReadonlyMap<string, PendingState> = new Map();

  /** Units to display instead of the stored (canonical) ones, by measure key. Bare numbers typed in such a column are read in this unit. */
  @property({ attribute: false }) displayUnits: ReadonlyMap<string, UnitDef> = new Map();

  /** Now, in ms since the epoch, from the app's injected clock. "Add row now" is off until it is set. */
  @property({ attribute: false }) now: number | undefined;

  @state() private activeRowId: string | null = null;
  @state() private activeColKey: string = TIME_COL;
  @state() private mode: GridMode = 'navigate';
  @state() private editError: string | null = null;
  @state() private note: CellNote | null = null;
  @state() private status = '';
  @state() private statusWarn = false;
  @state() private addError: string | null = null;
  @state() private plan: PastePlan | null = null;
  @state() private deleteRowId: string | null = null;
  @state() private chooserOpen = false;

  @query('.scroller') private scroller!: HTMLElement;
  @query('input.editor') private editor!: HTMLInputElement | null;
  @query('dialog.paste') private pasteDialog!: HTMLDialogElement;
  @query('dialog.delete') private deleteDialog!: HTMLDialogElement;
  @query('#add-time') private addTimeInput!: HTMLInputElement;

  /** Rows in display (time) order and visible columns, recomputed when the worksheet changes. */
  private rows: Row[] = [];
  private cols: GridColumn[] = [];
  private derivedByRow = new Map<string, DerivedValues>();
  /** Signature of each row's pending cells, so unchanged rows skip re-rendering. */
  private pendingByRow = new Map<string, string>();
  /** The inputs `cols` was computed from (a new worksheet version often keeps them). */
  private colsFrom: [readonly string[], readonly unknown[]] | undefined;
  /** Last known position, to land nearby when the active row or column disappears. */
  private lastPos: CellPos = { row: 0, col: 1 };
  private knownRowIds = new Set<string>();
  private shownWorksheetId: string | undefined;
  /** Text the editor opened with, and the cell's own text (an unchanged commit stores nothing). */
  private editStart = '';
  private editOriginal = '';
  /** After "Add row", move to the new row once the owner passes it down. */
  private awaitingNewRow = false;
  private focusAfterUpdate = false;
  private scrollToEnd = true;
  /** Whether the active cell was active before this pointer press (a second press edits). */
  private pressOnActive = false;
  private noteTimer: ReturnType<typeof setTimeout> | undefined;
  /** The message bubble shown after the last update, to scroll a new one into view once. */
  private shownBubble: string | null = null;
  /** Virtualisation: rendered window [first, last) of row positions, and the measured row height. */
  private windowFirst = 0;
  private windowLast = 0;
  private rowPx = ROW_PX_GUESS;
  /**
   * The scroller's geometry as last read (on scroll and after each render), so working out the
   * window never forces a layout in the middle of rendering.
   */
  private view = { top: 0, height: 0, head: 0 };
  /** The window and row count the row height was last measured for. */
  private measuredFor = '';
  private layoutPending = false;
  /** A row to bring into view once it is rendered (a highlighted row far from the viewport). */
  private revealRowId: string | null = null;
  private scrollerEl: HTMLElement | null = null;
  private resizeObserver: ResizeObserver | undefined;
  private readonly onScroll = (): void => {
    if (!this.virtual()) return;
    this.readView();
    const [first, last] = this.windowAround();
    if (first !== this.windowFirst || last !== this.windowLast) this.requestUpdate();
  };

  override connectedCallback(): void {
    super.connectedCallback();
    // Moved in the page: listen to the scroller again (updated() attaches the listeners).
    if (this.hasUpdated) this.requestUpdate();
  }

  override disconnectedCallback(): void {
    super.disconnectedCallback();
    if (this.noteTimer !== undefined) clearTimeout(this.noteTimer);
    this.scrollerEl?.removeEventListener('scroll', this.onScroll);
    this.resizeObserver?.disconnect();
    this.resizeObserver = undefined;
    this.scrollerEl = null;
  }

  /** Puts keyboard focus on the active cell (the grid's one tab stop). */
  async focusActiveCell(): Promise<void> {
    await this.updateComplete;
    this.focusActive();
  }

  // --- Virtualisation ----------------------------------------------------------------------------

  /** Whether only the rows near the viewport are rendered. */
  private virtual(): boolean {
    return this.rows.length > VIRTUALISE_ABOVE;
  }

  /** Reads the scroller's geometry (call only where layout is already clean or needed anyway). */
  private readView(): void {
    const s = this.scrollerEl;
    if (!s) return;
    this.view = { top: s.scrollTop, height: s.clientHeight, head: (s.querySelector('thead') as HTMLElement | null)?.offsetHeight ?? 0 };
  }

  /** The window of rows to render for the scroller's last known position: [first, last). */
  private windowAround(): [number, number] {
    const n = this.rows.length;
    if (!this.virtual()) return [0, n];
    const view = this.view.height > 0 ? this.view.height : VIEW_PX_GUESS;
    const perView = Math.ceil(view / this.rowPx) + 1;
    if (!this.scrollerEl || this.scrollToEnd) {
      // Before layout, and when about to scroll to the newest row: the last rows.
      return [Math.max(0, n - perView - OVERSCAN), n];
    }
    const top = Math.max(0, this.view.top - this.view.head);
    const first = Math.max(0, Math.min(n - 1, Math.floor(top / this.rowPx)) - OVERSCAN);
    const last = Math.min(n, Math.floor(top / this.rowPx) + perView + OVERSCAN);
    return [first, Math.max(first + 1, last)];
  }

  /**
   * The table body: the window's rows, the active row and a row waiting to be revealed wherever
   * they are, and one spacer for each run of rows in between that is not rendered.
   */
  private bodyItems(): BodyItem[] {
    const n = this.rows.length;
    const [first, last] = this.windowAround();
    this.windowFirst = first;
    this.windowLast = last;
    const out: BodyItem[] = [];
    if (!this.virtual()) {
      this.rows.forEach((row, index) => out.push({ kind: 'row', row, index }));
      return out;
    }
    const extra = new Set<number>();
    for (const id of [this.activeRowId, this.revealRowId, this.deleteRowId]) {
      if (!id) continue;
      const i = this.rows.findIndex((r) => r.id === id);
      if (i >= 0 && (i < first || i >= last)) extra.add(i);
    }
    const shown = [...extra, ...Array.from({ length: last - first }, (_, k) => first + k)].sort((a, b) => a - b);
    let next = 0;
    let gaps = 0;
    for (const i of shown) {
      if (i > next) out.push({ kind: 'gap', key: `gap-${gaps++}`, rows: i - next });
      out.push({ kind: 'row', row: this.rows[i]!, index: i });
      next = i + 1;
    }
    if (next < n) out.push({ kind: 'gap', key: `gap-${gaps}`, rows: n - next });
    return out;
  }

  /** Sizes the spacer rows (through the CSSOM: the CSP allows no style attributes); writes only. */
  private sizeGaps(): void {
    for (const gap of this.renderRoot.querySelectorAll<HTMLElement>('tbody tr.gap')) {
      const height = `${Number(gap.dataset['rows'] ?? 0) * this.rowPx}px`;
      if (gap.style.height !== height) gap.style.height = height;
    }
  }

  /**
   * Work that reads layout (scrolling to the newest row, measuring the row height, the scroller's
   * size) runs once per frame in requestAnimationFrame, after every element of the page has
   * rendered: done in `updated` it would force a layout of a page still being rendered, and
   * another one for the frame.
   */
  private scheduleLayoutWork(): void {
    if (this.layoutPending) return;
    this.layoutPending = true;
    requestAnimationFrame(() => {
      this.layoutPending = false;
      this.layoutWork();
    });
  }

  private layoutWork(): void {
    const s = this.scrollerEl;
    if (!s || !this.isConnected) return;
    if (this.scrollToEnd && this.rows.length > 0) {
      this.scrollToEnd = false;
      s.scrollTop = s.scrollHeight;
    }
    if (!this.virtual()) return;
    const key = `${this.windowFirst}:${this.windowLast}:${this.rows.length}`;
    if (key !== this.measuredFor) {
      this.measuredFor = key;
      const heights = [...this.renderRoot.querySelectorAll<HTMLElement>('tbody tr[role="row"]')]
        .slice(0, 24)
        .map((r) => r.offsetHeight)
        .filter((h) => h > 0)
        .sort((a, b) => a - b);
      const median = heights[Math.floor(heights.length / 2)];
      if (median !== undefined && Math.abs(median - this.rowPx) >= 0.5) {
        this.rowPx = median;
        this.sizeGaps();
      }
    }
    this.readView();
    const [first, last] = this.windowAround();
    if (first !== this.windowFirst || last !== this.windowLast) this.requestUpdate();
  }

  /** Brings a row into view, rendering it first when the worksheet is virtualised. */
  private revealRow(rowId: string): void {
    const el = this.renderRoot.querySelector(`tbody tr[role="row"][data-row-id="${CSS.escape(rowId)}"]`);
    if (el) {
      this.revealRowId = null;
      el.scrollIntoView({ block: 'nearest' });
      return;
    }
    if (this.revealRowId !== rowId) {
      this.revealRowId = rowId;
      this.requestUpdate();
    }
  }

  // --- Derived view state ----------------------------------------------------------------------

  protected override willUpdate(changed: PropertyValues<this>): void {
    if (changed.has('worksheet')) this.takeWorksheet();
    if (changed.has('derived')) this.derivedByRow = new Map(this.derived.map((d) => [d.rowId, d.values]));
    if (changed.has('pending')) {
      const byRow = new Map<string, string>();
      for (const [slot, state] of this.pending) {
        const rowId = slot.slice(0, slot.lastIndexOf(':'));
        byRow.set(rowId, `${byRow.get(rowId) ?? ''}${slot}=${state};`);
      }
      this.pendingByRow = byRow;
    }
  }

  private takeWorksheet(): void {
    const ws = this.worksheet;
    if (ws?.id !== this.shownWorksheetId) {
      // Another worksheet: start afresh on its newest row.
      this.shownWorksheetId = ws?.id;
      this.knownRowIds = new Set();
      this.activeRowId = null;
      this.mode = 'navigate';
      this.plan = null;
      this.deleteRowId = null;
      this.scrollToEnd = true;
    }
    // Commands keep rows sorted; sort only what is not (an O(n) check instead of a sort per edit).
    this.rows = !ws ? [] : isSorted(ws.rows) ? ws.rows : sortRows(ws.rows);
    if (!ws) this.cols = [];
    else if (!this.colsFrom || this.colsFrom[0] !== ws.columns || this.colsFrom[1] !== ws.derivedColumns) {
      this.cols = gridColumns(ws);
      this.colsFrom = [ws.columns, ws.derivedColumns];
    }
    const added = this.rows.filter((r) => !this.knownRowIds.has(r.id));
    const hadRows = this.knownRowIds.size > 0;
    this.knownRowIds = new Set(this.rows.map((r) => r.id));
    if (this.awaitingNewRow && added.length > 0) {
      // Move to the row the person just added (the latest of the new ones by time).
      this.awaitingNewRow = false;
      this.activeRowId = added[added.length - 1]!.id;
      this.activeColKey = this.cols[0]?.key ?? TIME_COL;
      this.focusAfterUpdate = true;
    } else if (hadRows && added.some((r) => r === this.rows[this.rows.length - 1])) {
      this.scrollToEnd = true;
    }
    this.keepActiveInside();
  }

  /** Keeps the active cell on an existing row and column (after deletes, column changes). */
  private keepActiveInside(): void {
    if (this.rows.length === 0) {
      this.activeRowId = null;
      this.mode = 'navigate';
      return;
    }
    if (!this.activeRowId) {
      // First rows: start on the newest row, first measure.
      this.activeRowId = this.rows[this.rows.length - 1]!.id;
      this.activeColKey = this.cols[0]?.key ?? TIME_COL;
    } else if (!this.rows.some((r) => r.id === this.activeRowId)) {
      this.activeRowId = this.rows[Math.min(this.lastPos.row, this.rows.length - 1)]!.id;
      this.mode = 'navigate';
    }
    if (this.activeColKey !== TIME_COL && !this.cols.some((c) => c.key === this.activeColKey)) {
      const col = Math.min(this.lastPos.col, this.cols.length);
      this.activeColKey = col === 0 ? TIME_COL : this.cols[col - 1]!.key;
      this.mode = 'navigate';
    }
  }

  private activePos(): CellPos | null {
    if (!this.activeRowId) return null;
    const row = this.rows.findIndex((r) => r.id === this.activeRowId);
    if (row < 0) return null;
    const col = this.activeColKey === TIME_COL ? 0 : this.cols.findIndex((c) => c.key === this.activeColKey) + 1;
    return { row, col: Math.max(col, 0) };
  }

  private colAt(col: number): GridColumn | undefined {
    return col === 0 ? undefined : this.cols[col - 1];
  }

  private size(): GridSize {
    return { rows: this.rows.length, cols: this.cols.length + 1, pageRows: this.pageRows() };
  }

  /** Rows in one visible page of the scroller, less one so the old edge row stays in view (APG). */
  private pageRows(): number {
    const scroller = this.scroller;
    const rowEl = scroller?.querySelector<HTMLElement>('tbody tr[role="row"]');
    const headEl = scroller?.querySelector('thead') as HTMLElement | null;
    if (!scroller || !rowEl || rowEl.offsetHeight === 0) return 10;
    return Math.max(1, Math.floor((scroller.clientHeight - (headEl?.offsetHeight ?? 0)) / rowEl.offsetHeight) - 1);
  }

  private isEditable(pos: CellPos | null): boolean {
    if (!pos) return false;
    const col = this.colAt(pos.col);
    return !col || col.kind === 'measure';
  }

  private setActive(pos: CellPos): void {
    const row = this.rows[pos.row];
    if (!row) return;
    this.activeRowId = row.id;
    this.activeColKey = pos.col === 0 ? TIME_COL : (this.colAt(pos.col)?.key ?? TIME_COL);
    this.lastPos = pos;
  }

  protected override updated(changed: PropertyValues<this>): void {
    const pos = this.activePos();
    if (pos) this.lastPos = pos;
    const scroller = this.scroller ?? null;
    if (scroller !== this.scrollerEl) {
      this.scrollerEl?.removeEventListener('scroll', this.onScroll);
      this.resizeObserver?.disconnect();
      scroller?.addEventListener('scroll', this.onScroll, { passive: true });
      if (scroller && typeof ResizeObserver === 'function') {
        // A taller viewport (window resized) needs more rows rendered.
        this.resizeObserver = new ResizeObserver(() => this.onScroll());
        this.resizeObserver.observe(scroller);
      }
      this.scrollerEl = scroller;
    }
    this.sizeGaps();
    if (this.virtual() || (this.scrollToEnd && this.rows.length > 0)) this.scheduleLayoutWork();
    if (this.focusAfterUpdate) {
      this.focusAfterUpdate = false;
      this.focusActive();
    }
    const bubble = this.editError ?? (this.note ? `${this.note.rowId}:${this.note.key}:${this.note.text}` : null);
    if (bubble !== null && bubble !== this.shownBubble) {
      // Bring a new message bubble fully into view (the scroller makes room for it under the last row).
      this.renderRoot.querySelector('.bubble')?.scrollIntoView({ block: 'nearest', inline: 'nearest' });
    }
    this.shownBubble = bubble;
    if (changed.has('highlightRows') && this.highlightRows.size > 0) {
      const first = this.rows.find((r) => this.highlightRows.has(r.id));
      if (first) this.revealRow(first.id);
    } else if (this.revealRowId) {
      this.revealRow(this.revealRowId);
    }
  }

  /** The cell that holds the roving tabindex. */
  private activeCellEl(): HTMLElement | null {
    return this.renderRoot.querySelector<HTMLElement>('table [data-col][tabindex="0"]');
  }

  private focusActive(): void {
    this.activeCellEl()?.focus();
  }

  private async moveFocusTo(pos: CellPos | null): Promise<void> {
    if (pos) this.setActive(pos);
    await this.updateComplete;
    this.focusActive();
  }

  // --- Events up ---------------------------------------------------------------------------------

  private emit<K extends keyof TmGridEventDetails>(name: K, detail: TmGridEventDetails[K]): void {
    this.dispatchEvent(new CustomEvent(name, { detail, bubbles: true, composed: true }));
  }

  private say(text: string, warn = false): void {
    this.status = text;
    this.statusWarn = warn;
  }

  private showNote(note: CellNote): void {
    this.note = note;
    if (this.noteTimer !== undefined) clearTimeout(this.noteTimer);
    this.noteTimer = setTimeout(() => {
      this.note = null;
      this.noteTimer = undefined;
    }, NOTE_MS);
  }

  // --- Keyboard ------------------------------------------------------------------------------------

  /** Keys anywhere in the element: Alt+N adds a row; inside the table the grid keymap applies. */
  private readonly onKeydown = (e: KeyboardEvent): void => {
    if (e.defaultPrevented || e.isComposing) return;
    // Dialogs keep their own keys (Escape closes them, Tab stays inside).
    if (e.composedPath().some((n) => n instanceof HTMLDialogElement)) return;
    const inTable = e.composedPath().some((n) => n instanceof HTMLTableElement && n.getAttribute('role') === 'grid');
    const pos = this.activePos();
    const key = { key: e.key, code: e.code, ctrl: e.ctrlKey, meta: e.metaKey, shift: e.shiftKey, alt: e.altKey };
    if (!inTable) {
      // Outside the table only the Alt+N shortcut is the grid's; text fields keep their own keys.
      const r = gridKey({ size: this.size(), active: null, mode: 'navigate', activeEditable: false }, key);
      if (r.command.kind === 'add-row-now') {
        e.preventDefault();
        this.addRowNow();
      }
      return;
    }
    const result = gridKey({ size: this.size(), active: pos, mode: this.mode, activeEditable: this.isEditable(pos) }, key);
    if (!result.handled) return;
    e.preventDefault();
    void this.applyKey(result);
  };

  private async applyKey(r: GridKeyResult): Promise<void> {
    switch (r.command.kind) {
      case 'none':
        return this.moveFocusTo(r.active);
      case 'begin-edit':
        return this.beginEdit(r.command.initial);
      case 'commit':
        return this.commitEdit(r.active, true);
      case 'cancel':
        return this.cancelEdit();
      case 'clear':
        return this.clearActive();
      case 'read-only':
        return this.sayReadOnly();
      case 'delete-row':
        return this.askDelete(this.activeRowId);
      case 'undo':
        this.emit('tm-undo', null);
        return;
      case 'redo':
        this.emit('tm-redo', null);
        return;
      case 'add-row-now':
        return this.addRowNow();
    }
  }

  private sayReadOnly(): void {
    const col = this.colAt(this.activePos()?.col ?? 0);
    if (!col) return;
    const formula = col.kind === 'user' ? col.def.expression : col.kind === 'derived' ? col.def.formula : '';
    this.say(`${columnLabel(col)} is calculated (${formula}); it cannot be typed over.`);
  }

  // --- Editing -------------------------------------------------------------------------------------

  private displayUnit(key: string): UnitDef | undefined {
    return this.displayUnits.get(key);
  }

  /** The text an editor opens with for a stored cell. */
  private editTextOf(key: string, cell: Cell | undefined): string {
    if (!cell) return '';
    if (cell.value === true) return cell.text ?? 'yes';
    if (typeof cell.value === 'string') return cell.value;
    return formatNumber(MEASURES.get(key)!, cell.value, this.displayUnit(key));
  }

  private async beginEdit(initial?: string): Promise<void> {
    const pos = this.activePos();
    const row = pos ? this.rows[pos.row] : undefined;
    if (!pos || !row || !this.worksheet) return;
    const col = this.colAt(pos.col);
    this.editOriginal = col ? this.editTextOf(col.key, row.cells[col.key]) : formatClock(row.time, this.worksheet.displayOffset);
    this.editStart = initial ?? this.editOriginal;
    this.editError = null;
    this.note = null;
    this.mode = 'edit';
    await this.updateComplete;
    const input = this.editor;
    if (!input) return;
    input.focus();
    input.setSelectionRange(input.value.length, input.value.length);
  }

  private async cancelEdit(): Promise<void> {
    this.mode = 'navigate';
    this.editError = null;
    await this.moveFocusTo(null);
  }

  /**
   * Parses the editor's text and, when it is accepted, emits it and goes to `next`. A refused
   * entry keeps the editor open with the message at the cell and emits nothing.
   * @param next where to go after a successful commit (from the keymap)
   * @param refocus false when the editor lost focus to something else (then a refusal closes the
   *   editor, and the message stays briefly at the cell and in the status line)
   */
  private async commitEdit(next: CellPos | null, refocus: boolean): Promise<void> {
    const ws = this.worksheet;
    const pos = this.activePos();
    const row = pos ? this.rows[pos.row] : undefined;
    const input = this.editor;
    if (!ws || !pos || !row || !input || this.mode !== 'edit') return;
    const text = input.value;
    const col = this.colAt(pos.col);
    const refusal = col ? this.commitCell(row, col, text) : this.commitRowTime(ws, row, text);
    if (refusal !== undefined) {
      if (refocus) {
        this.editError = refusal;
        await this.updateComplete;
        this.editor?.focus();
        return;
      }
      this.mode = 'navigate';
      this.editError = null;
      this.showNote({ rowId: row.id, key: col?.key ?? TIME_COL, text: `Not stored: ${refusal}`, kind: 'error' });
      this.say(`Not stored: ${refusal}`, true);
      return;
    }
    this.mode = 'navigate';
    this.editError = null;
    if (refocus) await this.moveFocusTo(next);
    else if (next) this.setActive(next);
  }

  /** Returns the refusal message, or undefined when the entry was accepted (or unchanged). */
  private commitCell(row: Row, col: GridColumn, text: string): string | undefined {
    if (col.kind !== 'measure') return `${columnLabel(col)} is calculated; it cannot be typed over.`;
    if (text.trim() === this.editOriginal.trim()) return undefined;
    const parsed = parseEntered(col.key, text, this.displayUnit(col.key));
    if (!parsed.ok) return parsed.error;
    const old = row.cells[col.key] ?? null;
    if (sameCell(old, parsed.cell)) return undefined;
    this.emit('tm-edit', { edits: [{ rowId: row.id, key: col.key, cell: parsed.cell, input: text.trim() }] });
    if (parsed.warning) {
      this.showNote({ rowId: row.id, key: col.key, text: parsed.warning, kind: 'warn' });
      this.say(parsed.warning, true);
    } else {
      this.say('');
    }
    return undefined;
  }

  private commitRowTime(ws: Worksheet, row: Row, text: string): string | undefined {
    if (text.trim() === this.editOriginal.trim()) return undefined;
    const parsed = parseTimeInput(text, ws.displayOffset, Date.parse(row.time));
    if (!parsed.ok) return parsed.error;
    if (parsed.time === row.time && parsed.offset === row.offset) return undefined;
    this.emit('tm-row-time', { rowId: row.id, time: parsed.time, offset: parsed.offset });
    this.say(`Row moved to ${formatDateTime(parsed.time, ws.displayOffset)}.`);
    return undefined;
  }

  private readonly onEditorFocusOut = (e: FocusEvent): void => {
    if (this.mode !== 'edit') return;
    const cell = (e.target as HTMLElement).closest('[data-col]');
    if (e.relatedTarget instanceof Node && cell?.contains(e.relatedTarget)) return;
    void this.commitEdit(null, false);
  };

  private clearActive(): void {
    const pos = this.activePos();
    const row = pos ? this.rows[pos.row] : undefined;
    const col = pos ? this.colAt(pos.col) : undefined;
    if (!row || !col || col.kind !== 'measure' || !this.worksheet) return;
    if (!row.cells[col.key]) {
      this.say(`${columnLabel(col)} at ${formatClock(row.time, this.worksheet.displayOffset)} is already empty.`);
      return;
    }
    this.emit('tm-edit', { edits: [{ rowId: row.id, key: col.key, cell: null, input: '' }] });
    this.say(`Cleared ${columnLabel(col)} at ${formatClock(row.time, this.worksheet.displayOffset)}. Ctrl+Z brings it back.`);
  }

  // --- Pointer -------------------------------------------------------------------------------------

  private cellOf(e: Event): HTMLElement | null {
    return (e.target as HTMLElement).closest<HTMLElement>('[data-col]');
  }

  private posOfCell(el: HTMLElement): CellPos | null {
    const row = this.rows.findIndex((r) => r.id === el.dataset['row']);
    const key = el.dataset['col'];
    const col = key === TIME_COL ? 0 : this.cols.findIndex((c) => c.key === key) + 1;
    return row < 0 || col < 0 ? null : { row, col };
  }

  private readonly onPointerDown = (e: PointerEvent): void => {
    const el = this.cellOf(e);
    this.pressOnActive = Boolean(el && this.mode === 'navigate' && el.getAttribute('tabindex') === '0');
  };

  private readonly onFocusIn = (e: FocusEvent): void => {
    const el = this.cellOf(e);
    if (!el || el.classList.contains('editing') || this.mode === 'edit') return;
    const pos = this.posOfCell(el);
    if (pos) this.setActive(pos);
  };

  private readonly onClick = (e: MouseEvent): void => {
    const el = this.cellOf(e);
    if (!el || this.mode === 'edit') return;
    const pos = this.posOfCell(el);
    if (!pos) return;
    // A second press on the active cell edits it: easy with gloves on a tablet.
    if (this.pressOnActive) {
      this.pressOnActive = false;
      if (this.isEditable(pos)) void this.beginEdit();
      else this.sayReadOnly();
      return;
    }
    void this.moveFocusTo(pos);
  };

  // --- Clipboard -----------------------------------------------------------------------------------

  private readonly onCopy = (e: ClipboardEvent): void => {
    if (this.mode === 'edit' || !e.clipboardData) return;
    const el = this.activeCellEl();
    if (!el) return;
    e.preventDefault();
    const value = el.querySelector('.v')?.textContent ?? '';
    e.clipboardData.setData('text/plain', value.trim());
  };

  private readonly onPaste = async (e: ClipboardEvent): Promise<void> => {
    if (this.mode === 'edit' || !this.worksheet) return;
    const text = e.clipboardData?.getData('text/plain') ?? '';
    e.preventDefault();
    const oneValue = text.replace(/(\r\n|\r|\n)$/, '');
    const pos = this.activePos();
    if (pos && !/[\t\r\n]/.test(oneValue)) {
      // One value: open the editor with it, so it is read exactly like typing.
      if (this.isEditable(pos)) await this.beginEdit(oneValue.trim());
      else this.sayReadOnly();
      return;
    }
    const anchorRow = this.rows[pos?.row ?? 0];
    const referenceMs = this.now ?? (anchorRow ? Date.parse(anchorRow.time) : Date.parse(this.worksheet.updatedAt));
    const result = planPaste(text, {
      worksheet: { ...this.worksheet, rows: this.rows },
      anchorRow: pos?.row ?? 0,
      // With no rows yet, a block can only create rows: read it as starting with a time.
      anchorCol: pos?.col ?? 0,
      referenceMs,
      displayUnits: this.displayUnits,
    });
    if (!result.ok) {
      this.say(result.error, true);
      return;
    }
    this.plan = result.plan;
    await this.updateComplete;
    if (!this.pasteDialog.open) this.pasteDialog.showModal();
  };

  private readonly confirmPaste = (): void => {
    const plan = this.plan;
    if (!plan) return;
    if (plan.accepted.length > 0) {
      this.emit('tm-paste', { newRows: plan.newRows, edits: plan.edits });
      if (plan.newRows.length > 0) this.scrollToEnd = true;
    }
    const stored = plan.accepted.length;
    const refused = plan.refused.length;
    this.say(`Pasted ${stored} ${stored === 1 ? 'value' : 'values'}${refused > 0 ? `; ${refused} refused, not stored` : ''}.`, refused > 0);
    this.pasteDialog.close();
  };

  private readonly onPasteDialogClose = (): void => {
    this.plan = null;
    void this.moveFocusTo(null);
  };

  // --- Rows ------------------------------------------------------------------------------------------

  private readonly addRowNow = (): void => {
    const ws = this.worksheet;
    if (!ws) return;
    if (this.now === undefined) {
      this.say('The clock is not ready yet; type the time instead.', true);
      return;
    }
    // Charted times are to the minute: "now" is floored so the row reads as the minute it shows.
    const time = toInstant(Math.floor(this.now / MINUTE_MS) * MINUTE_MS);
    this.awaitingNewRow = true;
    this.emit('tm-add-row', { time, offset: ws.displayOffset });
    this.say(`Row added at ${formatClock(time, ws.displayOffset)}.`);
  };

  private readonly onAddAt = (e: SubmitEvent): void => {
    e.preventDefault();
    const ws = this.worksheet;
    if (!ws) return;
    const last = this.rows[this.rows.length - 1];
    const reference = this.now ?? (last ? Date.parse(last.time) : undefined);
    const parsed = parseTimeInput(this.addTimeInput.value, ws.displayOffset, reference);
    if (!parsed.ok) {
      this.addError = parsed.error;
      return;
    }
    this.addError = null;
    this.addTimeInput.value = '';
    this.awaitingNewRow = true;
    this.emit('tm-add-row', { time: parsed.time, offset: parsed.offset });
    this.say(`Row added at ${formatDateTime(parsed.time, ws.displayOffset)}.`);
  };

  private async askDelete(rowId: string | null): Promise<void> {
    if (!rowId) return;
    this.deleteRowId = rowId;
    await this.updateComplete;
    if (!this.deleteDialog.open) this.deleteDialog.showModal();
  }

  private readonly confirmDelete = (): void => {
    const rowId = this.deleteRowId;
    if (rowId) this.emit('tm-delete-row', { rowId });
    this.deleteDialog.close();
  };

  private readonly onDeleteDialogClose = (): void => {
    this.deleteRowId = null;
    void this.moveFocusTo(null);
  };

  // --- Rendering ---------------------------------------------------------------------------------

  private columnOptions(): ColumnOption[] {
    const ws = this.worksheet;
    const out: ColumnOption[] = MEASURE_KEYS.map((key) => {
      const def = MEASURES.get(key)!;
      return { key, label: def.short, title: def.label, unit: this.displayUnit(key)?.label ?? def.unit?.label ?? '', calculated: false };
    });
    for (const d of DERIVED_DEFS) {
      if (!MEASURES.has(d.key)) out.push({ key: d.key, label: d.short, title: d.label, unit: d.unitLabel, calculated: true });
    }
    for (const d of ws?.derivedColumns ?? [])
      out.push({ key: d.key, label: d.label, title: d.expression, unit: d.unit ?? '', calculated: true });
    return out;
  }

  private unitOf(col: GridColumn): string {
    if (col.kind === 'measure') return this.displayUnit(col.key)?.label ?? col.def.unit?.label ?? '';
    if (col.kind === 'derived') return col.def.unitLabel;
    return col.def.unit ?? '';
  }

  private headerTitle(col: GridColumn): string {
    if (col.kind === 'measure') {
      const est = col.estimate ? ` When not charted, estimated: ${col.estimate.formula} (${col.estimate.source}).` : '';
      return `${col.def.label}.${est}`;
    }
    if (col.kind === 'derived') return `${col.def.label}. Calculated: ${col.def.formula}. Source: ${col.def.source}.`;
    return `${col.def.label}. Your calculated column: ${col.def.expression}.`;
  }

  private renderHeader(ws: Worksheet): TemplateResult {
    return html`<thead>
      <tr role="row" aria-rowindex="1">
        <th role="columnheader" scope="col" aria-colindex="1" class="time" title="Time of the row, in the worksheet's time zone offset">
          <span class="short">Time</span> <span class="unit">UTC${formatOffset(ws.displayOffset)}</span>
        </th>
        ${this.cols.map((col, i) => {
          const calc = col.kind !== 'measure';
          return html`<th role="columnheader" scope="col" aria-colindex=${i + 2} title=${this.headerTitle(col)}>
            <span class="short">${columnLabel(col)}</span> <span class="unit">${this.unitOf(col)}${calc ? html` <span class="calc-mark">calc</span>` : nothing}</span>
          </th>`;
        })}
      </tr>
    </thead>`;
  }

  private renderEditor(label: string, colIndex: number): TemplateResult {
    const end = colIndex > Math.max(2, this.cols.length / 2);
    return html`<input
        class="editor"
        type="text"
        autocomplete="off"
        spellcheck="false"
        aria-label=${label}
        aria-invalid=${this.editError ? 'true' : 'false'}
        aria-describedby=${this.editError ? 'cell-error' : nothing}
        .value=${this.editStart}
        @focusout=${this.onEditorFocusOut}
      />${
        this.editError
          ? html`<div id="cell-error" class=${classMap({ bubble: true, error: true, end })} role="alert"><span aria-hidden="true">✕ </span>${this.editError}</div>`
          : nothing
      }`;
  }

  private renderNote(rowId: string, key: string, colIndex: number): TemplateResult | typeof nothing {
    const n = this.note;
    if (!n || n.rowId !== rowId || n.key !== key) return nothing;
    const end = colIndex > Math.max(2, this.cols.length / 2);
    return html`<div class=${classMap({ bubble: true, warn: n.kind === 'warn', error: n.kind === 'error', end })}>
      <span aria-hidden="true">${n.kind === 'warn' ? '⚠ ' : '✕ '}</span>${n.text}
    </div>`;
  }

  private renderRowHeader(ws: Worksheet, row: Row, index: number, highlighted: boolean): TemplateResult {
    const active = this.activeRowId === row.id && this.activeColKey === TIME_COL;
    const editing = active && this.mode === 'edit';
    const clock = formatClock(row.time, ws.displayOffset);
    const full = formatDateTime(row.time, ws.displayOffset);
    const prev = this.rows[index - 1];
    const day = !prev || formatDateTime(prev.time, ws.displayOffset).slice(0, 10) !== full.slice(0, 10) ? full.slice(0, 10) : '';
    return html`<th
      role="rowheader"
      scope="row"
      aria-colindex="1"
      class=${classMap({ time: true, active, editing })}
      tabindex=${active ? 0 : -1}
      data-row=${row.id}
      data-col=${TIME_COL}
      title=${`${full} (UTC${formatOffset(ws.displayOffset)})`}
    >
      ${
        editing
          ? this.renderEditor(`Time of the row at ${clock}`, 0)
          : html`${highlighted ? html`<span class="hl-mark" aria-hidden="true">◆</span>` : nothing}<span class="v">${clock}</span>${day ? html` <span class="day">${day}</span>` : nothing}${highlighted ? html`<span class="sr"> (highlighted)</span>` : nothing}`
      }
      ${this.renderNote(row.id, TIME_COL, 0)}
    </th>`;
  }

  private renderMeasureValue(row: Row, col: Extract<GridColumn, { kind: 'measure' }>): TemplateResult {
    const cell = row.cells[col.key];
    const estimate = !cell && col.estimate ? this.derivedByRow.get(row.id)?.[col.key] : undefined;
    if (estimate !== undefined) {
      return html`<span class="v est">${formatNumber(col.def, estimate, this.displayUnit(col.key))}</span> <span class="est-mark">est.</span>`;
    }
    const flag = cell?.flag;
    return html`<span class="v">${formatCell(col.key, cell, this.displayUnit(col.key))}</span>${
      flag ? html` <span class="badge flag">${flag === 'high' ? '↑ high' : '↓ low'}</span>` : nothing
    }`;
  }

  private renderCalcValue(row: Row, col: GridColumn): TemplateResult {
    const v = this.derivedByRow.get(row.id)?.[col.key];
    if (v === undefined || !Number.isFinite(v)) return html`<span class="v"></span>`;
    const decimals = col.kind === 'derived' ? col.def.decimals : 2;
    return html`<span class="v">${String(Number(v.toFixed(decimals)))}</span>`;
  }

  private renderCell(ws: Worksheet, row: Row, col: GridColumn, colIndex: number): TemplateResult {
    const active = this.activeRowId === row.id && this.activeColKey === col.key;
    const editing = active && this.mode === 'edit';
    const measure = col.kind === 'measure';
    const pending = this.pending.get(`${row.id}:${col.key}`);
    const classes = {
      active,
      editing,
      calc: !measure,
      wide: measure && col.def.kind === 'text',
      mark: measure && col.def.kind === 'mark',
      failed: pending === 'failed',
    };
    const label = `${columnLabel(col)} ${this.unitOf(col)}`.trim();
    return html`<td
      role="gridcell"
      aria-colindex=${colIndex + 1}
      aria-readonly=${measure ? nothing : 'true'}
      aria-describedby=${measure ? nothing : `calc-${col.key}`}
      class=${classMap(classes)}
      tabindex=${active ? 0 : -1}
      data-row=${row.id}
      data-col=${col.key}
    >
      ${
        editing
          ? this.renderEditor(`${label} at ${formatClock(row.time, ws.displayOffset)}`, colIndex)
          : measure
            ? this.renderMeasureValue(row, col)
            : this.renderCalcValue(row, col)
      }
      ${pending === 'saving' ? html` <span class="badge saving">◌ saving</span>` : nothing}
      ${pending === 'failed' ? html` <span class="badge failed">✕ not saved</span>` : nothing}
      ${this.renderNote(row.id, col.key, colIndex)}
    </td>`;
  }

  /**
   * Everything a row's rendering depends on. Moving the active cell changes this for two rows
   * only, so a key press re-renders two rows, not the whole worksheet.
   */
  private rowDeps(ws: Worksheet, row: Row, index: number): unknown[] {
    const active = this.activeRowId === row.id;
    const note = this.note?.rowId === row.id ? this.note : null;
    return [
      row,
      index,
      this.rows[index - 1]?.time,
      this.cols,
      this.derivedByRow.get(row.id),
      this.highlightRows.has(row.id),
      this.pendingByRow.get(row.id),
      active ? this.activeColKey : null,
      active ? this.mode : null,
      active ? this.editError : null,
      note,
      ws.displayOffset,
      this.displayUnits,
    ];
  }

  private renderRow(ws: Worksheet, row: Row, index: number): TemplateResult {
    const highlighted = this.highlightRows.has(row.id);
    return html`<tr role="row" aria-rowindex=${index + 2} class=${highlighted ? 'hl' : ''} data-row-id=${row.id}>
      ${this.renderRowHeader(ws, row, index, highlighted)}
      ${this.cols.map((col, c) => this.renderCell(ws, row, col, c + 1))}
    </tr>`;
  }

  private renderPastePreview(ws: Worksheet): TemplateResult | typeof nothing {
    const plan = this.plan;
    if (!plan) return nothing;
    const label = (key: string | undefined) =>
      key ? (MEASURES.get(key)?.short ?? this.cols.find((c) => c.key === key)?.def.label ?? key) : '—';
    const stored = plan.accepted.length;
    const newRows = plan.newRows.length;
    return html`<h2 id="paste-title">Check the paste before storing</h2>
      <p class="counts" id="paste-counts">
        <span class="ok">✓ ${stored} ${stored === 1 ? 'value' : 'values'} to store${newRows > 0 ? ` (${newRows} new ${newRows === 1 ? 'row' : 'rows'})` : ''}</span>
        <span class=${plan.refused.length > 0 ? 'no' : ''}>✕ ${plan.refused.length} refused</span>
        ${plan.unchanged > 0 ? html`<span>= ${plan.unchanged} already stored</span>` : nothing}
      </p>
      <p>Read ${plan.layout.header ? 'by the column names on the first line' : 'from the active cell'}${plan.layout.byTime ? ', one row per time' : ''}. Refused values are not stored.</p>
      ${
        stored > 0
          ? html`<h3>Will be stored</h3>
            <div class="preview" tabindex="0" role="region" aria-label="Values to store">
              <table>
                <thead><tr><th scope="col">Time</th><th scope="col">Column</th><th scope="col">Value</th><th scope="col">Note</th></tr></thead>
                <tbody>
                  ${plan.accepted.slice(0, PREVIEW_LIMIT).map(
                    (a) => html`<tr>
                      <td>${formatDateTime(a.time, ws.displayOffset)}${a.newRow ? ' (new row)' : ''}</td>
                      <td>${label(a.key)}</td>
                      <td>${formatCell(a.key, a.cell, this.displayUnit(a.key))} ${this.displayUnit(a.key)?.label ?? MEASURES.get(a.key)?.unit?.label ?? ''}</td>
                      <td class="note">${a.warning ? html`<span aria-hidden="true">⚠ </span>${a.warning}` : ''}</td>
                    </tr>`,
                  )}
                </tbody>
              </table>
            </div>
            ${stored > PREVIEW_LIMIT ? html`<p>…and ${stored - PREVIEW_LIMIT} more.</p>` : nothing}`
          : nothing
      }
      ${
        plan.refused.length > 0
          ? html`<h3>Refused, not stored</h3>
            <div class="preview" tabindex="0" role="region" aria-label="Refused values">
              <table>
                <thead><tr><th scope="col">Line</th><th scope="col">Column</th><th scope="col">Pasted</th><th scope="col">Why</th></tr></thead>
                <tbody>
                  ${plan.refused
                    .slice(0, PREVIEW_LIMIT)
                    .map(
                      (r) => html`<tr><td>${r.line}</td><td>${label(r.key)}</td><td>${r.input}</td><td class="why">${r.message}</td></tr>`,
                    )}
                </tbody>
              </table>
            </div>
            ${plan.refused.length > PREVIEW_LIMIT ? html`<p>…and ${plan.refused.length - PREVIEW_LIMIT} more.</p>` : nothing}`
          : nothing
      }
      <div class="actions">
        <button type="button" class="cancel" @click=${() => this.pasteDialog.close()}>Cancel</button>
        ${
          stored > 0
            ? html`<button type="button" class="primary confirm" autofocus @click=${this.confirmPaste}>Store ${stored} ${stored === 1 ? 'value' : 'values'}</button>`
            : nothing
        }
      </div>`;
  }

  private renderDeleteConfirm(ws: Worksheet): TemplateResult | typeof nothing {
    const row = this.rows.find((r) => r.id === this.deleteRowId);
    if (!row) return nothing;
    const n = Object.keys(row.cells).length;
    return html`<h2 id="delete-title">Delete the row at ${formatDateTime(row.time, ws.displayOffset)}?</h2>
      <p id="delete-desc">${n === 0 ? 'The row is empty.' : `Its ${n} ${n === 1 ? 'value goes' : 'values go'} with it.`} The edit log keeps a record, and Undo (Ctrl+Z) brings the row back.</p>
      <div class="actions">
        <button type="button" class="keep" autofocus @click=${() => this.deleteDialog.close()}>Keep the row</button>
        <button type="button" class="danger confirm" @click=${this.confirmDelete}>Delete the row</button>
      </div>`;
  }

  protected override render(): TemplateResult {
    const ws = this.worksheet;
    if (!ws) return html`<p class="empty">No worksheet open.</p>`;
    const activeRow = this.rows.find((r) => r.id === this.activeRowId);
    const calcCols = this.cols.filter((c) => c.kind !== 'measure');
    return html`<div @keydown=${this.onKeydown}>
      <div class=${classMap({ scroller: true, room: this.editError !== null || this.note !== null })} @paste=${this.onPaste}>
        <table
          role="grid"
          aria-label=${`Worksheet ${ws.label}`}
          aria-describedby="grid-help"
          aria-rowcount=${this.rows.length + 1}
          aria-colcount=${this.cols.length + 1}
          @pointerdown=${this.onPointerDown}
          @focusin=${this.onFocusIn}
          @click=${this.onClick}
          @dblclick=${() => this.mode === 'navigate' && this.isEditable(this.activePos()) && this.beginEdit()}
          @copy=${this.onCopy}
        >
          ${this.renderHeader(ws)}
          <tbody>
            ${repeat(
              this.bodyItems(),
              (item) => (item.kind === 'row' ? item.row.id : item.key),
              (item) =>
                item.kind === 'row'
                  ? guard(this.rowDeps(ws, item.row, item.index), () => this.renderRow(ws, item.row, item.index))
                  : html`<tr class="gap" aria-hidden="true" data-rows=${item.rows}><td colspan=${this.cols.length + 1}></td></tr>`,
            )}
          </tbody>
        </table>
        ${
          this.rows.length === 0
            ? html`<p class="empty" tabindex="0">
              No rows yet. Add a row now (<kbd>Alt</kbd>+<kbd>N</kbd>) or at a time you type below, or paste rows copied with their
              times here.
            </p>`
            : nothing
        }
      </div>
      <div hidden>
        ${calcCols.map((c) => html`<span id=${`calc-${c.key}`}>${this.headerTitle(c)}</span>`)}
      </div>

      <div class="bar">
        <button type="button" class="primary add-now" ?disabled=${this.now === undefined} @click=${this.addRowNow}>Add row now</button>
        <form class="add-at" @submit=${this.onAddAt} novalidate>
          <label for="add-time">Add a row at</label>
          <input
            id="add-time"
            class="time-input"
            type="text"
            autocomplete="off"
            placeholder="08:15"
            aria-invalid=${this.addError ? 'true' : 'false'}
            aria-describedby=${this.addError ? 'add-time-error' : nothing}
          />
          <button type="submit">Add row at this time</button>
          ${this.addError ? html`<p id="add-time-error" class="field-error" role="alert">✕ ${this.addError}</p>` : nothing}
        </form>
        <span class="spacer"></span>
        <button type="button" class="columns" aria-expanded=${this.chooserOpen ? 'true' : 'false'} aria-controls="chooser" @click=${() => (this.chooserOpen = !this.chooserOpen)}>
          Columns…
        </button>
        <button type="button" class="delete-row" ?disabled=${!activeRow} @click=${() => this.askDelete(this.activeRowId)}>
          Delete row${activeRow ? ` ${formatClock(activeRow.time, ws.displayOffset)}` : ''}…
        </button>
      </div>
      <div id="chooser" class="chooser" ?hidden=${!this.chooserOpen}>
        <tm-column-chooser .columns=${ws.columns} .options=${this.columnOptions()}></tm-column-chooser>
      </div>

      <p class=${classMap({ status: true, warn: this.statusWarn })} role="status">${this.status}</p>
      <p class="help" id="grid-help">
        Arrow keys move. <kbd>Enter</kbd> or <kbd>F2</kbd> edits; <kbd>Enter</kbd> stores and moves down, <kbd>Tab</kbd> stores and
        moves right, <kbd>Esc</kbd> cancels. <kbd>Delete</kbd> clears a cell (on a time: deletes the row, after asking).
        <kbd>Alt</kbd>+<kbd>N</kbd> adds a row now. <kbd>Ctrl</kbd>+<kbd>Z</kbd> undoes. Paste a block copied from a spreadsheet to check it before storing.
      </p>

      <dialog class="paste" aria-labelledby="paste-title" aria-describedby="paste-counts" @close=${this.onPasteDialogClose}>
        ${this.renderPastePreview(ws)}
      </dialog>
      <dialog class="delete" role="alertdialog" aria-labelledby="delete-title" aria-describedby="delete-desc" @close=${this.onDeleteDialogClose}>
        ${this.renderDeleteConfirm(ws)}
      </dialog>
    </div>`;
  }
}

/** Whether rows are in time order (ISO instants in UTC compare as strings). */
function isSorted(rows: readonly Row[]): boolean {
  for (let i = 1; i < rows.length; i++) if (rows[i - 1]!.time > rows[i]!.time) return false;
  return true;
}

/** Event names and their details, for `emit` and for listeners. */
/** The detail of each event the grid fires, by event name. */
export interface TmGridEventDetails {
  'tm-edit': TmEditDetail;
  'tm-paste': TmPasteDetail;
  'tm-add-row': TmAddRowDetail;
  'tm-row-time': TmRowTimeDetail;
  'tm-delete-row': TmDeleteRowDetail;
  'tm-undo': null;
  'tm-redo': null;
}

declare global {
  interface HTMLElementTagNameMap {
    'tm-grid': TmGrid;
  }
  interface HTMLElementEventMap {
    'tm-edit': CustomEvent<TmEditDetail>;
    'tm-paste': CustomEvent<TmPasteDetail>;
    'tm-add-row': CustomEvent<TmAddRowDetail>;
    'tm-row-time': CustomEvent<TmRowTimeDetail>;
    'tm-delete-row': CustomEvent<TmDeleteRowDetail>;
    'tm-undo': CustomEvent<null>;
    'tm-redo': CustomEvent<null>;
  }
}
