/**
 * The trends beside the worksheet, as data (pure: no DOM, no wall clock).
 *
 * `buildTrends(ws, derived, goals, nowMs)` turns a worksheet, its derived values and the goal
 * statuses into everything <tm-trends> draws and says:
 * - one series per measure (MAP, lactate, ScvO₂, urine output per kg per hour, norepinephrine
 *   equivalent), each point a row with its value, time since time zero and a verdict against the
 *   target bands in force (in range, above, below, or no target);
 * - the target bands, read from the goal-set data (`target` rules with a `range` or
 *   `drop-from-first` test) of the sets in force, never typed here; a band starts where its goal
 *   starts to count values (time zero minus the rule's look-back, or the moment its condition
 *   arose, from the goal status);
 * - markers: time zero, now, each goal deadline (goals due at the same minute share one marker),
 *   crystalloid and blood given, antibiotics, blood cultures;
 * - a shared time axis in minutes since time zero, a value axis per series, and text alternatives
 *   (one sentence per series, a table of values, plain lines for the note).
 */
import { compare, EPS } from '../goals/context.js';
import { defaultRegistry, type GoalRegistry } from '../goals/registry.js';
import type { GoalDef, GoalSetDef, GoalStatusKind } from '../goals/schema.js';
import { targetRangeText } from '../goals/rules.js';
import type { GoalStatus } from '../goals/status.js';
import { MINUTE_MS } from '../sheet/clock.js';
import { DERIVED, valueAt, type DerivedRow } from '../sheet/derived.js';
import { MEASURES } from '../sheet/measures.js';
import type { Row, Worksheet } from '../sheet/model.js';
import { formatClock, formatDuration } from '../sheet/time.js';
import { STATUS_SYMBOL, STATUS_WORD } from './theme.js';

/** The measures the trends show, in panel order. */
export const TREND_KEYS = ['map', 'lactate', 'scvo2', 'uo_ml_kg_h', 'ne_equivalent'] as const;
export type TrendKey = (typeof TREND_KEYS)[number];

interface TrendMeasure {
  key: TrendKey;
  /** Panel title. */
  title: string;
  /** Whether the value axis starts at zero (amounts and rates); otherwise it fits the data. */
  fromZero: boolean;
  /** Upper limit of the value axis when the measure cannot exceed it (saturations). */
  ceiling?: number;
  /** The value describes the interval since the previous row (urine rate). */
  interval: boolean;
  /** What to say when no goal set gives this measure a target. */
  noTarget: string;
  /** Smallest value span of the axis, so one value or a flat run is not magnified (display choice). */
  minSpan: number;
}

const MEASURE_INFO: readonly TrendMeasure[] = [
  { key: 'map', title: 'MAP', fromZero: false, interval: false, noTarget: 'no MAP target in the goal sets in force', minSpan: 20 },
  {
    key: 'lactate',
    title: 'Lactate',
    fromZero: true,
    interval: false,
    noTarget: 'no lactate target in the goal sets in force',
    minSpan: 2,
  },
  {
    key: 'scvo2',
    title: 'ScvO₂',
    fromZero: false,
    ceiling: 100,
    interval: false,
    noTarget: 'no ScvO₂ target in the goal sets in force',
    minSpan: 15,
  },
  {
    key: 'uo_ml_kg_h',
    title: 'Urine output',
    fromZero: true,
    interval: true,
    noTarget: 'no urine-output target in the goal sets in force',
    minSpan: 1,
  },
  {
    key: 'ne_equivalent',
    title: 'Norepinephrine equivalent',
    fromZero: true,
    interval: false,
    noTarget: 'a dose, not a goal: no target band',
    minSpan: 0.1,
  },
];

/** Short names of the published sets, for band labels (the full title is in the set data). */
const SET_SHORT: Readonly<Record<string, string>> = {
  'ssc-hour1': 'Hour-1 bundle',
  sep1: 'SEP-1',
  'ssc2021-targets': 'SSC 2021',
  egdt: 'EGDT',
};

export function setShortName(set: Pick<GoalSetDef, 'id' | 'title'>): string {
  return SET_SHORT[set.id] ?? set.title;
}

