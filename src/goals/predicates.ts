/**
 * Evaluates goal conditions (the predicate vocabulary of schema.ts) at a moment. Each result says
 * `yes` (with the time the condition arose and the rows that show it), `no`, or `unknown` (cannot
 * be judged yet), with one line of plain words. Pure.
 */
import { MINUTE_MS } from '../sheet/clock.js';
import {
  bpReadings,
  clockText,
  compare,
  keyName,
  keyWord,
  mlText,
  namedValue,
  series,
  valueText,
  type BpPoint,
  type EvalContext,
  type TimedRow,
} from './context.js';
import type { Comparison, HypotensionTest, Predicate } from './schema.js';

export type Tri = 'yes' | 'no' | 'unknown';

export interface PredicateResult {
  state: Tri;
  /** When the condition arose (state `yes`). */
  sinceMs?: number;
  /** Rows that show the condition (or its absence). */
  rowIds: string[];
  text: string;
}

const yes = (sinceMs: number, rowIds: string[], text: string): PredicateResult => ({ state: 'yes', sinceMs, rowIds, text });
const no = (text: string, rowIds: string[] = []): PredicateResult => ({ state: 'no', rowIds, text });
const unknown = (text: string, rowIds: string[] = []): PredicateResult => ({ state: 'unknown', rowIds, text });

function windowStart(ctx: EvalContext, lookbackMinutes: number | undefined): number {
  return ctx.t0Ms - (lookbackMinutes ?? 0) * MINUTE_MS;
}

const OP_WORDS: Record<Comparison, string> = { '>': 'above', '>=': 'at or above', '<': 'below', '<=': 'at or below' };

// --- Blood pressure readings -----------------------------------------------------------------

export interface Reading {
  r: TimedRow;
  sbp: number | undefined;
  map: number | undefined;
  low: boolean;
}

/** A row with SBP or MAP (measured or estimated) is a reading; low by the given test. */
export function reading(ctx: EvalContext, p: BpPoint, test: HypotensionTest): Reading {
  const { r, sbp, map } = p;
  const baseline = ctx.ws.baselineSbp;
  const low =
    (test.sbpBelow !== undefined && sbp !== undefined && compare(sbp, '<', test.sbpBelow)) ||
    (test.mapBelow !== undefined && map !== undefined && compare(map, '<', test.mapBelow)) ||
    (test.sbpDropAbove !== undefined && sbp !== undefined && baseline !== undefined && compare(baseline - sbp, '>', test.sbpDropAbove));
  return { r, sbp, map, low };
}

export function readingText(x: Reading): string {
  const parts: string[] = [];
  if (x.sbp !== undefined) parts.push(`SBP ${Math.round(x.sbp)}`);
  if (x.map !== undefined) parts.push(`MAP ${Math.round(x.map)}`);
  return parts.join(', ');
}

export function lowWords(test: HypotensionTest): string {
  const parts: string[] = [];
  if (test.sbpBelow !== undefined) parts.push(`SBP < ${test.sbpBelow}`);
  if (test.mapBelow !== undefined) parts.push(`MAP < ${test.mapBelow}`);
  if (test.sbpDropAbove !== undefined) parts.push(`SBP more than ${test.sbpDropAbove} under baseline`);
  return parts.join(' or ');
}

/** First run of `consecutive` low readings; the readings in it, or undefined. */
function lowRun(readings: readonly Reading[], consecutive: number): Reading[] | undefined {
  let run: Reading[] = [];
  for (const x of readings) {
    if (x.low) {
      run.push(x);
      if (run.length >= consecutive) return run.slice(-consecutive);
    } else {
      run = [];
    }
  }
  return undefined;
}

// --- Volumes ---------------------------------------------------------------------------------

export interface VolumeProgress {
  givenMl: number;
  /** Undefined without a weight. */
  targetMl: number | undefined;
  /** Row where the running total reached the target. */
  reached: TimedRow | undefined;
  /** First row with any volume. */
  first: TimedRow | undefined;
  rowIds: string[];
}

