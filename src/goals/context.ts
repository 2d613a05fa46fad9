/**
 * What the goal engine looks at when it evaluates a worksheet at a moment: the rows charted up to
 * that moment in time order, their derived values, the dosing weight, and helpers to read values
 * and to write times and values in plain words. Pure.
 */
import { dosingWeight, type DosingWeight } from '../sheet/body.js';
import { MINUTE_MS } from '../sheet/clock.js';
import { DERIVED, deriveWorksheet, valueAt, type DerivedRow } from '../sheet/derived.js';
import { MEASURES } from '../sheet/measures.js';
import type { Row, Worksheet } from '../sheet/model.js';
import { formatClock, formatDateTime, formatDuration } from '../sheet/time.js';

/** Tolerance for threshold comparisons (reference file §15 #19: IEEE-754 makes 10% come out as 9.999…). */
export const EPS = 1e-9;

export interface TimedRow {
  row: Row;
  ms: number;
  /** Time of the previous row of the worksheet (any row), if any: the start of this row's interval. */
  prevMs: number | undefined;
}

export interface EvalContext {
  ws: Worksheet;
  atMs: number;
  /** Time zero in ms. */
  t0Ms: number;
  /** Rows at or before `atMs`, in time order (whatever order they were entered in). */
  rows: TimedRow[];
  derived: ReadonlyMap<string, DerivedRow>;
  weight: DosingWeight | undefined;
  /** Offset used to write times. */
  offset: number;
  /** Per-key caches, filled on first use (a context lives for one evaluation). */
  cache: {
    series: Map<string, Point[]>;
    present: Map<string, TimedRow[]>;
    bp?: BpPoint[];
  };
}

/** A number of one key at a row. */
export interface Point {
  r: TimedRow;
  v: number;
}

/** A row with a blood pressure reading (SBP, or MAP measured or estimated). */
export interface BpPoint {
  r: TimedRow;
  sbp: number | undefined;
  map: number | undefined;
}

/** Sorted rows with their times; stable for rows at the same instant. */
export function timedRows(ws: Worksheet): TimedRow[] {
  const sorted = ws.rows.map((row, i) => ({ row, ms: Date.parse(row.time), i })).sort((a, b) => a.ms - b.ms || a.i - b.i);
  return sorted.map((r, i) => ({ row: r.row, ms: r.ms, prevMs: i > 0 ? sorted[i - 1]!.ms : undefined }));
}

/** Builds the context; `t0Ms` must be a finite time (callers check that time zero is set). */
export function makeContext(ws: Worksheet, atMs: number, t0Ms: number, derivedRows?: readonly DerivedRow[]): EvalContext {
  const all = timedRows(ws);
  // Derived values are computed on the time-ordered rows so out-of-order input cannot bend them.
  // A caller that already has them (the app) may pass them in; they are matched by row id.
  const derived = new Map((derivedRows ?? deriveWorksheet({ ...ws, rows: all.map((r) => r.row) })).map((d) => [d.rowId, d]));
  return {
    ws,
    atMs,
    t0Ms,
    rows: all.filter((r) => r.ms <= atMs),
    derived,
    weight: dosingWeight(ws),
    offset: ws.displayOffset,
    cache: { series: new Map(), present: new Map() },
  };
}