/** Unit label and decimals of a trend measure, from the measure catalog or the derived definitions. */
export function unitOf(key: string): { unit: string; decimals: number } {
  const m = MEASURES.get(key);
  if (m) return { unit: m.unit?.label ?? '', decimals: m.decimals ?? 1 };
  const d = DERIVED.get(key);
  return { unit: d?.unitLabel ?? '', decimals: d?.decimals ?? 2 };
}

/** A value for people: the measure's decimals, trailing zeros kept off. */
export function valueText(key: string, v: number): string {
  const { decimals } = unitOf(key);
  return String(Number(v.toFixed(Math.min(decimals, 2))));
}

export type Verdict = 'in' | 'above' | 'below' | 'none';

/** Symbols and words of a point's verdict (never colour alone). */
export const VERDICT_SYMBOL: Readonly<Record<Verdict, string>> = { in: '●', above: '▲', below: '▼', none: '○' };
export const VERDICT_WORD: Readonly<Record<Verdict, string>> = {
  in: 'in range',
  above: 'above target',
  below: 'below target',
  none: 'no target in force',
};

export interface TrendBand {
  /** Full goal ids (`set.goal`) that give this band (identical bands of several sets merge). */
  goalIds: string[];
  key: TrendKey;
  /** `range`: min ≤ value ≤ max. `drop`: value at least `dropPct` % below the first value. */
  kind: 'range' | 'drop';
  /** Lower and upper bound in the measure's unit (a drop band has only `max`, the level to reach). */
  min: number | null;
  max: number | null;
  /** Drop bands: the per-cent fall asked for and the first value it counts from. */
  dropPct: number | null;
  reference: { value: number; rowId: string; minutes: number } | null;
  /** Where values start to count, minutes since the origin. */
  fromMinutes: number;
  /** Short names of the sets, e.g. ["SSC 2021", "EGDT"]. */
  sets: string[];
  /** The target in words, with unit: "≥ 65 mmHg", "≥ 10% below the first value (≤ 4.1 mmol/L)". */
  rangeText: string;
  /** Short label drawn on the band: "target ≥ 65". */
  shortText: string;
  /** "target ≥ 65 mmHg (SSC 2021, EGDT), counted from 1 h 10 min". */
  label: string;
}

/** A target of a set in force that draws no band now, with why. */
export interface InactiveTarget {
  goalId: string;
  key: TrendKey;
  rangeText: string;
  set: string;
  why: string;
}

export interface TrendPoint {
  rowId: string;
  timeMs: number;
  /** Minutes since the origin (time zero). */
  minutes: number;
  /** For interval measures: minutes since the origin of the start of the interval. */
  fromMinutes: number | null;
  value: number;
  verdict: Verdict;
  /** Bands the value fails, in words: "≥ 65 mmHg (SSC 2021)". */
  failed: string[];
  /** Bands in force at this point's time. */
  judgedBy: number;
}

export interface TrendSeries {
  key: TrendKey;
  title: string;
  unit: string;
  decimals: number;
  points: TrendPoint[];
  bands: TrendBand[];
  inactive: InactiveTarget[];
  /** Value axis: domain and ticks. */
  yMin: number;
  yMax: number;
  yTicks: number[];
  noTarget: string;
  /** One sentence for people (the text alternative). */
  summary: string;
}

export type MarkerKind = 'time-zero' | 'now' | 'deadline' | 'fluid' | 'blood' | 'antibiotic' | 'cultures';

export interface DeadlineGoal {
  id: string;
  label: string;
  set: string;
  status: GoalStatusKind;
}

export interface TrendMarker {
  kind: MarkerKind;
  timeMs: number;
  minutes: number;
  /** Row of an event marker. */
  rowId: string | null;
  /** Symbol drawn: ◆ fluids, ◇ blood, A antibiotic, C cultures; empty for lines. */
  symbol: string;
  /** Short text drawn next to it: "1000 mL", "1 h", "time zero". */
  short: string;
  /** Full words: for the title and the text alternative. */
  text: string;
  /** Deadlines: the goals due then. */
  goals: DeadlineGoal[];
}

