/**
 * Pure commands on a worksheet. Each returns a new worksheet (never mutates its input) whose edit
 * log has the entry describing the change and whose `rev` is one higher. The store writes the new
 * version and the log entry in one IndexedDB transaction.
 */
import type { Clock } from './clock.js';
import { toInstant } from './clock.js';
import { DEFAULT_COLUMNS } from './measures.js';
import type { Cell, CustomGoal, DerivedColumn, EditLogEntry, Row, TimeZero, Worksheet } from './model.js';

export interface Ctx {
  clock: Clock;
  /** Makes a unique id; defaults to crypto.randomUUID. */
  newId?: () => string;
}

function id(ctx: Ctx): string {
  return ctx.newId ? ctx.newId() : globalThis.crypto.randomUUID();
}

/** Sorts rows by time; rows at the same instant keep their order. */
export function sortRows(rows: readonly Row[]): Row[] {
  return [...rows].sort((a, b) => (a.time < b.time ? -1 : a.time > b.time ? 1 : 0));
}

export interface NewWorksheet {
  label: string;
  displayOffset: number;
  weightKg?: number;
  heightCm?: number;
  sex?: Worksheet['sex'];
  goalSets?: string[];
}

export function createWorksheet(ctx: Ctx, init: NewWorksheet): Worksheet {
  const now = toInstant(ctx.clock.now());
  const ws: Worksheet = {
    id: id(ctx),
    label: init.label,
    createdAt: now,
    updatedAt: now,
    rev: 0,
    archived: false,
    useIdealWeight: false,
    displayOffset: init.displayOffset,
    goalSets: init.goalSets ?? ['ssc-hour1', 'sep1', 'ssc2021-targets'],
    customGoals: [],
    derivedColumns: [],
    columns: [...DEFAULT_COLUMNS],
    rows: [],
    log: [],
  };
  if (init.weightKg !== undefined) ws.weightKg = init.weightKg;
  if (init.heightCm !== undefined) ws.heightCm = init.heightCm;
  if (init.sex !== undefined) ws.sex = init.sex;
  return ws;
}

/** Result of a command: the new worksheet and the log entries it added. */
export interface Change {
  worksheet: Worksheet;
  entries: EditLogEntry[];
}

function commit(ctx: Ctx, ws: Worksheet, patch: Partial<Worksheet>, entries: Omit<EditLogEntry, 'id' | 'at'>[]): Change {
  const at = toInstant(ctx.clock.now());
  const full: EditLogEntry[] = entries.map((e) => ({ id: id(ctx), at, ...e }));
  return {
    worksheet: { ...ws, ...patch, rev: ws.rev + 1, updatedAt: at, log: [...ws.log, ...full] },
    entries: full,
  };
}

export function findRow(ws: Worksheet, rowId: string): Row | undefined {
  return ws.rows.find((r) => r.id === rowId);
}

/** Adds a row at a time (empty, or with cells); rows stay sorted. */
export function addRow(ctx: Ctx, ws: Worksheet, time: string, offset: number, cells: Row['cells'] = {}): Change & { rowId: string } {
  const row: Row = { id: id(ctx), time, offset, cells: { ...cells } };
  return { ...insertRow(ctx, ws, row, false), rowId: row.id };
}

/** Sets (or clears, with null) one cell. Throws if the row does not exist. */
export function setCell(ctx: Ctx, ws: Worksheet, rowId: string, key: string, cell: Cell | null, note?: string): Change {
  const row = findRow(ws, rowId);
  if (!row) throw new Error(`setCell: no row "${rowId}" in worksheet "${ws.id}"`);
  const old = row.cells[key] ?? null;
  const cells = { ...row.cells };
  if (cell === null) delete cells[key];
  else cells[key] = cell;
  const rows = ws.rows.map((r) => (r.id === rowId ? { ...r, cells } : r));
  const entry: Omit<EditLogEntry, 'id' | 'at'> = { kind: 'cell', rowId, key, old, new: cell };
  if (note) entry.note = note;
  return commit(ctx, ws, { rows }, [entry]);
}

/** One cell edit: the value to store (null clears the cell). */
export interface CellEdit {
  rowId: string;
  key: string;
  cell: Cell | null;
}

/** A cell edit with the text the person typed (or pasted). */
export interface CellInputEdit extends CellEdit {
  input: string;
}

/**
 * Sets several cells at once (paste): one change, one log entry per cell. Rows not edited keep
 * their objects, so what depends on them (derived values, rendered rows) can tell they did not change.
 */
export function setCells(ctx: Ctx, ws: Worksheet, edits: readonly CellEdit[]): Change {
  const index = new Map(ws.rows.map((r, i) => [r.id, i]));
  const byRow = new Map<string, Row>();
  const entries: Omit<EditLogEntry, 'id' | 'at'>[] = [];
  for (const e of edits) {
    let row = byRow.get(e.rowId);
    if (!row) {
      const i = index.get(e.rowId);
      if (i === undefined) throw new Error(`setCells: no row "${e.rowId}" in worksheet "${ws.id}"`);
      const original = ws.rows[i]!;
      row = { ...original, cells: { ...original.cells } };
      byRow.set(e.rowId, row);
    }
    const old = row.cells[e.key] ?? null;
    if (e.cell === null) delete row.cells[e.key];
    else row.cells[e.key] = e.cell;
    entries.push({ kind: 'cell', rowId: e.rowId, key: e.key, old, new: e.cell });
  }
  return commit(ctx, ws, { rows: ws.rows.map((r) => byRow.get(r.id) ?? r) }, entries);
}