/** Running total of `key` volumes from the lookback on, against `mlPerKg` × dosing weight. */
export function volumeProgress(ctx: EvalContext, key: string, mlPerKg: number, lookbackMinutes: number | undefined): VolumeProgress {
  const targetMl = ctx.weight ? mlPerKg * ctx.weight.kg : undefined;
  let givenMl = 0;
  let reached: TimedRow | undefined;
  let first: TimedRow | undefined;
  const rowIds: string[] = [];
  for (const { r, v } of series(ctx, key, windowStart(ctx, lookbackMinutes))) {
    if (v <= 0) continue;
    givenMl += v;
    rowIds.push(r.row.id);
    first ??= r;
    if (!reached && targetMl !== undefined && compare(givenMl, '>=', targetMl)) reached = r;
  }
  return { givenMl, targetMl, reached, first, rowIds };
}

// --- Evaluation ------------------------------------------------------------------------------

export function evalPredicate(ctx: EvalContext, p: Predicate): PredicateResult {
  switch (p.kind) {
    case 'always':
      return yes(ctx.t0Ms, [], 'always applies');

    case 'initial-value': {
      const point = series(ctx, p.key, windowStart(ctx, p.lookbackMinutes))[0];
      if (!point) return unknown(`no ${keyWord(p.key)} charted yet`);
      const { r: first, v } = point;
      const words = `first ${keyWord(p.key)} ${valueText(p.key, v)} at ${clockText(ctx, first.ms)}`;
      return compare(v, p.op, p.value)
        ? yes(first.ms, [first.row.id], `${words} is ${OP_WORDS[p.op]} ${valueText(p.key, p.value)}`)
        : no(`${words} is not ${OP_WORDS[p.op]} ${valueText(p.key, p.value)}`, [first.row.id]);
    }

    case 'any-value': {
      let best: { key: string; r: TimedRow; v: number } | undefined;
      for (const key of p.keys) {
        const hit = series(ctx, key, windowStart(ctx, p.lookbackMinutes)).find((x) => compare(x.v, p.op, p.value));
        if (hit && (!best || hit.r.ms < best.r.ms)) best = { key, ...hit };
      }
      if (best) return yes(best.r.ms, [best.r.row.id], `${namedValue(best.key, best.v)} at ${clockText(ctx, best.r.ms)}`);
      return no(`no ${p.keys.map(keyName).join(' or ')} ${OP_WORDS[p.op]} ${p.value} charted`);
    }

    case 'shock-time-set': {
      const s = ctx.ws.shockTime;
      if (s === undefined) return no('no septic shock time set');
      const ms = Date.parse(s);
      if (ms > ctx.atMs) return no('septic shock time set is later than now');
      return yes(ms, [], `septic shock time set to ${clockText(ctx, ms)}`);
    }

    case 'volume-reached': {
      if (!ctx.weight) return unknown('no weight, so the per-kg volume cannot be worked out');
      const v = volumeProgress(ctx, p.key, p.mlPerKg, p.lookbackMinutes);
      if (v.reached) {
        return yes(v.reached.ms, v.rowIds, `${p.mlPerKg} mL/kg (${mlText(v.targetMl!)}) was complete at ${clockText(ctx, v.reached.ms)}`);
      }
      return no(`${p.mlPerKg} mL/kg not complete (${mlText(v.givenMl)} of ${mlText(v.targetMl!)})`, v.rowIds);
    }

    case 'hypotension': {
      let start = windowStart(ctx, p.lookbackMinutes);
      const end = p.withinMinutes === undefined ? ctx.atMs : Math.min(ctx.atMs, ctx.t0Ms + p.withinMinutes * MINUTE_MS);
      let afterWords = '';
      if (p.after) {
        const a = evalPredicate(ctx, p.after);
        if (a.state === 'unknown') return unknown(a.text, a.rowIds);
        if (a.state === 'no') return no(`${a.text}, so no low reading after it yet`, a.rowIds);
        start = Math.max(start, a.sinceMs!);
        afterWords = ` from ${clockText(ctx, a.sinceMs!)}`;
      }
      const readings = bpReadings(ctx, start, end).map((x) => reading(ctx, x, p));
      if (readings.length === 0) return unknown(`no blood pressure charted${afterWords}`);
      const run = lowRun(readings, p.consecutive);
      if (run) {
        const last = run[run.length - 1]!;
        const what = run.map((x) => `${readingText(x)} at ${clockText(ctx, x.r.ms)}`).join(' then ');
        return yes(
          last.r.ms,
          run.map((x) => x.r.row.id),
          `low blood pressure (${lowWords(p)}): ${what}`,
        );
      }
      const need = p.consecutive > 1 ? `${p.consecutive} consecutive low readings` : 'a low reading';
      return no(
        `no ${need} (${lowWords(p)})${afterWords}`,
        readings.map((x) => x.r.row.id),
      );
    }

    case 'hypotension-after-volume': {
      if (!ctx.weight) return unknown('no weight, so the end of the per-kg fluids cannot be found');
      const v = volumeProgress(ctx, p.key, p.mlPerKg, p.lookbackMinutes);
      if (!v.reached) {
        return no(
          `${p.mlPerKg} mL/kg not complete (${mlText(v.givenMl)} of ${mlText(v.targetMl!)}), so hypotension after it cannot be judged yet`,
          v.rowIds,
        );
      }
      const endMs = v.reached.ms;
      const closeMs = endMs + p.withinMinutes * MINUTE_MS;
      const readings = bpReadings(ctx, endMs + 1, closeMs).map((x) => reading(ctx, x, p));
      const run = lowRun(readings, p.consecutive);
      const ended = `the ${p.mlPerKg} mL/kg ended at ${clockText(ctx, endMs)}`;
      if (run) {
        const last = run[run.length - 1]!;
        const what = run.map((x) => `${readingText(x)} at ${clockText(ctx, x.r.ms)}`).join(' then ');
        return yes(
          last.r.ms,
          run.map((x) => x.r.row.id),
          `hypotension persists after fluids (${ended}): ${what}`,
        );
      }
      const ids = readings.map((x) => x.r.row.id);
      if (ctx.atMs < closeMs) {
        return unknown(`${ended}; watching blood pressure until ${clockText(ctx, closeMs)}`, ids);
      }
      if (readings.length === 0) return unknown(`${ended}; no blood pressure charted in the ${p.withinMinutes} min after`);
      if (readings.length === 1 && readings[0]!.low) {
        return unknown(`${ended}; only one low reading in the ${p.withinMinutes} min after, so persistence cannot be determined`, ids);
      }
      return no(`no ${p.consecutive} consecutive low readings (${lowWords(p)}) in the ${p.withinMinutes} min after ${ended.slice(4)}`, ids);
    }

    case 'any': {
      const results = p.of.map((q) => evalPredicate(ctx, q));
      const yeses = results.filter((r) => r.state === 'yes').sort((a, b) => a.sinceMs! - b.sinceMs!);
      if (yeses.length > 0) return yeses[0]!;
      const unknowns = results.filter((r) => r.state === 'unknown');
      if (unknowns.length > 0)
        return unknown(
          results.map((r) => r.text).join('; '),
          unknowns.flatMap((r) => r.rowIds),
        );
      return no(
        results.map((r) => r.text).join('; '),
        results.flatMap((r) => r.rowIds),
      );
    }

    case 'all': {
      const results = p.of.map((q) => evalPredicate(ctx, q));
      const nos = results.filter((r) => r.state === 'no');
      if (nos.length > 0)
        return no(
          nos.map((r) => r.text).join('; '),
          nos.flatMap((r) => r.rowIds),
        );
      const unknowns = results.filter((r) => r.state === 'unknown');
      if (unknowns.length > 0)
        return unknown(
          unknowns.map((r) => r.text).join('; '),
          unknowns.flatMap((r) => r.rowIds),
        );
      const since = Math.max(...results.map((r) => r.sinceMs!));
      return yes(since, [...new Set(results.flatMap((r) => r.rowIds))], results.map((r) => r.text).join('; '));
    }
  }
}
