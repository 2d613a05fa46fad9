// Test fixture for the goal engine: builds worksheets with the pure commands of
// src/sheet/worksheet.ts. Invented values only; no real patients.
import { FixedClock } from '../../src/sheet/clock.js';
import type { Cell, CustomGoal, Worksheet } from '../../src/sheet/model.js';
import { Worksheet as WorksheetSchema } from '../../src/sheet/model.js';
import { addRow, createWorksheet, setCustomGoals, setFacts, type Ctx } from '../../src/sheet/worksheet.js';
import { evaluate, type GoalStatus } from '../../src/goals/index.js';

export const T0 = Date.parse('2026-03-01T08:00:00.000Z');
export const MIN = 60_000;

export type CellInput = number | string | true;

/** Minutes after T0, then cells. Rows are added in the order given (the model sorts them). */
export type RowSpec = [number, Record<string, CellInput>];

export interface SheetSpec {
  weightKg?: number;
  heightCm?: number;
  sex?: 'female' | 'male';
  useIdealWeight?: boolean;
  baselineSbp?: number;
  /** Minutes after T0; null = no time zero. Default 0. */
  t0?: number | null;
  shockMin?: number;
  offset?: number;
  customGoals?: CustomGoal[];
}

export function cellOf(v: CellInput): Cell {
  return { value: v };
}

export function at(min: number): number {
  return T0 + min * MIN;
}

export function iso(min: number): string {
  return new Date(at(min)).toISOString();
}

/** A worksheet built with the pure commands, validated by the zod schema. */
export function sheet(spec: SheetSpec, rows: RowSpec[]): Worksheet {
  let n = 0;
  const clock = new FixedClock(T0);
  const ctx: Ctx = { clock, newId: () => `id${++n}` };
  const offset = spec.offset ?? 0;
  let ws = createWorksheet(ctx, {
    label: 'TEST bed 1 (fictional)',
    displayOffset: offset,
    ...(spec.weightKg !== undefined ? { weightKg: spec.weightKg } : {}),
    ...(spec.heightCm !== undefined ? { heightCm: spec.heightCm } : {}),
    ...(spec.sex !== undefined ? { sex: spec.sex } : {}),
  });
  const t0 = spec.t0 === undefined ? 0 : spec.t0;
  ws = setFacts(ctx, ws, {
    useIdealWeight: spec.useIdealWeight ?? false,
    ...(spec.baselineSbp !== undefined ? { baselineSbp: spec.baselineSbp } : {}),
    ...(t0 !== null ? { timeZero: { time: iso(t0), offset, basis: 'triage' as const } } : {}),
    ...(spec.shockMin !== undefined ? { shockTime: iso(spec.shockMin) } : {}),
  }).worksheet;
  if (spec.customGoals) ws = setCustomGoals(ctx, ws, spec.customGoals).worksheet;
  rows.forEach(([min, cells], i) => {
    const c = Object.fromEntries(Object.entries(cells).map(([k, v]) => [k, cellOf(v)]));
    let k = 0;
    const r = addRow({ clock, newId: () => (k++ === 0 ? `row${i}` : `row${i}-log${k}`) }, ws, iso(min), offset, c);
    ws = r.worksheet;
  });
  return WorksheetSchema.parse(ws);
}

/** The status of one goal (full id) at a minute after T0. */
export function goal(ws: Worksheet, id: string, atMin: number): GoalStatus {
  const setId = id.slice(0, id.indexOf('.'));
  const g = evaluate(ws, [setId], at(atMin)).find((s) => s.id === id);
  if (!g) throw new Error(`no goal ${id}`);
  return g;
}

/** Row id of the i-th row spec (ids are assigned in the order rows are given). */
export function rowId(i: number): string {
  return `row${i}`;
}
