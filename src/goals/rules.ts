/**
 * Evaluates what satisfies a goal (the rule vocabulary of schema.ts). A rule reports facts — when
 * it was done, whether it failed for good, whether a target holds now — and the engine turns the
 * facts and the deadline into a status the same way for every goal. Pure.
 */
import { MINUTE_MS } from '../sheet/clock.js';
import {
  EPS,
  clockText,
  compare,
  keyName,
  keyUnit,
  keyNoun,
  keyWord,
  minutesBetween,
  mlText,
  num,
  present,
  series,
  valueText,
  type EvalContext,
  type TimedRow,
} from './context.js';
import { evalPredicate, volumeProgress, type PredicateResult } from './predicates.js';
import type { Rule, TargetTest } from './schema.js';

/** Live figures of a target goal. */
export interface TargetInfo {
  key: string;
  /** Short name of the measure: "MAP". */
  name: string;
  unit: string;
  /** The target in words: "≥ 65 mmHg", "8–12 mmHg", "≥ 10% below the first value". */
  rangeText: string;
  latestValue: number | null;
  latestAt: string | null;
  latestRowId: string | null;
  /** Minutes from the latest value to the evaluation moment. */
  ageMinutes: number | null;
  inRangeNow: boolean | null;
  /**
   * Share (0–1) of charted time in range, time-weighted: from the first value in the goal's
   * window to the evaluation moment, each reading holds until the next one (`until-next`), or an
   * interval value covers the interval that ends at its row (`since-previous-row`, urine rate).
   * Null until some time has been covered.
   */
  shareInRange: number | null;
  /** Minutes covered by the values (the denominator of the share). */
  chartedMinutes: number;
  /** Number of values in the window. */
  count: number;
}

/** Progress of a per-kg volume goal. */
export interface VolumeInfo {
  givenMl: number;
  targetMl: number | null;
  mlPerKg: number;
  weightKg: number | null;
  weightBasis: 'actual' | 'ideal' | null;
  /** Why this weight (actual, or Devine ideal weight and the BMI rule). */
  weightExplanation: string | null;
}

export interface RuleFacts {
  /** Set when the goal cannot be judged (missing weight, no value yet...). */
  noData?: string;
  /** Failed for good whatever the deadline (e.g. antibiotic before cultures). */
  failed?: boolean;
  /** When the goal was done, or a target first reached. */
  doneMs?: number;
  /** For targets: in range now. Event goals hold once done. */
  holdsNow: boolean;
  text: string;
  /** Extra words put after the timing in the explanation (volume progress, what counted). */
  detail?: string;
  supportRowIds: string[];
  failRowIds: string[];
  target?: TargetInfo;
  volume?: VolumeInfo;
}

function cellDetail(ctx: EvalContext, r: TimedRow, key: string, named: boolean): string {
  const cell = r.row.cells[key];
  const numberText = (v: number): string => ` (${named ? `${keyName(key)} ` : ''}${valueText(key, v)})`;
  if (cell) {
    if (typeof cell.value === 'string') {
      const t = cell.value.trim();
      return t ? ` (${t.length > 40 ? `${t.slice(0, 39)}…` : t})` : '';
    }
    if (typeof cell.value === 'number') return numberText(cell.value);
    return cell.text ? ` (${cell.text})` : '';
  }
  const v = num(ctx, r, key);
  return v === undefined ? '' : numberText(v);
}

/** The earliest row from `fromMs` with one of `keys` (compared with `value` when given); ties go to the first key. */
function firstWith(
  ctx: EvalContext,
  fromMs: number,
  keys: readonly string[],
  op?: '>' | '>=' | '<' | '<=',
  value?: number,
): { r: TimedRow; key: string } | undefined {
  let best: { r: TimedRow; key: string } | undefined;
  for (const key of keys) {
    const r =
      op !== undefined && value !== undefined
        ? series(ctx, key, fromMs).find((x) => compare(x.v, op, value))?.r
        : present(ctx, key, fromMs)[0];
    if (r && (!best || r.ms < best.r.ms)) best = { r, key };
  }
  return best;
}

