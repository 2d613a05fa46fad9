/**
 * The demo worksheet: an invented, clearly fictional early septic shock course, built with the
 * pure worksheet commands so it carries an ordinary edit log. Nothing here describes a real
 * person. Time zero (triage) is about 2 h 10 min before `nowMs`, so at `nowMs` the goal panel shows
 * a realistic mix: most hour-1 and SEP-1 elements met, the hour-1 antibiotic (at 75 min) and
 * vasopressor missed, repeat lactates and lactate targets pending, the SEP-1 vasopressor element
 * not applicable (no two consecutive low readings in the hour after the fluids), and the lactate
 * trend without data (one lactate so far).
 *
 * Pure: the time comes in as `nowMs`; no wall clock, no DOM.
 */
import { FixedClock, MINUTE_MS, toInstant } from '../sheet/clock.js';
import type { Cell, Worksheet } from '../sheet/model.js';
import { addRow, createWorksheet, setFacts, type Ctx } from '../sheet/worksheet.js';

export const DEMO_LABEL = 'DEMO bay 4 — fictional';
/** Minutes from time zero to `nowMs` (rounded down to the minute for time zero). */
export const DEMO_ELAPSED_MINUTES = 130;

type Spec = number | string | true | { mark: string };

function cell(v: Spec): Cell {
  if (typeof v === 'object') return { value: true, text: v.mark };
  return { value: v };
}

/** [minutes after time zero, cells]. Volumes are amounts since the previous row (design.md). */
const COURSE: readonly [number, Record<string, Spec>][] = [
  [
    0,
    {
      sbp: 92,
      dbp: 50,
      hr: 118,
      rr: 26,
      temp: 38.9,
      spo2: 93,
      crt: 4.5,
      infection_suspected: { mark: 'fever and productive cough' },
      note: 'DEMO: invented, fictional patient; not a real person. Triage.',
    },
  ],
  [12, { lactate: 4.6, wbc: 15.2, creatinine: 1.4, platelets: 180, hr: 120 }],
  [18, { sbp: 88, dbp: 52, map: 63, hr: 122, cultures_drawn: { mark: '2 sets' } }],
  [30, { sbp: 86, dbp: 50, map: 62, hr: 120, fluid_ml: 500, note: 'Balanced crystalloid bolus running. Urinary catheter placed.' }],
  [45, { sbp: 90, dbp: 52, map: 64, hr: 116, fluid_ml: 600, uo_ml: 10 }],
  [60, { sbp: 96, dbp: 52, map: 66, hr: 112, fluid_ml: 1000, uo_ml: 8, crt: 3.5 }],
  [75, { sbp: 88, dbp: 51, map: 63, hr: 114, uo_ml: 7, antibiotic: 'piperacillin-tazobactam 4.5 g IV' }],
  [85, { sbp: 98, dbp: 53, map: 67, hr: 110, uo_ml: 7 }],
  [100, { sbp: 90, dbp: 48, map: 62, hr: 112, uo_ml: 8, norepinephrine: 0.05, note: 'Norepinephrine started peripherally.' }],
  [115, { sbp: 100, dbp: 50, map: 66, hr: 106, uo_ml: 12, norepinephrine: 0.08, scvo2: 68, cvp: 9, crt: 3.5 }],
  [120, { hr: 104, perfusion_reassessed: { mark: 'bedside exam after fluids: mottling less, CRT 3.5 s' } }],
  [125, { sbp: 104, dbp: 52, map: 68, hr: 102, uo_ml: 6, norepinephrine: 0.08 }],
];

/**
 * The fictional demo worksheet as it stands at `nowMs`.
 * @param newId id maker (tests pass a counter; the app leaves it to crypto.randomUUID)
 * @param offsetMinutes the offset its times are entered and shown in (default UTC)
 */
export function demoWorksheet(nowMs: number, newId?: () => string, offsetMinutes = 0): Worksheet {
  const t0 = Math.floor((nowMs - DEMO_ELAPSED_MINUTES * MINUTE_MS) / MINUTE_MS) * MINUTE_MS;
  const clock = new FixedClock(t0);
  const ctx: Ctx = newId ? { clock, newId } : { clock };
  let ws = createWorksheet(ctx, {
    label: DEMO_LABEL,
    displayOffset: offsetMinutes,
    weightKg: 70,
    heightCm: 175,
    sex: 'male',
  });
  clock.set(t0 + 2 * MINUTE_MS);
  ws = setFacts(ctx, ws, { timeZero: { time: toInstant(t0), offset: offsetMinutes, basis: 'triage' } }).worksheet;
  for (const [min, cells] of COURSE) {
    const ms = t0 + min * MINUTE_MS;
    clock.set(ms + MINUTE_MS); // charted a minute after the moment it describes
    const c = Object.fromEntries(Object.entries(cells).map(([k, v]) => [k, cell(v)]));
    ws = addRow(ctx, ws, toInstant(ms), offsetMinutes, c).worksheet;
  }
  return { ...ws, demo: true };
}
