/**
 * Paste planner: turns a pasted block of text into a plan of what will be stored and what is
 * refused, before anything is stored. The grid shows the plan as a preview and only a confirmed
 * plan becomes a `tm-paste` event. Also home of the grid's column list and of the one function
 * that parses what a person enters in a cell, so typing and pasting read values the same way.
 *
 * How a block is read:
 * - Lines are separated by newlines. Values on a line are separated by tabs (what spreadsheets
 *   put on the clipboard). Commas separate values only when the first line is a header of
 *   measure keys, as in our CSV files: without a header, "1,5" stays one value (a decimal
 *   comma), because splitting it would silently move a number into the next column.
 * - Values may be quoted as in RFC 4180 ("a, b", "say ""yes""").
 * - A first line whose every non-empty value is a known key (a measure key, a calculated key or
 *   `time`) is a header: values then go to the column named above them, not by position.
 * - With a `time` column in the header, or when pasting on the time column (the row headers),
 *   each line is a moment: it fills the row already at exactly that time, or creates a new row.
 *   Lines with the same time fill the same new row; a new row is created only to hold values
 *   (a line whose values are all refused creates none). Bare clock times ("08:15") are read on the
 *   day of the reference instant, in the worksheet's display offset.
 * - Otherwise lines fill the rows from the active row downwards (rows in time order) and values
 *   fill the columns from the active column rightwards, as shown on screen.
 * - An empty value leaves its cell unchanged (a paste never clears). A value equal to what is
 *   stored is not an edit. Calculated columns, values past the last row or column, unknown
 *   units, out-of-range values and unreadable times are refused, each with its own message.
 *
 * Pure: no DOM.
 */
import { DERIVED, type DerivedDef } from './derived.js';
import { MEASURES, measure, type MeasureDef, type UnitDef } from './measures.js';
import type { Cell, DerivedColumn, Row, Worksheet } from './model.js';
import { parseCellInput, type ParseResult } from './parse.js';
import { parseTimeInput } from './time.js';
import type { CellInputEdit } from './worksheet.js';

// --- Columns as the grid shows them ---------------------------------------------------------

/**
 * One visible column of the grid.
 * - `measure`: a charted measure (editable). `estimate` is set when a calculated value with the
 *   same key may fill an empty cell (MAP estimated from SBP and DBP).
 * - `derived`: a built-in calculated measure (read-only).
 * - `user`: the user's own calculated column (read-only).
 */
export type GridColumn =
  | { readonly kind: 'measure'; readonly key: string; readonly def: MeasureDef; readonly estimate?: DerivedDef }
  | { readonly kind: 'derived'; readonly key: string; readonly def: DerivedDef }
  | { readonly kind: 'user'; readonly key: string; readonly def: DerivedColumn };

/**
 * The worksheet's visible columns in order: keys of `worksheet.columns` that name a measure, a
 * built-in calculated measure or one of the worksheet's own calculated columns. Unknown keys and
 * repeats are skipped.
 */
export function gridColumns(ws: Worksheet): GridColumn[] {
  const user = new Map(ws.derivedColumns.map((d) => [d.key, d]));
  const seen = new Set<string>();
  const out: GridColumn[] = [];
  for (const key of ws.columns) {
    if (seen.has(key)) continue;
    seen.add(key);
    const m = MEASURES.get(key);
    const d = DERIVED.get(key);
    const u = user.get(key);
    if (m) out.push(d ? { kind: 'measure', key, def: m, estimate: d } : { kind: 'measure', key, def: m });
    else if (d) out.push({ kind: 'derived', key, def: d });
    else if (u) out.push({ kind: 'user', key, def: u });
  }
  return out;
}

/** Label of a column for people. */
export function columnLabel(col: GridColumn): string {
  return col.kind === 'user' ? col.def.label : col.def.short;
}

// --- Parsing one entered value ----------------------------------------------------------------

const BARE_NUMBER = /^[+-]?(?:\d+(?:[.,]\d*)?|[.,]\d+)$/;

/**
 * Parses what a person typed or pasted into a measure cell. When the grid shows the measure in
 * another unit than the stored one (`displayUnit`), a bare number is read in the unit on screen,
 * so "36" typed under "Lactate mg/dL" means 36 mg/dL, never 36 mmol/L.
 */
