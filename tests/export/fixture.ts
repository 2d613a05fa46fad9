/**
 * An invented worksheet for export tests (fictional; no real patient). Built with the pure
 * worksheet commands so it has the same shape as one made in the app.
 */
import { FixedClock } from '../../src/sheet/clock.js';
import type { Cell, Worksheet } from '../../src/sheet/model.js';
import { parseCellInput } from '../../src/sheet/parse.js';
import { parseTimeInput } from '../../src/sheet/time.js';
import { addRow, createWorksheet, setFacts, type Ctx } from '../../src/sheet/worksheet.js';

/** Parses typed values the way the grid does; throws on a typo in the fixture itself. */
export function cells(typed: Record<string, string>): Record<string, Cell> {
  const out: Record<string, Cell> = {};
  for (const [k, v] of Object.entries(typed)) {
    const r = parseCellInput(k, v);
    if (!r.ok) throw new Error(`fixture: ${k}=${v}: ${r.error}`);
    if (r.cell) out[k] = r.cell;
  }
  return out;
}

export function at(iso: string): { time: string; offset: number } {
  const t = parseTimeInput(iso, 0);
  if (!t.ok) throw new Error(t.error);
  return { time: t.time, offset: t.offset };
}

export function ctxAt(iso: string): Ctx & { clock: FixedClock } {
  let n = 0;
  return { clock: new FixedClock(Date.parse(iso)), newId: () => `id-${++n}` };
}

/**
 * Bed 7 (fictional): 80 kg man, time zero at triage 08:00 +01:00, hypotensive with a lactate of
 * 4.6, fluids, cultures, antibiotic, norepinephrine then vasopressin, falling lactate.
 * Entries are made 5 minutes after each row's time, except the cultures row (entered 90 min late).
 */
export function fixtureWorksheet(): Worksheet {
  const ctx = ctxAt('2026-03-01T07:05:00Z');
  let ws = createWorksheet(ctx, { label: 'Bed 7 (fictional)', displayOffset: 60, weightKg: 80, heightCm: 178, sex: 'male' });
  ws = setFacts(ctx, ws, { timeZero: { ...at('2026-03-01T08:00+01:00'), basis: 'triage' } }).worksheet;
  const rows: [string, Record<string, string>, number?][] = [
    [
      '2026-03-01T08:00+01:00',
      { sbp: '82', dbp: '44', hr: '118', rr: '26', temp: '38.9', spo2: '93', gcs: '14', infection_suspected: 'yes' },
    ],
    [
      '2026-03-01T08:10+01:00',
      {
        lactate: '4.6',
        base_excess: '-5',
        hb: '11.8',
        wbc: '17.2',
        platelets: '140',
        creatinine: '1.6',
        bilirubin: '1.1',
        cultures_drawn: 'x',
      },
      90,
    ],
    ['2026-03-01T08:25+01:00', { antibiotic: 'piperacillin-tazobactam 4.5 g', fluid_ml: '1000', map: '58', crt: '4.5' }],
    [
      '2026-03-01T09:05+01:00',
      { fluid_ml: '1400', map: '61', hr: '108', cvp: '6', norepinephrine: '0.08', note: '=HYPERLINK("http://example.invalid","x")' },
    ],
    [
      '2026-03-01T09:40+01:00',
      { map: '67', norepinephrine: '0.15', vasopressin: '0.03', scvo2: '66', uo_ml: '40', perfusion_reassessed: 'bedside exam, CRT 3 s' },
    ],
    [
      '2026-03-01T10:30+01:00',
      { lactate: '2.9', map: '70', crt: '2.5', uo_ml: '60', norepinephrine: '0.12', vasopressin: '0.03', pao2: '82', fio2: '0.4' },
    ],
  ];
  for (const [time, typed, lateMin] of rows) {
    const t = at(time);
    ctx.clock.set(Date.parse(t.time) + (lateMin ?? 5) * 60_000);
    ws = addRow(ctx, ws, t.time, t.offset, cells(typed)).worksheet;
  }
  return ws;
}