function capital(s: string): string {
  return s.charAt(0).toUpperCase() + s.slice(1);
}

function startOf(ctx: EvalContext, lookbackMinutes: number | undefined): number {
  return ctx.t0Ms - (lookbackMinutes ?? 0) * MINUTE_MS;
}

export function targetRangeText(key: string, test: TargetTest): string {
  if (test.kind === 'drop-from-first') {
    return test.minDropPct > 0 ? `≥ ${test.minDropPct}% below the first value` : 'below the first value';
  }
  const unit = keyUnit(key);
  const u = unit === '%' ? '%' : unit ? ` ${unit}` : '';
  if (test.min !== undefined && test.max !== undefined) return `${test.min}–${test.max}${u}`;
  if (test.min !== undefined) return `≥ ${test.min}${u}`;
  if (test.max !== undefined) return `≤ ${test.max}${u}`;
  return 'any value';
}

export function evalRule(ctx: EvalContext, rule: Rule, cond: PredicateResult): RuleFacts {
  switch (rule.kind) {
    case 'first-value-within': {
      let from = startOf(ctx, rule.lookbackMinutes);
      let after = '';
      if (rule.notBefore) {
        const p = evalPredicate(ctx, rule.notBefore);
        if (p.state === 'unknown')
          return { noData: capital(p.text), holdsNow: false, text: capital(p.text), supportRowIds: [], failRowIds: [] };
        if (p.state === 'no') {
          return { holdsNow: false, text: `${capital(rule.event)} counts only after this: ${p.text}`, supportRowIds: [], failRowIds: [] };
        }
        from = Math.max(from, p.sinceMs!);
        after = `counts only after this: ${p.text}`;
      }
      const hit = firstWith(ctx, from, rule.keys, rule.op, rule.value);
      if (!hit)
        return { holdsNow: false, text: `No ${rule.event} charted yet${after ? ` (${after})` : ''}`, supportRowIds: [], failRowIds: [] };
      return {
        doneMs: hit.r.ms,
        holdsNow: true,
        text: `${capital(rule.event)} at ${clockText(ctx, hit.r.ms)}${cellDetail(ctx, hit.r, hit.key, rule.keys.length > 1)}`,
        ...(after ? { detail: after } : {}),
        supportRowIds: [hit.r.row.id],
        failRowIds: [],
      };
    }

    case 'mark-before': {
      const mark = firstWith(ctx, startOf(ctx, rule.lookbackMinutes), [rule.key]);
      const other = firstWith(ctx, startOf(ctx, rule.beforeLookbackMinutes), rule.beforeKeys);
      const inOrder = (m: number, o: number): boolean => (rule.sameTimeCounts ? m <= o : m < o);
      if (other && (!mark || !inOrder(mark.r.ms, other.r.ms))) {
        const facts: RuleFacts = {
          failed: true,
          holdsNow: false,
          text: mark
            ? `${capital(rule.event)} at ${clockText(ctx, mark.r.ms)}, ${mark.r.ms === other.r.ms ? 'at the same time as' : 'after'} the ${rule.beforeEvent} at ${clockText(ctx, other.r.ms)}`
            : `The ${rule.beforeEvent} at ${clockText(ctx, other.r.ms)} came before any ${rule.event}`,
          supportRowIds: [],
          failRowIds: mark ? [other.r.row.id, mark.r.row.id] : [other.r.row.id],
        };
        if (mark) facts.doneMs = mark.r.ms;
        return facts;
      }
      if (mark) {
        const otherWords = other ? `, before the ${rule.beforeEvent} at ${clockText(ctx, other.r.ms)}` : `; no ${rule.beforeEvent} yet`;
        return {
          doneMs: mark.r.ms,
          holdsNow: true,
          text: `${capital(rule.event)} at ${clockText(ctx, mark.r.ms)}${otherWords}`,
          supportRowIds: other ? [mark.r.row.id, other.r.row.id] : [mark.r.row.id],
          failRowIds: [],
        };
      }
      return { holdsNow: false, text: `No ${rule.event} and no ${rule.beforeEvent} charted yet`, supportRowIds: [], failRowIds: [] };
    }

    case 'volume-per-kg-within': {
      const w = ctx.weight;
      const v = volumeProgress(ctx, rule.key, rule.mlPerKg, rule.lookbackMinutes);
      const volume: VolumeInfo = {
        givenMl: v.givenMl,
        targetMl: v.targetMl ?? null,
        mlPerKg: rule.mlPerKg,
        weightKg: w?.kg ?? null,
        weightBasis: w?.basis ?? null,
        weightExplanation: w ? w.explanation : null,
      };
      const basis = w ? `${rule.mlPerKg} mL/kg × ${Number(w.kg.toFixed(1))} kg, ${w.explanation}` : `${rule.mlPerKg} mL/kg`;
      const progress = w
        ? `${mlText(v.givenMl)} of ${mlText(v.targetMl!)} (${basis})`
        : `${mlText(v.givenMl)} so far; no weight for the per-kg volume`;
      if (rule.satisfiedBy === 'completed') {
        if (!w)
          return {
            noData: `No weight, so ${rule.mlPerKg} mL/kg cannot be worked out`,
            holdsNow: false,
            text: `No weight, so ${rule.mlPerKg} mL/kg cannot be worked out`,
            supportRowIds: [],
            failRowIds: [],
            volume,
          };
        if (v.reached) {
          return {
            doneMs: v.reached.ms,
            holdsNow: true,
            text: `${rule.mlPerKg} mL/kg reached at ${clockText(ctx, v.reached.ms)}`,
            detail: progress,
            supportRowIds: v.rowIds,
            failRowIds: [],
            volume,
          };
        }
        return { holdsNow: false, text: `${progress} charted so far`, supportRowIds: [], failRowIds: [], volume };
      }
      if (v.first) {
        return {
          doneMs: v.first.ms,
          holdsNow: true,
          text: `Crystalloid started by ${clockText(ctx, v.first.ms)}`,
          detail: `${progress} so far`,
          supportRowIds: [v.first.row.id],
          failRowIds: [],
          volume,
        };
      }
      return {
        holdsNow: false,
        text: `No crystalloid charted yet (target ${w ? mlText(v.targetMl!) : `${rule.mlPerKg} mL/kg`})`,
        supportRowIds: [],
        failRowIds: [],
        volume,
      };
    }

    case 'repeat-value-within': {
      const values = series(ctx, rule.key, startOf(ctx, rule.lookbackMinutes));
      const initial = values[0];
      if (!initial) {
        const t = `No initial ${keyWord(rule.key)} yet`;
        return { noData: t, holdsNow: false, text: t, supportRowIds: [], failRowIds: [] };
      }
      const repeat = values.find((x) => x.r.ms > initial.r.ms);
      const first = `${keyWord(rule.key)} ${valueText(rule.key, initial.v)} at ${clockText(ctx, initial.r.ms)}`;
      if (!repeat)
        return { holdsNow: false, text: `No ${rule.event} yet (first ${first})`, supportRowIds: [initial.r.row.id], failRowIds: [] };
      return {
        doneMs: repeat.r.ms,
        holdsNow: true,
        text: `${capital(rule.event)} ${valueText(rule.key, repeat.v)} at ${clockText(ctx, repeat.r.ms)} (first ${first})`,
        supportRowIds: [initial.r.row.id, repeat.r.row.id],
        failRowIds: [],
      };
    }

    case 'target':
      return evalTarget(ctx, rule, cond);
  }
}

