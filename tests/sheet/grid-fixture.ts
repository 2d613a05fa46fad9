// A worksheet for grid tests and screenshots, built with the pure commands. The scenario is
// invented and clearly fictional: no real patient.
import { FixedClock } from '../../src/sheet/clock.js';
import { DEFAULT_COLUMNS } from '../../src/sheet/measures.js';
import type { Cell, Worksheet } from '../../src/sheet/model.js';
import { parseCellInput } from '../../src/sheet/parse.js';
import { addRow, createWorksheet, setColumns, setFacts, type Ctx } from '../../src/sheet/worksheet.js';

/** The fixture's clock: 2026-03-01 09:30 UTC (10:30 at the worksheet's +01:00). */
export const FIXTURE_NOW = Date.parse('2026-03-01T09:30:00Z');

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
 * Four rows at 08:40, 09:10, 09:40 and 10:15 (+01:00). Columns: the defaults with shock index
 * and fluid per kg (calculated) after heart rate.
 */
export function gridFixture(): Worksheet {
  let n = 0;
  const ctx: Ctx = { clock: new FixedClock(FIXTURE_NOW), newId: () => `f${String(++n).padStart(3, '0')}` };
  let ws = createWorksheet(ctx, { label: 'Bed 7 (fictional)', displayOffset: 60, weightKg: 72 });
  ws = setFacts(ctx, ws, { timeZero: { time: '2026-03-01T07:30:00.000Z', offset: 60, basis: 'triage' } }).worksheet;
  const cols = [...DEFAULT_COLUMNS];
  cols.splice(cols.indexOf('hr') + 1, 0, 'shock_index');
  cols.splice(cols.indexOf('fluid_ml') + 1, 0, 'fluid_ml_kg');
  ws = setColumns(ctx, ws, cols).worksheet;
  ws = addRow(
    ctx,
    ws,
    '2026-03-01T07:40:00.000Z',
    60,
    cells({ sbp: '82', dbp: '44', hr: '124', rr: '26', temp: '38.9', spo2: '93', lactate: '4.6', cultures_drawn: 'yes' }),
  ).worksheet;
  ws = addRow(
    ctx,
    ws,
    '2026-03-01T08:10:00.000Z',
    60,
    cells({ map: '58', hr: '118', fluid_ml: '1000', antibiotic: 'piperacillin-tazobactam' }),
  ).worksheet;
  ws = addRow(
    ctx,
    ws,
    '2026-03-01T08:40:00.000Z',
    60,
    cells({ map: '63', sbp: '96', dbp: '48', hr: '110', fluid_ml: '1200', uo_ml: '30', norepinephrine: '0.08' }),
  ).worksheet;
  ws = addRow(
    ctx,
    ws,
    '2026-03-01T09:15:00.000Z',
    60,
    cells({ map: '68', hr: '102', spo2: '96', lactate: '3.1', uo_ml: '45', norepinephrine: '0.1', perfusion_reassessed: 'cap refill 3 s' }),
  ).worksheet;
  return ws;
}