export function parseEntered(key: string, text: string, displayUnit?: UnitDef): ParseResult {
  const def = measure(key);
  const raw = text.trim();
  if (displayUnit && def.unit && displayUnit.ucum !== def.unit.ucum && BARE_NUMBER.test(raw)) {
    const suffix = displayUnit.aliases[0] ?? displayUnit.label;
    return parseCellInput(key, `${raw} ${suffix}`);
  }
  return parseCellInput(key, text);
}

/** Two stored cells hold the same thing. */
export function sameCell(a: Cell | null | undefined, b: Cell | null | undefined): boolean {
  if (!a || !b) return !a && !b;
  return a.value === b.value && a.text === b.text && a.flag === b.flag && a.input === b.input;
}

// --- Splitting the block -----------------------------------------------------------------------

/** Most lines and characters one paste may hold; bigger blocks belong to the import. */
export const MAX_PASTE_LINES = 2000;
export const MAX_PASTE_CHARS = 500_000;

/**
 * Splits delimited text into lines of values (RFC 4180 quoting; CR, LF or CRLF line ends).
 * A final empty line (the newline spreadsheets add after the last row) is dropped.
 */
export function splitDelimited(text: string, delimiter: '\t' | ','): string[][] {
  const lines: string[][] = [];
  let line: string[] = [];
  let field = '';
  let quoted = false;
  let i = 0;
  const endField = () => {
    line.push(field);
    field = '';
  };
  const endLine = () => {
    endField();
    lines.push(line);
    line = [];
  };
  while (i < text.length) {
    const ch = text[i]!;
    if (quoted) {
      if (ch === '"' && text[i + 1] === '"') {
        field += '"';
        i += 2;
        continue;
      }
      if (ch === '"') quoted = false;
      else field += ch;
      i += 1;
      continue;
    }
    if (ch === '"' && field.trim() === '') {
      field = '';
      quoted = true;
    } else if (ch === delimiter) {
      endField();
    } else if (ch === '\r' || ch === '\n') {
      endLine();
      if (ch === '\r' && text[i + 1] === '\n') i += 1;
    } else {
      field += ch;
    }
    i += 1;
  }
  if (field !== '' || line.length > 0 || quoted) endLine();
  return lines;
}

// --- The plan ---------------------------------------------------------------------------------

/** Where and onto what the block is pasted. */
export interface PasteTarget {
  worksheet: Worksheet;
  /** Index of the active row in the worksheet's rows (time order); ignored when it has no rows. */
  anchorRow: number;
  /** Active column: 0 is the time column, 1.. the visible columns of {@link gridColumns}. */
  anchorCol: number;
  /** Instant whose day a bare clock time refers to (the injected clock's now). */
  referenceMs: number;
  /** Units the grid displays instead of the stored ones. */
  displayUnits?: ReadonlyMap<string, UnitDef>;
}

/** A row the paste creates. */
export interface PlannedRow {
  /** UTC instant, ISO. */
  time: string;
  /** Offset the time was entered with (minutes). */
  offset: number;
  cells: Record<string, Cell>;
}

/** One value that will be stored, for the preview. */
export interface AcceptedValue {
  /** 1-based line of the pasted text (the header, if any, is line 1). */
  line: number;
  /** 1-based position of the value on its line. */
  field: number;
  key: string;
  input: string;
  cell: Cell;
  /** Row time (UTC ISO) the value goes to. */
  time: string;
  offset: number;
  /** True when the row is created by this paste. */
  newRow: boolean;
  /** Set when the value is kept but alarming. */
  warning?: string;
}

/** One value that will not be stored, with the reason. */
export interface RefusedValue {
  line: number;
  field: number;
  /** The column it was meant for, when known. */
  key?: string;
  input: string;
  message: string;
}

export interface PastePlan {
  /** Rows to create (time order), with their cells. */
  newRows: PlannedRow[];
  /** Edits of rows that exist. */
  edits: CellInputEdit[];
  accepted: AcceptedValue[];
  refused: RefusedValue[];
  /** Values equal to what is already stored (not edits). */
  unchanged: number;
  layout: { delimiter: 'tab' | 'comma'; header: boolean; byTime: boolean };
}

export type PastePlanResult = { ok: true; plan: PastePlan } | { ok: false; error: string };

/** The `tm-paste` event's detail: one paste, applied as one change and undone as one step. */
export interface PasteDetail {
  newRows: PlannedRow[];
  edits: CellInputEdit[];
}

function isKnownKey(ws: Worksheet, key: string): boolean {
  return key === 'time' || MEASURES.has(key) || DERIVED.has(key) || ws.derivedColumns.some((d) => d.key === key);
}