/** Index of the first item with time >= fromMs (items sorted by time). */
function lowerBound<T extends { ms: number } | { r: { ms: number } }>(items: readonly T[], fromMs: number): number {
  let lo = 0;
  let hi = items.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    const it = items[mid]!;
    const ms = 'ms' in it ? it.ms : it.r.ms;
    if (ms < fromMs) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/** Values of `key` (charted, else derived) in rows from `fromMs` to the evaluation moment, in time order. */
export function series(ctx: EvalContext, key: string, fromMs = -Infinity): Point[] {
  let all = ctx.cache.series.get(key);
  if (!all) {
    all = [];
    for (const r of ctx.rows) {
      const v = num(ctx, r, key);
      if (v !== undefined) all.push({ r, v });
    }
    ctx.cache.series.set(key, all);
  }
  return fromMs === -Infinity ? all : all.slice(lowerBound(all, fromMs));
}

/** Rows from `fromMs` on with any value of `key` (mark, text, number or derived number). */
export function present(ctx: EvalContext, key: string, fromMs = -Infinity): TimedRow[] {
  let all = ctx.cache.present.get(key);
  if (!all) {
    all = ctx.rows.filter((r) => has(ctx, r, key));
    ctx.cache.present.set(key, all);
  }
  return fromMs === -Infinity ? all : all.slice(lowerBound(all, fromMs));
}

/** Blood pressure readings from `fromMs` to `toMs` (inclusive). */
export function bpReadings(ctx: EvalContext, fromMs: number, toMs: number): BpPoint[] {
  if (!ctx.cache.bp) {
    const out: BpPoint[] = [];
    for (const r of ctx.rows) {
      const sbp = num(ctx, r, 'sbp');
      const map = num(ctx, r, 'map');
      if (sbp !== undefined || map !== undefined) out.push({ r, sbp, map });
    }
    ctx.cache.bp = out;
  }
  const all = ctx.cache.bp;
  const out: BpPoint[] = [];
  for (let i = lowerBound(all, fromMs); i < all.length && all[i]!.r.ms <= toMs; i++) out.push(all[i]!);
  return out;
}

/** A number at a row: the charted value, else the derived one (so MAP may be estimated). */
export function num(ctx: EvalContext, r: TimedRow, key: string): number | undefined {
  return valueAt(r.row, ctx.derived.get(r.row.id), key);
}

/** Whether a row has a cell for `key` (mark, text or number) or a derived number. */
export function has(ctx: EvalContext, r: TimedRow, key: string): boolean {
  return r.row.cells[key] !== undefined || ctx.derived.get(r.row.id)?.values[key] !== undefined;
}

export function compare(a: number, op: '>' | '>=' | '<' | '<=', b: number): boolean {
  switch (op) {
    case '>':
      return a > b + EPS;
    case '>=':
      return a >= b - EPS;
    case '<':
      return a < b - EPS;
    case '<=':
      return a <= b + EPS;
  }
}

/** "08:15", or "2026-03-01 08:15" when the day differs from time zero's day, in the worksheet offset. */
export function clockText(ctx: EvalContext, ms: number): string {
  const iso = new Date(ms).toISOString();
  const day = formatDateTime(iso, ctx.offset).slice(0, 10);
  const t0Day = formatDateTime(new Date(ctx.t0Ms).toISOString(), ctx.offset).slice(0, 10);
  return day === t0Day ? formatClock(iso, ctx.offset) : formatDateTime(iso, ctx.offset);
}

/** "75 min" → "1 h 15 min", "1 h" (whole hours), "2 h 5 min": an exact duration between instants. */
export function durationText(ms: number): string {
  if (ms > 0 && ms % 3_600_000 === 0 && ms < 86_400_000) return `${ms / 3_600_000} h`;
  return formatDuration(ms);
}

/** Minutes between instants, exact. */
export function minutesBetween(fromMs: number, toMs: number): number {
  return (toMs - fromMs) / MINUTE_MS;
}

/** Short name of a measure or derived measure: "MAP", "Lactate". */
export function keyName(key: string): string {
  return MEASURES.get(key)?.short ?? DERIVED.get(key)?.short ?? key;
}

/** The short name as a word inside a sentence: "lactate", but "MAP" and "ScvO₂" stay as written. */
export function keyWord(key: string): string {
  const name = keyName(key);
  const rest = name.slice(1);
  if (rest !== rest.toLowerCase()) return name; // MAP, ScvO₂, CRT: keep as written
  const label = MEASURES.get(key)?.label ?? DERIVED.get(key)?.label ?? name;
  return label.charAt(0).toLowerCase() + label.slice(1); // Hct → hematocrit, Temp → temperature
}

/** A noun for a measure in a sentence: "lactate", "MAP"; derived measures by their label ("urine output rate"). */
export function keyNoun(key: string): string {
  if (MEASURES.has(key)) return keyWord(key);
  const label = DERIVED.get(key)?.label;
  return label ? label.charAt(0).toLowerCase() + label.slice(1) : key;
}

/** A span of minutes for people: "1 h", "4 h", "90 min" → "1 h 30 min". */
export function spanText(minutes: number): string {
  if (minutes > 0 && minutes % 60 === 0) return `${minutes / 60} h`;
  return formatDuration(minutes * MINUTE_MS);
}

/** Unit label of a measure or derived measure: "mmHg". */
export function keyUnit(key: string): string {
  const m = MEASURES.get(key);
  if (m) return m.unit?.label ?? '';
  return DERIVED.get(key)?.unitLabel ?? '';
}

function decimalsOf(key: string): number {
  return MEASURES.get(key)?.decimals ?? DERIVED.get(key)?.decimals ?? 1;
}

/** A value for people: "4.6 mmol/L". */
export function valueText(key: string, v: number): string {
  const rounded = Number(v.toFixed(decimalsOf(key)));
  const unit = keyUnit(key);
  if (unit === '%') return `${rounded}%`;
  return unit ? `${rounded} ${unit}` : String(rounded);
}

/** "Lactate 4.6 mmol/L". */
export function namedValue(key: string, v: number): string {
  return `${keyName(key)} ${valueText(key, v)}`;
}

/** Number of a volume for people: "2100 mL" (whole millilitres). */
export function mlText(ml: number): string {
  return `${Math.round(ml)} mL`;
}