export interface TrendModel {
  /** Time zero, or the first row when time zero is not set (then `hasTimeZero` is false). */
  originMs: number;
  hasTimeZero: boolean;
  nowMs: number;
  offset: number;
  xMin: number;
  xMax: number;
  /** Tick positions in minutes since the origin (multiples of the step inside [xMin, xMax]). */
  xTicks: number[];
  series: TrendSeries[];
  markers: TrendMarker[];
  /** Deadlines beyond the right end of the time axis (listed, not drawn as lines). */
  laterDeadlines: TrendMarker[];
  /** Minutes since the origin of each row (for the selected-row line). */
  rowMinutes: ReadonlyMap<string, number>;
}

export interface BuildOptions {
  registry?: GoalRegistry;
}

// --- Scales --------------------------------------------------------------------------------

/** A "nice" step (1, 2, 2.5 or 5 × 10^n) near span / count. */
export function niceStep(span: number, count: number): number {
  if (!(span > 0) || !(count > 0)) return 1;
  const raw = span / count;
  const pow = 10 ** Math.floor(Math.log10(raw));
  const f = raw / pow;
  const nice = f <= 1 ? 1 : f <= 2 ? 2 : f <= 2.5 ? 2.5 : f <= 5 ? 5 : 10;
  return nice * pow;
}

/** Ticks from lo to hi at a nice step (lo and hi widened to multiples of the step). */
export function niceTicks(lo: number, hi: number, count = 4): { min: number; max: number; ticks: number[] } {
  if (hi - lo < 1e-12) {
    const pad = Math.abs(lo) > 0 ? Math.abs(lo) * 0.1 : 1;
    lo -= pad;
    hi += pad;
  }
  const step = niceStep(hi - lo, count);
  const min = Math.floor(lo / step + 1e-9) * step;
  const max = Math.ceil(hi / step - 1e-9) * step;
  const ticks: number[] = [];
  for (let v = min; v <= max + step / 2; v += step) ticks.push(Number(v.toPrecision(12)));
  return { min: Number(min.toPrecision(12)), max: Number(max.toPrecision(12)), ticks };
}

/** Time-axis step in minutes: 15, 30, 60, 120, 240, 360, 720 or 1440, about `count` ticks. */
export function timeStep(spanMinutes: number, count = 6): number {
  const steps = [15, 30, 60, 120, 240, 360, 720, 1440];
  return steps.find((s) => spanMinutes / s <= count) ?? 1440;
}

/** "0", "30 min", "1 h", "1 h 30", "−30 min": a tick label of the time axis. */
export function minutesLabel(m: number): string {
  if (m === 0) return '0';
  const sign = m < 0 ? '−' : '';
  const a = Math.abs(Math.round(m));
  if (a < 60) return `${sign}${a} min`;
  const h = Math.floor(a / 60);
  const mm = a % 60;
  return `${sign}${h} h${mm ? ` ${String(mm).padStart(2, '0')}` : ''}`;
}

/** "1 h 10 min after time zero", "20 min before time zero", "at time zero". */
export function sinceText(minutes: number, hasTimeZero: boolean): string {
  const anchor = hasTimeZero ? 'time zero' : 'the first row';
  if (Math.abs(minutes) < 1e-9) return `at ${anchor}`;
  const d = formatDuration(Math.abs(minutes) * MINUTE_MS);
  return minutes > 0 ? `${d} after ${anchor}` : `${d} before ${anchor}`;
}

/**
 * Greedy lanes for labels along one axis: each label goes to the first lane whose last label
 * ends at least `gap` before it. Returns the lane index of each x (in input order).
 */
export function assignLanes(xs: readonly number[], gap: number, maxLanes = 3): number[] {
  const order = xs.map((x, i) => ({ x, i })).sort((a, b) => a.x - b.x);
  const lastX: number[] = [];
  const lanes = new Array<number>(xs.length).fill(0);
  for (const { x, i } of order) {
    let lane = lastX.findIndex((l) => x - l >= gap);
    if (lane < 0) lane = lastX.length < maxLanes ? lastX.length : lastX.indexOf(Math.min(...lastX));
    lastX[lane] = x;
    lanes[i] = lane;
  }
  return lanes;
}

// --- Bands from the goal-set data -----------------------------------------------------------

interface RawBand {
  goalId: string;
  key: TrendKey;
  set: string;
  kind: 'range' | 'drop';
  min: number | null;
  max: number | null;
  dropPct: number | null;
  fromMs: number;
}

