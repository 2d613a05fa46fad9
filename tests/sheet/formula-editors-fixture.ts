// Fictional worksheet for the formula editor tests and test page (<tm-derived-columns>,
// <tm-custom-goals>), built with the pure worksheet commands. Invented values, no real patient.
import { FixedClock } from '../../src/sheet/clock.js';
import type { Worksheet } from '../../src/sheet/model.js';
import { addRow, createWorksheet, setCustomGoals, setDerivedColumns, setFacts, type Ctx } from '../../src/sheet/worksheet.js';

/** Time zero of the fixture: 2026-03-01 08:00 at offset +01:00 (07:00 UTC). */
export const FIX_T0 = Date.parse('2026-03-01T07:00:00Z');
export const FIX_NOW = FIX_T0 + 150 * 60_000;
const OFFSET = 60;

/** Rows at 08:00, 08:40, 09:10, 09:40 local time; the last has no SBP. */
export const FIX_ROWS: readonly { min: number; hr: number; sbp?: number; dbp: number; lactate?: number; fluid_ml?: number }[] = [
  { min: 0, hr: 124, sbp: 84, dbp: 48, lactate: 4.6 },
  { min: 40, hr: 112, sbp: 92, dbp: 54, fluid_ml: 1000 },
  { min: 70, hr: 104, sbp: 101, dbp: 58, lactate: 3.1, fluid_ml: 1100 },
  { min: 100, hr: 98, dbp: 61 },
];

export function editorsWorksheet(options: { columns?: boolean; goals?: boolean } = {}): Worksheet {
  let n = 0;
  const ctx: Ctx = { clock: new FixedClock(FIX_T0 - 10 * 60_000), newId: () => `id-${++n}` };
  let ws = createWorksheet(ctx, { label: 'TEST bay 9 (fictional)', displayOffset: OFFSET, weightKg: 72 });
  ws = setFacts(ctx, ws, { timeZero: { time: new Date(FIX_T0).toISOString(), offset: OFFSET, basis: 'triage' } }).worksheet;
  for (const r of FIX_ROWS) {
    const cells: Worksheet['rows'][number]['cells'] = { hr: { value: r.hr }, dbp: { value: r.dbp } };
    if (r.sbp !== undefined) cells['sbp'] = { value: r.sbp };
    if (r.lactate !== undefined) cells['lactate'] = { value: r.lactate };
    if (r.fluid_ml !== undefined) cells['fluid_ml'] = { value: r.fluid_ml };
    ws = addRow(ctx, ws, new Date(FIX_T0 + r.min * 60_000).toISOString(), OFFSET, cells).worksheet;
  }
  if (options.columns) {
    ws = setDerivedColumns(ctx, ws, [
      {
        key: 'fluid_per_h',
        label: 'Fluid per hour since time zero',
        expression: 'fluid_total_ml / max(hours_since_t0(), 0.25)',
        unit: 'mL/h',
      },
    ]).worksheet;
  }
  if (options.goals) {
    ws = setCustomGoals(ctx, ws, [
      { id: 'sbp-90', label: 'Systolic at least 90 within 1 h', target: 'sbp >= 90', deadlineMinutes: 60 },
    ]).worksheet;
  }
  return ws;
}
