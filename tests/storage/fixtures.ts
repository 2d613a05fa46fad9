// Shared test data for the storage tests (Node and browser). An invented, fictional episode:
// no real patient. Built with the worksheet commands, so it has rows, cells of every kind and an
// edit log, exactly as the app would store it.
import { FixedClock } from '../../src/sheet/clock.js';
import type { Worksheet } from '../../src/sheet/model.js';
import { addRow, createWorksheet, setCell, setFacts } from '../../src/sheet/worksheet.js';
import type { Ctx } from '../../src/sheet/worksheet.js';

/** 2026-03-01T08:00:00Z */
export const T0 = Date.UTC(2026, 2, 1, 8, 0, 0);
export const MIN = 60_000;

/** A context with a fixed clock and predictable ids (`<prefix>-1`, `<prefix>-2`...). */
export function makeCtx(prefix = 'id', start = T0): Ctx & { clock: FixedClock } {
  let n = 0;
  return { clock: new FixedClock(start), newId: () => `${prefix}-${++n}` };
}

/** A fictional worksheet ("DEMO bed 7") with 3 rows, a correction and time zero. */
export function sampleWorksheet(ctx: Ctx & { clock: FixedClock }, label = 'DEMO bed 7 (fictional)'): Worksheet {
  let ws = createWorksheet(ctx, { label, displayOffset: 60, weightKg: 82, heightCm: 176, sex: 'male' });
  ws = setFacts(ctx, ws, { timeZero: { time: '2026-03-01T07:40:00.000Z', offset: 60, basis: 'triage' } }).worksheet;
  ctx.clock.advance(5 * MIN);
  const a = addRow(ctx, ws, '2026-03-01T07:45:00.000Z', 60, {
    sbp: { value: 84 },
    dbp: { value: 46 },
    hr: { value: 118, flag: 'high' },
    lactate: { value: 4.2, input: '4.2 mmol/L' },
    infection_suspected: { value: true, text: 'urinary source' },
  });
  ws = a.worksheet;
  ctx.clock.advance(20 * MIN);
  const b = addRow(ctx, ws, '2026-03-01T08:05:00.000Z', 60, {
    cultures_drawn: { value: true },
    antibiotic: { value: 'piperacillin-tazobactam' },
    fluid_ml: { value: 1000, input: '1 L' },
  });
  ws = b.worksheet;
  ctx.clock.advance(3 * MIN);
  // A row entered out of order: rows stay sorted by time.
  ws = addRow(ctx, ws, '2026-03-01T07:55:00.000Z', 60, { map: { value: 58 } }).worksheet;
  ctx.clock.advance(2 * MIN);
  // A correction: the log keeps the old value.
  ws = setCell(ctx, ws, a.rowId, 'hr', { value: 116, flag: 'high' }, 'monitor value re-read').worksheet;
  return ws;
}