function isTrendKey(key: string): key is TrendKey {
  return (TREND_KEYS as readonly string[]).includes(key);
}

interface Timed {
  row: Row;
  ms: number;
  derived: DerivedRow | undefined;
}

/**
 * The bands of the target goals of the sets in force. A band starts at time zero minus the
 * rule's look-back, or, for a rule counted from its condition, at the moment the goal status
 * says the condition arose. A goal that does not apply (or cannot tell yet) draws no band.
 */
function bandsFor(
  sets: readonly GoalSetDef[],
  goals: ReadonlyMap<string, GoalStatus>,
  originMs: number,
  hasTimeZero: boolean,
  timed: readonly Timed[],
): { bands: RawBand[]; inactive: InactiveTarget[]; refs: Map<string, { value: number; rowId: string; ms: number }> } {
  const bands: RawBand[] = [];
  const inactive: InactiveTarget[] = [];
  const refs = new Map<string, { value: number; rowId: string; ms: number }>();
  for (const set of sets) {
    for (const goal of set.goals as readonly GoalDef[]) {
      const rule = goal.rule;
      if (rule.kind !== 'target' || !isTrendKey(rule.key)) continue;
      const id = `${set.id}.${goal.id}`;
      const short = setShortName(set);
      const rangeText = targetRangeText(rule.key, rule.test);
      const status = goals.get(id);
      const off = (why: string): void => {
        inactive.push({ goalId: id, key: rule.key as TrendKey, rangeText, set: short, why });
      };
      let fromMs = originMs - (rule.lookbackMinutes ?? 0) * MINUTE_MS;
      if (status?.status === 'not-applicable') {
        off(`does not apply now (applies when ${goal.appliesWhen})`);
        continue;
      }
      if (rule.from === 'condition' && goal.condition.kind !== 'always') {
        if (!hasTimeZero) {
          off('counts from its condition, which needs time zero');
          continue;
        }
        const since = status?.conditionSince ? Date.parse(status.conditionSince) : undefined;
        if (since === undefined) {
          off(`cannot tell yet whether it applies (applies when ${goal.appliesWhen})`);
          continue;
        }
        fromMs = Math.max(fromMs, since);
      }
      const test = rule.test;
      if (test.kind === 'range') {
        bands.push({
          goalId: id,
          key: rule.key,
          set: short,
          kind: 'range',
          min: test.min ?? null,
          max: test.max ?? null,
          dropPct: null,
          fromMs,
        });
      } else {
        const first = timed.find((t) => t.ms >= fromMs && valueAt(t.row, t.derived, rule.key) !== undefined);
        if (!first) {
          off('no value yet to count the fall from');
          continue;
        }
        const ref = valueAt(first.row, first.derived, rule.key)!;
        refs.set(id, { value: ref, rowId: first.row.id, ms: first.ms });
        bands.push({
          goalId: id,
          key: rule.key,
          set: short,
          kind: 'drop',
          min: null,
          max: Number((ref * (1 - test.minDropPct / 100)).toPrecision(12)),
          dropPct: test.minDropPct,
          fromMs,
        });
      }
    }
  }
  return { bands, inactive, refs };
}

function bandShort(key: TrendKey, b: Pick<TrendBand, 'kind' | 'min' | 'max' | 'dropPct'>): string {
  if (b.kind === 'drop') return `target ≤ ${valueText(key, b.max!)}`;
  if (b.min !== null && b.max !== null) return `target ${b.min}–${b.max}`;
  if (b.min !== null) return `target ≥ ${b.min}`;
  if (b.max !== null) return `target ≤ ${b.max}`;
  return 'target: any value';
}

/** Whether a value passes a band (the engine's comparisons, with its tolerance). */
export function passes(b: Pick<TrendBand, 'kind' | 'min' | 'max' | 'dropPct' | 'reference'>, v: number): 'in' | 'above' | 'below' {
  if (b.kind === 'drop') {
    const ref = b.reference?.value;
    if (ref === undefined || !(ref > 0)) return 'above';
    const dropPct = (100 * (ref - v)) / ref;
    return (b.dropPct ?? 0) > 0 ? (dropPct >= b.dropPct! - EPS ? 'in' : 'above') : compare(v, '<', ref) ? 'in' : 'above';
  }
  if (b.min !== null && !compare(v, '>=', b.min)) return 'below';
  if (b.max !== null && !compare(v, '<=', b.max)) return 'above';
  return 'in';
}