/** Reads the first line as a header when every non-empty value on it is a known key. */
function readHeader(ws: Worksheet, text: string): { delimiter: '\t' | ','; keys: string[] } | undefined {
  const firstLine = text.split(/\r\n|\r|\n/, 1)[0] ?? '';
  const delimiter = firstLine.includes('\t') ? '\t' : ',';
  const keys = (splitDelimited(firstLine, delimiter)[0] ?? []).map((k) => k.trim().toLowerCase());
  const named = keys.filter((k) => k !== '');
  if (named.length === 0 || !named.every((k) => isKnownKey(ws, k))) return undefined;
  return { delimiter, keys };
}

/** What a value on a line is aimed at. */
type Slot = { kind: 'time' } | { kind: 'column'; key: string } | { kind: 'refuse'; message: string; key?: string };

function slotForKey(ws: Worksheet, key: string): Slot {
  if (key === '') return { kind: 'refuse', message: 'This value has no column name in the header line.' };
  if (key === 'time') return { kind: 'time' };
  if (MEASURES.has(key)) return { kind: 'column', key };
  const label = DERIVED.get(key)?.label ?? ws.derivedColumns.find((d) => d.key === key)?.label ?? key;
  return { kind: 'refuse', key, message: `${label} is calculated from other values; pasted values are not stored there.` };
}

function slotForColumn(col: GridColumn | undefined): Slot {
  if (!col) return { kind: 'refuse', message: 'Past the last column: nothing to paste into.' };
  if (col.kind === 'measure') return { kind: 'column', key: col.key };
  return { kind: 'refuse', key: col.key, message: `${col.def.label} is calculated from other values; pasted values are not stored there.` };
}

/** Accumulates the plan while lines are read. */
class PlanBuilder {
  readonly plan: PastePlan;
  private readonly rowsByTime = new Map<string, Row>();
  private readonly newRowsByTime = new Map<string, PlannedRow>();
  /** row id or new-row time -> key -> line that set it. */
  private readonly setBy = new Map<string, Map<string, number>>();

  constructor(
    private readonly target: PasteTarget,
    layout: PastePlan['layout'],
  ) {
    this.plan = { newRows: [], edits: [], accepted: [], refused: [], unchanged: 0, layout };
    for (const row of target.worksheet.rows) if (!this.rowsByTime.has(row.time)) this.rowsByTime.set(row.time, row);
  }

  refuse(line: number, field: number, input: string, message: string, key?: string): void {
    this.plan.refused.push(key === undefined ? { line, field, input, message } : { line, field, key, input, message });
  }

  /** The row at a time: an existing one, or a new one created on first use. */
  rowAt(time: string, offset: number): { row?: Row; planned?: PlannedRow } {
    const row = this.rowsByTime.get(time);
    if (row) return { row };
    let planned = this.newRowsByTime.get(time);
    if (!planned) {
      planned = { time, offset, cells: {} };
      this.newRowsByTime.set(time, planned);
      this.plan.newRows.push(planned);
    }
    return { planned };
  }

  /** Parses one value for one row and records it as accepted or refused. */
  put(line: number, field: number, input: string, key: string, dest: { row?: Row; planned?: PlannedRow }): void {
    const result = parseEntered(key, input, this.target.displayUnits?.get(key));
    if (!result.ok) return this.refuse(line, field, input, result.error, key);
    if (result.cell === null) return; // empty values never reach here; a paste never clears
    const slotId = dest.row ? dest.row.id : `new:${dest.planned!.time}`;
    const byKey = this.setBy.get(slotId) ?? new Map<string, number>();
    this.setBy.set(slotId, byKey);
    const earlier = byKey.get(key);
    if (earlier !== undefined) {
      return this.refuse(line, field, input, `Line ${earlier} of this paste already gives ${measure(key).label} for this row.`, key);
    }
    byKey.set(key, line);
    if (dest.row && sameCell(dest.row.cells[key], result.cell)) {
      this.plan.unchanged += 1;
      return;
    }
    const time = dest.row ? dest.row.time : dest.planned!.time;
    const offset = dest.row ? dest.row.offset : dest.planned!.offset;
    const accepted: AcceptedValue = { line, field, key, input, cell: result.cell, time, offset, newRow: !dest.row };
    if (result.warning) accepted.warning = result.warning;
    this.plan.accepted.push(accepted);
    if (dest.row) this.plan.edits.push({ rowId: dest.row.id, key, cell: result.cell, input });
    else dest.planned!.cells[key] = result.cell;
  }

