/**
 * The worksheet's own goals (CustomGoal in the model): a condition and a target written as
 * formulas over measure keys, compiled and evaluated only through the restricted formula engine
 * (src/sheet/formula-engine.ts) with the values, facts and helpers derived columns see.
 *
 * Semantics (shown in the app):
 * - Rows from time zero on are looked at, up to the evaluation moment.
 * - The goal applies from the first row where the condition is true (no condition: always, from
 *   time zero). A condition that is never true is `not-applicable`; one that could never be
 *   worked out (missing values) is `no-data`.
 * - With `deadlineMinutes` the target is an event: met at the first row (from when the goal
 *   applies) where it is true, due that many minutes after time zero; a later first time is missed.
 * - Without a deadline it is a standing target: met while it is true at the latest row where it
 *   can be worked out, pending otherwise; the share of time it was true is time-weighted like
 *   the published targets (each row's result holds until the next row).
 * Pure.
 */
import { MINUTE_MS } from '../sheet/clock.js';
import { deriveAll, evaluateAtRows } from '../sheet/derived.js';
import { compileFormula, type EvalResult } from '../sheet/formula-engine.js';
import type { CustomGoal, Worksheet } from '../sheet/model.js';
import { clockText, minutesBetween, timedRows, type EvalContext } from './context.js';
import { baseStatus, decide, type GoalStatus } from './status.js';
import { CUSTOM_SET_ID } from './registry.js';
import type { RuleFacts, TargetInfo } from './rules.js';

const CUSTOM_SET = { id: CUSTOM_SET_ID, title: 'Own goals' };

function customBase(g: CustomGoal): GoalStatus {
  return baseStatus(
    CUSTOM_SET,
    {
      id: g.id,
      label: g.label,
      source: 'Own goal on this worksheet (not a published rule)',
      version: 'worksheet',
      appliesWhen: g.condition?.trim() ? g.condition : 'always',
      decision: undefined,
    },
    'custom',
  );
}

const truthy = (r: EvalResult): boolean => r.ok && (r.value === true || (typeof r.value === 'number' && r.value !== 0));

/** Evaluates every custom goal of the worksheet; `ctx` undefined when time zero is not set. */
export function evaluateCustomGoals(ws: Worksheet, ctx: EvalContext | undefined, atMs: number): GoalStatus[] {
  if (ws.customGoals.length === 0) return [];
  if (!ctx) return ws.customGoals.map(customBase);
  // The formula helpers read rows in worksheet order, so evaluate on the time-ordered rows.
  const ordered: Worksheet = { ...ws, rows: timedRows(ws).map((r) => r.row) };
  const derivation = deriveAll(ordered);
  const columns = ws.derivedColumns.map((c) => c.key);
  // Row positions (in `ordered`) of rows from time zero to atMs.
  const idx: number[] = [];
  ordered.rows.forEach((r, i) => {
    const ms = Date.parse(r.time);
    if (ms >= ctx.t0Ms && ms <= atMs) idx.push(i);
  });
  const msOf = (i: number): number => Date.parse(ordered.rows[i]!.time);
  const idOf = (i: number): string => ordered.rows[i]!.id;

  return ws.customGoals.map((g) => {
    const out = customBase(g);
    const target = compileFormula(g.target, { columns });
    if (!target.ok) {
      out.explanation = `The target cannot be read: ${target.error}`;
      return out;
    }
    let fromPos = 0;
    if (g.condition?.trim()) {
      const cond = compileFormula(g.condition, { columns });
      if (!cond.ok) {
        out.explanation = `The condition cannot be read: ${cond.error}`;
        return out;
      }
      const res = evaluateAtRows(ordered, derivation, cond.formula);
      const first = idx.findIndex((i) => truthy(res[i]!));
      if (first < 0) {
        const anyWorked = idx.some((i) => res[i]!.ok);
        if (anyWorked) {
          out.status = 'not-applicable';
          out.explanation = `Does not apply: the condition ${g.condition} is not true in any row since time zero.`;
        } else {
          const miss = idx.map((i) => res[i]!).find((r) => !r.ok);
          out.explanation = `Cannot tell yet whether it applies: the condition ${miss && !miss.ok && miss.missing ? `needs ${miss.missing.join(', ')}` : 'has no values yet'}.`;
        }
        return out;
      }
      fromPos = first;
      out.conditionSince = new Date(msOf(idx[first]!)).toISOString();
      out.conditionRowIds = [idOf(idx[first]!)];
    } else {
      out.conditionSince = new Date(ctx.t0Ms).toISOString();
    }

    const res = evaluateAtRows(ordered, derivation, target.formula);
    const window = idx.slice(fromPos).filter((i) => res[i]!.ok);
    if (window.length === 0) {
      const miss = idx
        .slice(fromPos)
        .map((i) => res[i]!)
        .find((r) => !r.ok);
      out.explanation = `The target cannot be worked out yet${miss && !miss.ok && miss.missing ? `: it needs ${miss.missing.join(', ')}` : ''}.`;
      return out;
    }
    const reached = window.find((i) => truthy(res[i]!));
    const latest = window[window.length - 1]!;
    const standing = g.deadlineMinutes === undefined;
    const nowTrue = truthy(res[latest]!);
    let covered = 0;
    let inside = 0;
    window.forEach((i, k) => {
      const next = window[k + 1];
      const span = (next !== undefined ? msOf(next) : atMs) - msOf(i);
      covered += span;
      if (truthy(res[i]!)) inside += span;
    });
    const latestResult = res[latest]!;
    const info: TargetInfo = {
      key: g.id,
      name: g.label,
      unit: '',
      rangeText: g.target,
      latestValue: latestResult.ok ? (typeof latestResult.value === 'boolean' ? (latestResult.value ? 1 : 0) : latestResult.value) : null,
      latestAt: ordered.rows[latest]!.time,
      latestRowId: idOf(latest),
      ageMinutes: minutesBetween(msOf(latest), atMs),
      inRangeNow: nowTrue,
      shareInRange: covered > 0 ? inside / covered : null,
      chartedMinutes: covered / MINUTE_MS,
      count: window.length,
    };
    const facts: RuleFacts = {
      holdsNow: standing ? nowTrue : reached !== undefined,
      text:
        reached !== undefined
          ? `${g.target} true at ${clockText(ctx, msOf(reached))}${standing ? `; ${nowTrue ? 'true' : 'not true'} at ${clockText(ctx, msOf(latest))}` : ''}`
          : `${g.target} not true yet (last worked out at ${clockText(ctx, msOf(latest))})`,
      supportRowIds: reached !== undefined ? [idOf(reached)] : [],
      failRowIds: standing && !nowTrue ? [idOf(latest)] : [],
      target: info,
    };
    if (reached !== undefined) facts.doneMs = msOf(reached);
    const deadline =
      g.deadlineMinutes === undefined
        ? undefined
        : { ms: ctx.t0Ms + g.deadlineMinutes * MINUTE_MS, text: `${g.deadlineMinutes} min from time zero` };
    return decide(ctx, out, facts, deadline);
  });
}