// --- The model ------------------------------------------------------------------------------

function numCell(row: Row, key: string): number | undefined {
  const c = row.cells[key];
  return c && typeof c.value === 'number' ? c.value : undefined;
}

function markCell(row: Row, key: string): string | undefined {
  const c = row.cells[key];
  if (!c) return undefined;
  if (typeof c.value === 'string') return c.value.trim() || undefined;
  if (c.value === true) return c.text?.trim() || 'yes';
  return undefined;
}

/** Builds the trends of a worksheet at `nowMs`. `goals` are the engine's statuses at `nowMs`. */
export function buildTrends(
  ws: Worksheet,
  derived: readonly DerivedRow[],
  goals: readonly GoalStatus[],
  nowMs: number,
  options: BuildOptions = {},
): TrendModel {
  const registry = options.registry ?? defaultRegistry;
  const byRow = new Map(derived.map((d) => [d.rowId, d]));
  const timed: Timed[] = ws.rows
    .map((row, i) => ({ row, ms: Date.parse(row.time), i, derived: byRow.get(row.id) }))
    .sort((a, b) => a.ms - b.ms || a.i - b.i)
    .map(({ row, ms, derived: d }) => ({ row, ms, derived: d }));
  const t0 = ws.timeZero ? Date.parse(ws.timeZero.time) : NaN;
  const hasTimeZero = Number.isFinite(t0);
  const originMs = hasTimeZero ? t0 : (timed[0]?.ms ?? nowMs);
  const mins = (ms: number): number => (ms - originMs) / MINUTE_MS;
  const offset = ws.displayOffset;

  const goalById = new Map(goals.map((g) => [g.id, g]));
  const sets = ws.goalSets.map((id) => registry.get(id)).filter((s): s is GoalSetDef => s !== undefined);
  const raw = bandsFor(sets, goalById, originMs, hasTimeZero, timed);

  // --- Markers -----------------------------------------------------------------------------
  const markers: TrendMarker[] = [];
  if (hasTimeZero) {
    const basis = ws.timeZero!.basis === 'other' ? (ws.timeZero!.reason ?? 'other') : ws.timeZero!.basis;
    markers.push({
      kind: 'time-zero',
      timeMs: t0,
      minutes: 0,
      rowId: null,
      symbol: '',
      short: 'time zero',
      text: `Time zero at ${formatClock(ws.timeZero!.time, offset)} (${basis})`,
      goals: [],
    });
  }
  markers.push({
    kind: 'now',
    timeMs: nowMs,
    minutes: mins(nowMs),
    rowId: null,
    symbol: '',
    short: 'now',
    text: `Now, ${formatClock(new Date(nowMs).toISOString(), offset)}, ${sinceText(mins(nowMs), hasTimeZero)}`,
    goals: [],
  });

  const deadlines = new Map<number, DeadlineGoal[]>();
  for (const g of goals) {
    if (!g.deadline) continue;
    const ms = Math.round(Date.parse(g.deadline) / MINUTE_MS) * MINUTE_MS;
    if (!Number.isFinite(ms)) continue;
    const list = deadlines.get(ms) ?? [];
    list.push({ id: g.id, label: g.label, set: setShortName({ id: g.setId, title: g.setTitle }), status: g.status });
    deadlines.set(ms, list);
  }
  for (const [ms, list] of [...deadlines.entries()].sort((a, b) => a[0] - b[0])) {
    const m = mins(ms);
    const names = list.map((g) => `${g.set}: ${g.label} (${STATUS_SYMBOL[g.status]} ${STATUS_WORD[g.status].toLowerCase()})`).join('; ');
    markers.push({
      kind: 'deadline',
      timeMs: ms,
      minutes: m,
      rowId: null,
      symbol: '',
      short: `due ${minutesLabel(m)}`,
      text: `Deadline ${formatClock(new Date(ms).toISOString(), offset)}, ${sinceText(m, hasTimeZero)}: ${names}`,
      goals: list,
    });
  }
  for (const t of timed) {
    const m = mins(t.ms);
    const at = `${formatClock(t.row.time, offset)}, ${sinceText(m, hasTimeZero)}`;
    const fluid = numCell(t.row, 'fluid_ml');
    if (fluid !== undefined && fluid > 0) {
      markers.push({
        kind: 'fluid',
        timeMs: t.ms,
        minutes: m,
        rowId: t.row.id,
        symbol: '◆',
        short: `${Math.round(fluid)} mL`,
        text: `Crystalloid ${Math.round(fluid)} mL charted at ${at}`,
        goals: [],
      });
    }
    const blood = numCell(t.row, 'blood_ml');
    if (blood !== undefined && blood > 0) {
      markers.push({
        kind: 'blood',
        timeMs: t.ms,
        minutes: m,
        rowId: t.row.id,
        symbol: '◇',
        short: `${Math.round(blood)} mL`,
        text: `Blood product ${Math.round(blood)} mL charted at ${at}`,
        goals: [],
      });
    }
    const abx = markCell(t.row, 'antibiotic');
    if (abx !== undefined) {
      markers.push({
        kind: 'antibiotic',
        timeMs: t.ms,
        minutes: m,
        rowId: t.row.id,
        symbol: 'A',
        short: abx.length > 18 ? `${abx.slice(0, 17)}…` : abx,
        text: `Antibiotic ${abx} at ${at}`,
        goals: [],
      });
    }
    const cultures = markCell(t.row, 'cultures_drawn');
    if (cultures !== undefined) {
      markers.push({
        kind: 'cultures',
        timeMs: t.ms,
        minutes: m,
        rowId: t.row.id,
        symbol: 'C',
        short: 'cultures',
        text: `Blood cultures drawn at ${at}${cultures !== 'yes' ? ` (${cultures})` : ''}`,
        goals: [],
      });
    }
  }

  // --- Time axis ---------------------------------------------------------------------------
  const lastRow = timed.length > 0 ? mins(timed[timed.length - 1]!.ms) : 0;
  const firstRow = timed.length > 0 ? mins(timed[0]!.ms) : 0;
  const nowMin = mins(nowMs);
  const lo = Math.min(0, firstRow, nowMin);
  const charted = Math.max(lastRow, nowMin, 60);
  let hi = charted;
  // Deadlines in the hour ahead widen the axis; later ones are listed at its right edge
  // (`laterDeadlines`) so the charted hours keep their room.
  for (const mk of markers) if (mk.kind === 'deadline' && mk.minutes <= charted + 60) hi = Math.max(hi, mk.minutes);
  const span = hi - lo;
  const xMin = lo - span * 0.03;
  const xMax = hi + span * 0.03;
  const step = timeStep(span);
  const xTicks: number[] = [];
  for (let m = Math.ceil(xMin / step) * step; m <= xMax; m += step) xTicks.push(m);
  const laterDeadlines = markers.filter((mk) => mk.kind === 'deadline' && mk.minutes > xMax);

  // --- Series ------------------------------------------------------------------------------
  const series = MEASURE_INFO.map((info): TrendSeries => {
    const { unit, decimals } = unitOf(info.key);
    const bands = mergeBands(
      info.key,
      raw.bands.filter((b) => b.key === info.key),
      raw.refs,
      mins,
      hasTimeZero,
      unit,
    );
    const points: TrendPoint[] = [];
    timed.forEach((t, i) => {
      const v = valueAt(t.row, t.derived, info.key);
      if (v === undefined) return;
      const prev = i > 0 ? timed[i - 1]!.ms : undefined;
      let verdict: Verdict = 'none';
      const failed: string[] = [];
      let judgedBy = 0;
      for (const b of bands) {
        if (t.ms < originMs + b.fromMinutes * MINUTE_MS) continue;
        judgedBy += 1;
        const r = passes(b, v);
        if (r !== 'in') {
          failed.push(`${b.rangeText} (${b.sets.join(', ')})`);
          if (verdict !== 'below' && verdict !== 'above') verdict = r;
        } else if (verdict === 'none') verdict = 'in';
      }
      points.push({
        rowId: t.row.id,
        timeMs: t.ms,
        minutes: mins(t.ms),
        fromMinutes: info.interval && prev !== undefined ? mins(prev) : null,
        value: v,
        verdict,
        failed,
        judgedBy,
      });
    });
    const values = points.map((p) => p.value);
    for (const b of bands) {
      if (b.min !== null) values.push(b.min);
      if (b.max !== null) values.push(b.max);
    }
    let yLo = values.length ? Math.min(...values) : 0;
    let yHi = values.length ? Math.max(...values) : 1;
    if (info.fromZero) yLo = Math.min(0, yLo);
    if (yHi - yLo < info.minSpan) {
      const grow = info.minSpan - (yHi - yLo);
      if (info.fromZero && yLo === 0) yHi += grow;
      else {
        yLo -= grow / 2;
        yHi += grow / 2;
        if (info.ceiling !== undefined && yHi > info.ceiling) {
          yLo -= yHi - info.ceiling;
          yHi = info.ceiling;
        }
      }
    }
    const pad = (yHi - yLo) * 0.08;
    if (!info.fromZero) yLo -= pad;
    yHi += pad;
    const nt = niceTicks(yLo, yHi, 4);
    let yMax = nt.max;
    let ticks = nt.ticks;
    if (info.ceiling !== undefined && yMax > info.ceiling && Math.max(...values, -Infinity) <= info.ceiling) {
      yMax = info.ceiling;
      ticks = ticks.filter((x) => x <= info.ceiling!);
      if (ticks[ticks.length - 1] !== info.ceiling) ticks.push(info.ceiling);
    }
    const inactive = raw.inactive.filter((x) => x.key === info.key);
    const s: TrendSeries = {
      key: info.key,
      title: info.title,
      unit,
      decimals,
      points,
      bands,
      inactive,
      yMin: nt.min,
      yMax,
      yTicks: ticks,
      noTarget: info.noTarget,
      summary: '',
    };
    s.summary = seriesSummary(s, hasTimeZero, offset);
    return s;
  });

  const rowMinutes = new Map(timed.map((t) => [t.row.id, mins(t.ms)]));
  return { originMs, hasTimeZero, nowMs, offset, xMin, xMax, xTicks, series, markers, laterDeadlines, rowMinutes };
}

