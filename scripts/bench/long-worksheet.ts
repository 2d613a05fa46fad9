/**
 * Long worksheets for the benchmark and the long-worksheet tests: an invented, clearly fictional
 * course charted every 10 minutes (vitals and urine every row, MAP measured on every other row,
 * fluids, a norepinephrine infusion, lactates every hour, labs every 6 hours), with an ordinary
 * edit log (one row-add and one cell entry per value, entered a minute after the row's moment).
 *
 * Deterministic: the same arguments give the same worksheet, ids included. Pure: no DOM, no wall
 * clock. Rows are built directly (sorted by construction) rather than through addRow, which
 * re-sorts on every call and would make 5,000 rows quadratic.
 */
import type { Cell, EditLogEntry, Row, Worksheet } from '../../src/sheet/model.js';
import { DEFAULT_COLUMNS } from '../../src/sheet/measures.js';

export interface LongWorksheetOptions {
  rows: number;
  /** Distinguishes the worksheets of one notebook (ids, label). */
  index?: number;
  /** Time zero, ms; default 2026-03-01 08:00 UTC. */
  t0Ms?: number;
  /** Minutes between rows (default 10). */
  stepMinutes?: number;
}

const DEFAULT_T0 = Date.parse('2026-03-01T08:00:00.000Z');
const MINUTE = 60_000;

/** Small deterministic integer noise (no Math.random: the same input gives the same sheet). */
function wobble(k: number, spread: number): number {
  const x = Math.sin(k * 12.9898 + 78.233) * 43758.5453;
  return Math.round((x - Math.floor(x)) * spread * 2 - spread);
}

/** The cells of row k (k = 0 is time zero). Values stay inside every measure's accepted range. */
export function longRowCells(k: number): Record<string, Cell> {
  const c: Record<string, Cell> = {};
  const sbp = 96 + wobble(k, 12);
  const dbp = 52 + wobble(k + 1, 6);
  c['sbp'] = { value: sbp };
  c['dbp'] = { value: dbp };
  if (k % 2 === 0) c['map'] = { value: Math.round(dbp + (sbp - dbp) / 3) + wobble(k + 2, 2) };
  c['hr'] = { value: 104 + wobble(k + 3, 14) };
  c['rr'] = { value: 22 + wobble(k + 4, 4) };
  c['spo2'] = { value: 95 + wobble(k + 5, 2) };
  if (k % 3 === 0) c['temp'] = { value: Math.round((37.8 + wobble(k + 6, 8) / 10) * 10) / 10 };
  if (k > 0) c['uo_ml'] = { value: 10 + Math.abs(wobble(k + 7, 10)) };
  if (k % 4 === 1 && k < 40) c['fluid_ml'] = { value: 500 };
  if (k >= 6) c['norepinephrine'] = { value: Math.round((0.08 + wobble(k + 8, 4) / 100) * 1000) / 1000 };
  if (k % 6 === 1) c['lactate'] = { value: Math.round((4.2 - Math.min(k, 60) / 25 + wobble(k + 9, 3) / 10) * 10) / 10 };
  if (k % 36 === 1) {
    c['wbc'] = { value: 14 + wobble(k + 10, 3) };
    c['platelets'] = { value: 160 + wobble(k + 11, 30) };
    c['creatinine'] = { value: Math.round((1.4 + wobble(k + 12, 3) / 10) * 10) / 10 };
    c['bilirubin'] = { value: 1.1 };
    c['gcs'] = { value: 14 };
  }
  if (k === 1) c['cultures_drawn'] = { value: true, text: '2 sets' };
  if (k === 2) c['antibiotic'] = { value: 'piperacillin-tazobactam (fictional course)' };
  if (k === 0) c['infection_suspected'] = { value: true, text: 'fictional scenario' };
  if (k === 12) c['perfusion_reassessed'] = { value: true, text: 'fictional: bedside exam repeated' };
  return c;
}

/** A valid worksheet of `rows` rows (checked by the tests against the zod schema). */
export function longWorksheet(options: LongWorksheetOptions): Worksheet {
  const index = options.index ?? 0;
  const t0 = options.t0Ms ?? DEFAULT_T0;
  const step = (options.stepMinutes ?? 10) * MINUTE;
  const wsId = `bench-ws-${String(index).padStart(4, '0')}`;
  const iso = (ms: number) => new Date(ms).toISOString();
  const rows: Row[] = [];
  const log: EditLogEntry[] = [];
  let seq = 0;
  const entryId = () => `${wsId}-e${seq++}`;
  log.push({ id: entryId(), at: iso(t0), kind: 'facts', old: '{"timeZero":null}', new: `{"timeZero":"${iso(t0)}"}` });
  for (let k = 0; k < options.rows; k++) {
    const time = iso(t0 + k * step);
    const at = iso(t0 + k * step + MINUTE);
    const row: Row = { id: `${wsId}-r${String(k).padStart(5, '0')}`, time, offset: 0, cells: longRowCells(k) };
    rows.push(row);
    log.push({ id: entryId(), at, kind: 'row-add', rowId: row.id, new: time });
    for (const [key, cell] of Object.entries(row.cells))
      log.push({ id: entryId(), at, kind: 'cell', rowId: row.id, key, old: null, new: cell });
  }
  const last = rows.length > 0 ? Date.parse(rows[rows.length - 1]!.time) + MINUTE : t0;
  return {
    id: wsId,
    label: `Bench ${index + 1} (fictional)`,
    createdAt: iso(t0),
    updatedAt: iso(last),
    rev: log.length,
    archived: false,
    weightKg: 70,
    heightCm: 175,
    sex: 'male',
    useIdealWeight: false,
    timeZero: { time: iso(t0), offset: 0, basis: 'triage' },
    displayOffset: 0,
    goalSets: ['ssc-hour1', 'sep1', 'ssc2021-targets'],
    customGoals: [],
    derivedColumns: [],
    columns: [...DEFAULT_COLUMNS],
    rows,
    log,
  };
}

/** The moment just after the last row (the "now" a bench evaluates goals at). */
export function longWorksheetNow(ws: Worksheet): number {
  const last = ws.rows[ws.rows.length - 1];
  return (last ? Date.parse(last.time) : Date.parse(ws.createdAt)) + 5 * MINUTE;
}
