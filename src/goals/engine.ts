/**
 * The goal engine: `evaluate(worksheet, setIds, atMs)` gives every goal of the chosen sets a
 * status at that moment. It interprets goal data (schema.ts) and holds no set-specific code.
 *
 * Status precedence, the same for every goal:
 *   1. time zero not set                                  -> no-data
 *   2. the goal's condition does not hold                 -> not-applicable
 *   3. the condition cannot be judged yet                 -> no-data
 *   4. the rule lacks what it needs (weight, a value...)  -> no-data
 *   5. the rule failed for good (antibiotic before cultures) -> missed
 *   6. done at or before the deadline (or no deadline)    -> met (a target out of range now: pending)
 *   7. deadline passed (done late, or not done)           -> missed; a late completion keeps its time
 *   8. otherwise                                          -> pending
 * "At the deadline" counts as in time: done at the deadline minute is met; nothing done at the
 * deadline instant is still pending, and missed from the next instant on.
 *
 * Only rows at or before `atMs` are looked at, in time order whatever order they were entered in.
 * Durations are exact differences between UTC instants, so daylight-saving changes cannot bend them.
 * Pure: no DOM, no wall clock.
 */
import { MINUTE_MS, toInstant } from '../sheet/clock.js';
import type { DerivedRow } from '../sheet/derived.js';
import type { Worksheet } from '../sheet/model.js';
import { clockText, makeContext, spanText, type EvalContext } from './context.js';
import { evaluateCustomGoals } from './custom.js';
import { evalPredicate, type PredicateResult } from './predicates.js';
import { CUSTOM_SET_ID, defaultRegistry, type GoalRegistry } from './registry.js';
import { evalRule } from './rules.js';
import type { GoalDef, GoalSetDef, GoalStatusKind } from './schema.js';
import { baseStatus, decide, sentence, type DeadlineInfo, type GoalStatus } from './status.js';

export type { GoalStatus } from './status.js';

function deadlineOf(ctx: EvalContext, goal: GoalDef, cond: PredicateResult): DeadlineInfo | undefined {
  const d = goal.deadline;
  if (!d) return undefined;
  const mins = spanText(d.minutes);
  if (d.from === 'time-zero') return { ms: ctx.t0Ms + d.minutes * MINUTE_MS, text: `${mins} from time zero` };
  let since = cond.sinceMs;
  let what = 'when the goal began to apply';
  if (d.from !== 'condition') {
    const p = evalPredicate(ctx, d.from.when);
    if (p.state === 'yes') {
      since = p.sinceMs;
      what = d.from.text;
    }
  }
  const anchor = Math.max(ctx.t0Ms, since ?? ctx.t0Ms);
  const from = anchor === ctx.t0Ms ? 'time zero' : `${clockText(ctx, anchor)}, ${what}`;
  return { ms: anchor + d.minutes * MINUTE_MS, text: `${mins} from ${from}` };
}

/** Evaluates one goal of a set. */
export function evaluateGoal(ctx: EvalContext, set: GoalSetDef, goal: GoalDef): GoalStatus {
  const out = baseStatus(set, goal, goal.rule.kind);
  const cond = evalPredicate(ctx, goal.condition);
  out.conditionRowIds = cond.rowIds;
  if (cond.state === 'no') {
    out.status = 'not-applicable';
    out.explanation = sentence(`Does not apply: ${cond.text}`);
    return out;
  }
  if (cond.state === 'unknown') {
    out.status = 'no-data';
    out.explanation = sentence(`Cannot tell yet whether it applies: ${cond.text}`);
    return out;
  }
  if (cond.sinceMs !== undefined) out.conditionSince = toInstant(cond.sinceMs);
  const facts = evalRule(ctx, goal.rule, cond);
  return decide(ctx, out, facts, deadlineOf(ctx, goal, cond));
}

export interface EvaluateOptions {
  /** Where set ids are looked up (default: the shared registry with the published sets). */
  registry?: GoalRegistry;
  /**
   * Derived values the caller already has (deriveWorksheet/deriveAll rows, matched by row id),
   * to save recomputing them on every tick. They must be computed from the same worksheet.
   */
  derived?: readonly DerivedRow[];
}

/**
 * Status of every goal of `setIds` (in that order; goals in set order) at `atMs`.
 * `custom` in `setIds` adds the worksheet's own goals. Throws UnknownGoalSetError for an
 * unknown set id (check with `registry.has(id)` first when ids come from stored data).
 */
export function evaluate(ws: Worksheet, setIds: readonly string[], atMs: number, options: EvaluateOptions = {}): GoalStatus[] {
  const registry = options.registry ?? defaultRegistry;
  const sets = setIds.filter((id) => id !== CUSTOM_SET_ID).map((id) => registry.require(id));
  const withCustom = setIds.includes(CUSTOM_SET_ID);
  const t0Ms = ws.timeZero ? Date.parse(ws.timeZero.time) : undefined;
  if (t0Ms === undefined || !Number.isFinite(t0Ms)) {
    const none = (s: GoalStatus): GoalStatus => ({
      ...s,
      status: 'no-data',
      explanation: 'Time zero is not set: set it to start the goal clocks.',
    });
    const out = sets.flatMap((set) => set.goals.map((g) => none(baseStatus(set, g, g.rule.kind))));
    if (withCustom) out.push(...evaluateCustomGoals(ws, undefined, atMs).map(none));
    return out;
  }
  const ctx = makeContext(ws, atMs, t0Ms, options.derived);
  const out = sets.flatMap((set) => set.goals.map((g) => evaluateGoal(ctx, set, g)));
  if (withCustom) out.push(...evaluateCustomGoals(ws, ctx, atMs));
  return out;
}

/** The set ids a worksheet asks for, plus `custom` when it has goals of its own. */
export function worksheetSetIds(ws: Worksheet): string[] {
  const ids = [...ws.goalSets];
  if (ws.customGoals.length > 0 && !ids.includes(CUSTOM_SET_ID)) ids.push(CUSTOM_SET_ID);
  return ids;
}

/** The `--json` status contract of design.md. */
export interface StatusReport {
  timeZero: string | null;
  at: string;
  goals: {
    id: string;
    status: GoalStatusKind;
    metAt: string | null;
    minutesFromTimeZero: number | null;
    deadline: string | null;
  }[];
}

/**
 * The command line's `status --json` output (design.md, Exports and the command line). Times are
 * UTC ISO instants. `timeZero` is null when the worksheet has none (every goal is then no-data).
 */
export function statusReport(ws: Worksheet, setIds: readonly string[], atMs: number, options: EvaluateOptions = {}): StatusReport {
  return {
    timeZero: ws.timeZero ? toInstant(Date.parse(ws.timeZero.time)) : null,
    at: toInstant(atMs),
    goals: evaluate(ws, setIds, atMs, options).map((g) => ({
      id: g.id,
      status: g.status,
      metAt: g.metAt,
      minutesFromTimeZero: g.minutesFromTimeZero,
      deadline: g.deadline,
    })),
  };
}