function mergeBands(
  key: TrendKey,
  raw: readonly RawBand[],
  refs: ReadonlyMap<string, { value: number; rowId: string; ms: number }>,
  mins: (ms: number) => number,
  hasTimeZero: boolean,
  unit: string,
): TrendBand[] {
  const out: TrendBand[] = [];
  for (const b of raw) {
    const ref = refs.get(b.goalId);
    const same = out.find((o) => o.kind === 'range' && b.kind === 'range' && o.min === b.min && o.max === b.max);
    if (same) {
      same.goalIds.push(b.goalId);
      if (!same.sets.includes(b.set)) same.sets.push(b.set);
      same.fromMinutes = Math.min(same.fromMinutes, mins(b.fromMs));
      continue;
    }
    const u = unit ? ` ${unit}` : '';
    const rangeText =
      b.kind === 'drop'
        ? `≥ ${b.dropPct ?? 0}% below the first value (≤ ${valueText(key, b.max!)}${u})`
        : b.min !== null && b.max !== null
          ? `${b.min}–${b.max}${u}`
          : b.min !== null
            ? `≥ ${b.min}${u}`
            : b.max !== null
              ? `≤ ${b.max}${u}`
              : 'any value';
    out.push({
      goalIds: [b.goalId],
      key,
      kind: b.kind,
      min: b.min,
      max: b.max,
      dropPct: b.dropPct,
      reference: ref ? { value: ref.value, rowId: ref.rowId, minutes: mins(ref.ms) } : null,
      fromMinutes: mins(b.fromMs),
      sets: [b.set],
      rangeText,
      shortText: '',
      label: '',
    });
  }
  for (const b of out) {
    b.shortText = bandShort(key, b);
    const from = Math.abs(b.fromMinutes) < 1e-9 ? '' : `, counted from ${sinceText(b.fromMinutes, hasTimeZero)}`;
    b.label = `target ${b.rangeText} (${b.sets.join(', ')})${from}`;
  }
  return out;
}