function evalTarget(ctx: EvalContext, rule: Extract<Rule, { kind: 'target' }>, cond: PredicateResult): RuleFacts {
  let from = startOf(ctx, rule.lookbackMinutes);
  if (rule.from === 'condition' && cond.sinceMs !== undefined) from = Math.max(from, cond.sinceMs);
  const values = series(ctx, rule.key, from);
  const name = keyName(rule.key);
  const rangeText = targetRangeText(rule.key, rule.test);
  const since = rule.from === 'condition' ? ` since ${clockText(ctx, from)}` : '';
  const empty: TargetInfo = {
    key: rule.key,
    name,
    unit: keyUnit(rule.key),
    rangeText,
    latestValue: null,
    latestAt: null,
    latestRowId: null,
    ageMinutes: null,
    inRangeNow: null,
    shareInRange: null,
    chartedMinutes: 0,
    count: 0,
  };
  if (values.length === 0) {
    const t =
      keyUnit(rule.key).includes('/kg') && ctx.ws.weightKg === undefined
        ? `No weight, so ${keyNoun(rule.key)} cannot be worked out`
        : `No ${keyNoun(rule.key)} charted${since}`;
    return { noData: t, holdsNow: false, text: t, supportRowIds: [], failRowIds: [], target: empty };
  }
  const test = rule.test;
  const ref = values[0]!.v;
  if (test.kind === 'drop-from-first' && values.length < 2) {
    const t = `Only one ${keyWord(rule.key)} (${valueText(rule.key, ref)} at ${clockText(ctx, values[0]!.r.ms)}); a second is needed to see the trend`;
    const latest = values[0]!;
    return {
      noData: t,
      holdsNow: false,
      text: t,
      supportRowIds: [latest.r.row.id],
      failRowIds: [],
      target: {
        ...empty,
        latestValue: latest.v,
        latestAt: latest.r.row.time,
        latestRowId: latest.r.row.id,
        ageMinutes: minutesBetween(latest.r.ms, ctx.atMs),
        inRangeNow: false,
        count: 1,
      },
    };
  }
  const inRange = (v: number): boolean => {
    if (test.kind === 'range') {
      return (test.min === undefined || compare(v, '>=', test.min)) && (test.max === undefined || compare(v, '<=', test.max));
    }
    if (!(ref > 0)) return false;
    const dropPct = (100 * (ref - v)) / ref;
    return test.minDropPct > 0 ? dropPct >= test.minDropPct - EPS : compare(v, '<', ref);
  };

  // Time-weighted share in range (see TargetInfo.shareInRange).
  let covered = 0;
  let inside = 0;
  values.forEach((x, i) => {
    let span: number;
    if (rule.valueCovers === 'since-previous-row') {
      span = x.r.prevMs === undefined ? 0 : x.r.ms - x.r.prevMs;
    } else {
      const next = values[i + 1];
      span = (next ? next.r.ms : ctx.atMs) - x.r.ms;
    }
    covered += span;
    if (inRange(x.v)) inside += span;
  });
  const latest = values[values.length - 1]!;
  const nowIn = inRange(latest.v);
  const reached = values.find((x) => inRange(x.v));
  const target: TargetInfo = {
    ...empty,
    latestValue: latest.v,
    latestAt: latest.r.row.time,
    latestRowId: latest.r.row.id,
    ageMinutes: minutesBetween(latest.r.ms, ctx.atMs),
    inRangeNow: nowIn,
    shareInRange: covered > 0 ? inside / covered : null,
    chartedMinutes: covered / MINUTE_MS,
    count: values.length,
  };
  const latestWords = `${name} ${valueText(rule.key, latest.v)} at ${clockText(ctx, latest.r.ms)}`;
  const share = target.shareInRange === null ? '' : `; in range ${Math.round(target.shareInRange * 100)}% of charted time`;
  const facts: RuleFacts = {
    holdsNow: nowIn,
    text: `${latestWords} ${nowIn ? 'is in range' : 'is out of range'} (${rangeText})${share}`,
    supportRowIds: nowIn ? [...new Set([reached!.r.row.id, latest.r.row.id])] : reached ? [reached.r.row.id] : [],
    failRowIds: nowIn ? [] : [latest.r.row.id],
    target,
  };
  if (reached) facts.doneMs = reached.r.ms;
  return facts;
}
