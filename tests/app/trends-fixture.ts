// A fictional worksheet for the trend tests and screenshots, built with the pure commands (used
// until the shared demo scenario exists; the browser test prefers `demoWorksheet` when present).
// Invented values: no real patient.
import { FixedClock } from '../../src/sheet/clock.js';
import type { Cell, Worksheet } from '../../src/sheet/model.js';
import { parseCellInput } from '../../src/sheet/parse.js';
import { addRow, createWorksheet, setFacts, type Ctx } from '../../src/sheet/worksheet.js';

/** The fixture's clock: 2026-03-01 10:20 UTC (11:20 at the worksheet's +01:00). */
export const TRENDS_NOW = Date.parse('2026-03-01T10:20:00Z');

function cells(entries: Record<string, string>): Record<string, Cell> {
  const out: Record<string, Cell> = {};
  for (const [key, text] of Object.entries(entries)) {
    const r = parseCellInput(key, text);
    if (!r.ok || !r.cell) throw new Error(`fixture: ${key}=${text}: ${r.ok ? 'empty' : r.error}`);
    out[key] = r.cell;
  }
  return out;
}

/**
 * Time zero 08:00 (+01:00, triage). Nine rows from 07:50 to 11:10; crystalloid at 08:05, 08:35 and
 * 09:20; antibiotic 08:05; cultures 07:50; norepinephrine from 08:50, vasopressin from 10:30.
 * Sets: the three defaults and EGDT (so ScvO₂ has a target band).
 */
export function trendsFixture(sets: string[] = ['ssc-hour1', 'sep1', 'ssc2021-targets', 'egdt']): Worksheet {
  let n = 0;
  const ctx: Ctx = { clock: new FixedClock(TRENDS_NOW), newId: () => `t${String(++n).padStart(3, '0')}` };
  let ws = createWorksheet(ctx, { label: 'Bed 12 (fictional)', displayOffset: 60, weightKg: 78, goalSets: sets });
  ws = setFacts(ctx, ws, { timeZero: { time: '2026-03-01T07:00:00.000Z', offset: 60, basis: 'triage' } }).worksheet;
  const rows: [string, Record<string, string>][] = [
    ['06:50', { sbp: '84', dbp: '46', hr: '122', temp: '38.9', lactate: '4.8', cultures_drawn: 'yes' }],
    ['07:05', { map: '58', hr: '120', fluid_ml: '1000', antibiotic: 'piperacillin-tazobactam' }],
    ['07:35', { map: '61', fluid_ml: '1000', uo_ml: '20' }],
    ['07:50', { map: '60', scvo2: '62', lactate: '4.1', norepinephrine: '0.05' }],
    ['08:20', { map: '66', fluid_ml: '500', uo_ml: '35', norepinephrine: '0.1' }],
    ['08:50', { map: '69', scvo2: '68', uo_ml: '40', norepinephrine: '0.12' }],
    ['09:30', { map: '71', scvo2: '72', lactate: '2.9', uo_ml: '50', norepinephrine: '0.12', vasopressin: '0.03' }],
    ['09:50', { map: '92', uo_ml: '30', norepinephrine: '0.1', vasopressin: '0.03' }],
    ['10:10', { map: '74', lactate: '2.2', uo_ml: '25', norepinephrine: '0.08', vasopressin: '0.03' }],
  ];
  for (const [hm, c] of rows) ws = addRow(ctx, ws, `2026-03-01T${hm}:00.000Z`, 60, cells(c)).worksheet;
  return ws;
}