function countWord(n: number, one: string, many: string): string {
  return `${n} ${n === 1 ? one : many}`;
}

/** One sentence (or two) saying what a series did against its targets: the text alternative. */
export function seriesSummary(
  s: Pick<TrendSeries, 'key' | 'title' | 'unit' | 'points' | 'bands' | 'inactive' | 'noTarget'>,
  hasTimeZero: boolean,
  offset: number,
): string {
  const u = s.unit ? ` ${s.unit}` : '';
  const v = (x: number): string => valueText(s.key, x);
  if (s.points.length === 0) {
    const targets = s.bands.length ? ` Target ${s.bands.map((b) => `${b.rangeText} (${b.sets.join(', ')})`).join('; ')}.` : '';
    return `${s.title}: no values charted.${targets}`;
  }
  const first = s.points[0]!;
  const last = s.points[s.points.length - 1]!;
  const at = (p: TrendPoint): string => `${formatClock(new Date(p.timeMs).toISOString(), offset)}, ${sinceText(p.minutes, hasTimeZero)}`;
  const values = s.points.map((p) => p.value);
  const lowest = Math.min(...values);
  const highest = Math.max(...values);
  let text =
    s.points.length === 1
      ? `${s.title}: one value, ${v(first.value)}${u} at ${at(first)}.`
      : `${s.title}: ${countWord(s.points.length, 'value', 'values')}, from ${v(first.value)}${u} at ${at(first)} to ${v(last.value)}${u} at ${at(last)} (lowest ${v(lowest)}, highest ${v(highest)}).`;
  if (s.bands.length === 0) {
    text += ` No target band: ${s.noTarget}.`;
  } else {
    const judged = s.points.filter((p) => p.verdict !== 'none');
    const out = judged.filter((p) => p.verdict === 'above' || p.verdict === 'below').length;
    const latest =
      last.verdict === 'none' ? 'the latest value is before any target counts' : `the latest value is ${VERDICT_WORD[last.verdict]}`;
    text += ` Target ${s.bands.map((b) => `${b.rangeText} (${b.sets.join(', ')})`).join('; ')}: ${latest}; ${out} of ${countWord(judged.length, 'value', 'values')} judged ${out === 1 ? 'is' : 'are'} out of range.`;
  }
  for (const x of s.inactive) text += ` ${x.set} target ${x.rangeText} ${x.why}.`;
  return text;
}

