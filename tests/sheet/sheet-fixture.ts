// Test fixture: builds worksheets for the derived/score/formula tests. Invented values only.
import type { Cell, DerivedColumn, Row, Worksheet } from '../../src/sheet/model.js';
import { Worksheet as WorksheetSchema } from '../../src/sheet/model.js';

export const T0 = Date.parse('2026-03-01T08:00:00.000Z');
export const MIN = 60_000;

export type CellInput = number | string | true;

export interface RowInput {
  /** Minutes after T0 (may be negative). */
  min: number;
  cells?: Record<string, CellInput>;
}

export function cell(v: CellInput): Cell {
  return { value: v };
}

export function row(id: string, min: number, cells: Record<string, CellInput> = {}): Row {
  return {
    id,
    time: new Date(T0 + min * MIN).toISOString(),
    offset: 0,
    cells: Object.fromEntries(Object.entries(cells).map(([k, v]) => [k, cell(v)])),
  };
}

export interface WsInput {
  rows: RowInput[];
  weightKg?: number;
  heightCm?: number;
  sex?: 'female' | 'male';
  useIdealWeight?: boolean;
  baselineSbp?: number;
  /** Minutes after T0 of time zero; absent = no time zero. */
  timeZeroMin?: number;
  columns?: DerivedColumn[];
}

/** A valid worksheet (checked against the zod schema) with rows sorted by time. */
export function worksheet(input: WsInput): Worksheet {
  const rows = input.rows
    .map((r, k) => row(`r${k}`, r.min, r.cells ?? {}))
    .sort((a, b) => (a.time < b.time ? -1 : a.time > b.time ? 1 : 0));
  const ws: Worksheet = {
    id: 'ws-test',
    label: 'Bed T (fictional)',
    createdAt: new Date(T0).toISOString(),
    updatedAt: new Date(T0).toISOString(),
    rev: 0,
    archived: false,
    useIdealWeight: input.useIdealWeight ?? false,
    displayOffset: 0,
    goalSets: [],
    customGoals: [],
    derivedColumns: input.columns ?? [],
    columns: [],
    rows,
    log: [],
  };
  if (input.weightKg !== undefined) ws.weightKg = input.weightKg;
  if (input.heightCm !== undefined) ws.heightCm = input.heightCm;
  if (input.sex !== undefined) ws.sex = input.sex;
  if (input.baselineSbp !== undefined) ws.baselineSbp = input.baselineSbp;
  if (input.timeZeroMin !== undefined) {
    ws.timeZero = { time: new Date(T0 + input.timeZeroMin * MIN).toISOString(), offset: 0, basis: 'triage' };
  }
  return WorksheetSchema.parse(ws);
}

export function column(key: string, expression: string): DerivedColumn {
  return { key, label: key, expression };
}