  finish(): PastePlan {
    // A new row exists only to hold values: a line whose values were all refused creates none.
    this.plan.newRows = this.plan.newRows.filter((r) => Object.keys(r.cells).length > 0);
    this.plan.newRows.sort((a, b) => (a.time < b.time ? -1 : a.time > b.time ? 1 : 0));
    return this.plan;
  }
}

/**
 * Plans a paste. Nothing is stored: the caller shows the plan and, once confirmed, sends
 * `{ newRows, edits }` as one `tm-paste`.
 * @returns the plan, or an error when the block cannot be pasted at all (empty, too big)
 */
export function planPaste(text: string, target: PasteTarget): PastePlanResult {
  if (text.length > MAX_PASTE_CHARS)
    return {
      ok: false,
      error: `The pasted text is too long (over ${MAX_PASTE_CHARS.toLocaleString('en')} characters). Use Import for whole files.`,
    };
  const ws = target.worksheet;
  const header = readHeader(ws, text);
  const delimiter = header?.delimiter ?? '\t';
  const lines = splitDelimited(text, delimiter);
  if (lines.length > MAX_PASTE_LINES + 1)
    return {
      ok: false,
      error: `The pasted text has ${lines.length} lines; at most ${MAX_PASTE_LINES} can be pasted at once. Use Import for whole files.`,
    };
  const body = header ? lines.slice(1) : lines;
  if (body.every((l) => l.every((v) => v.trim() === '')))
    return { ok: false, error: 'There is nothing to paste: the copied text has no values.' };

  const columns = gridColumns(ws);
  let slots: (field: number) => Slot;
  let byTime: boolean;
  if (header) {
    const keySlots = header.keys.map((k) => slotForKey(ws, k));
    slots = (f) => keySlots[f] ?? { kind: 'refuse', message: 'Past the last column of the header line: nothing to paste into.' };
    byTime = header.keys.includes('time');
  } else if (target.anchorCol <= 0) {
    slots = (f) => (f === 0 ? { kind: 'time' } : slotForColumn(columns[f - 1]));
    byTime = true;
  } else {
    slots = (f) => slotForColumn(columns[target.anchorCol - 1 + f]);
    byTime = false;
  }

  const builder = new PlanBuilder(target, { delimiter: delimiter === '\t' ? 'tab' : 'comma', header: header !== undefined, byTime });
  const firstLine = header ? 2 : 1;
  body.forEach((values, i) => {
    const lineNo = firstLine + i;
    if (byTime) planTimedLine(builder, target, values, lineNo, slots);
    else planPositionalLine(builder, target, values, lineNo, i, slots);
  });
  return { ok: true, plan: builder.finish() };
}

function planTimedLine(builder: PlanBuilder, target: PasteTarget, values: string[], lineNo: number, slots: (f: number) => Slot): void {
  const ws = target.worksheet;
  if (values.every((v) => v.trim() === '')) return;
  const timeField = values.findIndex((_, f) => slots(f).kind === 'time');
  const timeText = timeField >= 0 ? (values[timeField] ?? '') : '';
  const parsed = parseTimeInput(timeText, ws.displayOffset, target.referenceMs);
  if (!parsed.ok) {
    builder.refuse(lineNo, timeField + 1, timeText, `${parsed.error} The whole line is skipped.`);
    return;
  }
  const dest = builder.rowAt(parsed.time, parsed.offset);
  values.forEach((input, f) => {
    if (f === timeField || input.trim() === '') return;
    const slot = slots(f);
    if (slot.kind === 'column') builder.put(lineNo, f + 1, input.trim(), slot.key, dest);
    else if (slot.kind === 'refuse') builder.refuse(lineNo, f + 1, input.trim(), slot.message, slot.key);
  });
}

function planPositionalLine(
  builder: PlanBuilder,
  target: PasteTarget,
  values: string[],
  lineNo: number,
  index: number,
  slots: (f: number) => Slot,
): void {
  const row = target.worksheet.rows[Math.max(0, target.anchorRow) + index];
  values.forEach((input, f) => {
    if (input.trim() === '') return;
    const slot = slots(f);
    if (slot.kind === 'refuse') return builder.refuse(lineNo, f + 1, input.trim(), slot.message, slot.key);
    if (slot.kind === 'time') return; // only timed lines have a time slot
    if (!row)
      return builder.refuse(
        lineNo,
        f + 1,
        input.trim(),
        'Past the last row: add rows first, or paste with a time column to create them.',
        slot.key,
      );
    builder.put(lineNo, f + 1, input.trim(), slot.key, { row });
  });
}