/** Moves a row to another time; rows stay sorted. */
export function setRowTime(ctx: Ctx, ws: Worksheet, rowId: string, time: string, offset: number): Change {
  const row = findRow(ws, rowId);
  if (!row) throw new Error(`setRowTime: no row "${rowId}" in worksheet "${ws.id}"`);
  const rows = sortRows(ws.rows.map((r) => (r.id === rowId ? { ...r, time, offset } : r)));
  return commit(ctx, ws, { rows }, [{ kind: 'row-time', rowId, old: row.time, new: time }]);
}

/** Deletes a row; its cells are kept in the log entry so the deletion can be undone. */
export function deleteRow(ctx: Ctx, ws: Worksheet, rowId: string): Change {
  const row = findRow(ws, rowId);
  if (!row) throw new Error(`deleteRow: no row "${rowId}" in worksheet "${ws.id}"`);
  return commit(ctx, ws, { rows: ws.rows.filter((r) => r.id !== rowId) }, [
    { kind: 'row-delete', rowId, old: JSON.stringify(row), new: null },
  ]);
}

/**
 * Inserts a row built elsewhere (undo of deleteRow, or a row whose id the caller already holds).
 * A restored row gets one `row-add` entry noted "restored"; a new one also logs each of its cells.
 */
export function insertRow(ctx: Ctx, ws: Worksheet, row: Row, restored: boolean): Change {
  if (findRow(ws, row.id)) throw new Error(`insertRow: row "${row.id}" already exists`);
  const entries: Omit<EditLogEntry, 'id' | 'at'>[] = [
    restored ? { kind: 'row-add', rowId: row.id, new: row.time, note: 'restored' } : { kind: 'row-add', rowId: row.id, new: row.time },
  ];
  if (!restored) {
    for (const [key, cell] of Object.entries(row.cells)) entries.push({ kind: 'cell', rowId: row.id, key, old: null, new: cell });
  }
  return commit(ctx, ws, { rows: sortRows([...ws.rows, row]) }, entries);
}

/** The facts of a worksheet that the side panel edits. */
export interface Facts {
  label: string;
  weightKg?: number | undefined;
  heightCm?: number | undefined;
  sex?: Worksheet['sex'] | undefined;
  baselineSbp?: number | undefined;
  useIdealWeight: boolean;
  timeZero?: TimeZero | undefined;
  shockTime?: string | undefined;
  displayOffset: number;
  goalSets: string[];
  archived: boolean;
}

export function factsOf(ws: Worksheet): Facts {
  return {
    label: ws.label,
    weightKg: ws.weightKg,
    heightCm: ws.heightCm,
    sex: ws.sex,
    baselineSbp: ws.baselineSbp,
    useIdealWeight: ws.useIdealWeight,
    timeZero: ws.timeZero,
    shockTime: ws.shockTime,
    displayOffset: ws.displayOffset,
    goalSets: ws.goalSets,
    archived: ws.archived,
  };
}

function stripUndefined<T extends object>(o: T): T {
  return Object.fromEntries(Object.entries(o).filter(([, v]) => v !== undefined)) as T;
}

/** Changes worksheet facts (label, weight, time zero...). One log entry with old and new as JSON. */
export function setFacts(ctx: Ctx, ws: Worksheet, patch: Partial<Facts>): Change {
  const before = factsOf(ws);
  const after = { ...before, ...patch };
  const base: Worksheet = { ...ws };
  for (const k of Object.keys(patch) as (keyof Facts)[]) delete (base as Record<string, unknown>)[k];
  const next = { ...base, ...stripUndefined(after) };
  const changed = Object.fromEntries(Object.keys(patch).map((k) => [k, (before as unknown as Record<string, unknown>)[k] ?? null]));
  const now = Object.fromEntries(Object.keys(patch).map((k) => [k, (after as unknown as Record<string, unknown>)[k] ?? null]));
  return commit(ctx, next, {}, [{ kind: 'facts', old: JSON.stringify(changed), new: JSON.stringify(now) }]);
}

/** Shows, hides or reorders columns. */
export function setColumns(ctx: Ctx, ws: Worksheet, columns: string[]): Change {
  return commit(ctx, ws, { columns: [...columns] }, [{ kind: 'columns', old: JSON.stringify(ws.columns), new: JSON.stringify(columns) }]);
}

export function setDerivedColumns(ctx: Ctx, ws: Worksheet, derivedColumns: DerivedColumn[]): Change {
  return commit(ctx, ws, { derivedColumns: [...derivedColumns] }, [
    { kind: 'columns', key: 'derivedColumns', old: JSON.stringify(ws.derivedColumns), new: JSON.stringify(derivedColumns) },
  ]);
}

export function setCustomGoals(ctx: Ctx, ws: Worksheet, customGoals: CustomGoal[]): Change {
  return commit(ctx, ws, { customGoals: [...customGoals] }, [
    { kind: 'facts', key: 'customGoals', old: JSON.stringify(ws.customGoals), new: JSON.stringify(customGoals) },
  ]);
}

/** Minutes an entry was made after the moment it describes; late entries are marked in the note. */
export const LATE_ENTRY_MINUTES = 60;

/** Ids of cell log entries entered more than LATE_ENTRY_MINUTES after their row's time. */
export function lateEntries(ws: Worksheet): EditLogEntry[] {
  const rowTime = new Map(ws.rows.map((r) => [r.id, Date.parse(r.time)]));
  return ws.log.filter((e) => {
    if (e.kind !== 'cell' || !e.rowId || e.new === null || e.new === undefined) return false;
    const t = rowTime.get(e.rowId);
    return t !== undefined && Date.parse(e.at) - t > LATE_ENTRY_MINUTES * 60_000;
  });
}