/** The words of a point for people: "10:15, 1 h 45 min after time zero: 68 mmHg, in range". */
export function pointText(s: Pick<TrendSeries, 'key' | 'title' | 'unit'>, p: TrendPoint, hasTimeZero: boolean, offset: number): string {
  const u = s.unit ? ` ${s.unit}` : '';
  const verdict =
    p.verdict === 'above' || p.verdict === 'below' ? `${VERDICT_WORD[p.verdict]} ${p.failed.join('; ')}` : VERDICT_WORD[p.verdict];
  const interval =
    p.fromMinutes !== null
      ? ` over the interval since ${formatClock(new Date(p.timeMs - (p.minutes - p.fromMinutes) * MINUTE_MS).toISOString(), offset)}`
      : '';
  return `${formatClock(new Date(p.timeMs).toISOString(), offset)}, ${sinceText(p.minutes, hasTimeZero)}: ${s.title} ${valueText(s.key, p.value)}${u}${interval}, ${verdict}`;
}

/**
 * Plain lines for the note: one per series with its values since time zero (each marked "(out)"
 * when out of range) and its targets. Events are left to the note's own timeline. Only rows at or
 * before the model's `nowMs` count, as in the goal engine. The note folds the text to ASCII and
 * wraps it (src/export/note.ts).
 */
export function trendNoteLines(model: TrendModel): string[] {
  const lines: string[] = [model.hasTimeZero ? 'Trends since time zero:' : 'Trends (time zero not set; times from the first row):'];
  for (const s of model.series) {
    const pts = s.points.filter((p) => p.timeMs <= model.nowMs);
    if (pts.length === 0) continue;
    const u = s.unit ? ` ${s.unit}` : '';
    const seq = pts
      .map(
        (p) =>
          `${valueText(s.key, p.value)}${p.verdict === 'above' || p.verdict === 'below' ? ' (out)' : ''} at ${minutesLabel(p.minutes)}`,
      )
      .join(', ');
    const target = s.bands.length ? `; target ${s.bands.map((b) => `${b.rangeText} (${b.sets.join(', ')})`).join('; ')}` : '';
    lines.push(`- ${s.title}${u}: ${seq}${target}`);
  }
  return lines;
}
