/**
 * The status of one goal and the precedence that turns a rule's facts and a deadline into it
 * (see engine.ts for the order). Pure.
 */
import { toInstant } from '../sheet/clock.js';
import { clockText, durationText, minutesBetween, type EvalContext } from './context.js';
import type { RuleFacts, TargetInfo, VolumeInfo } from './rules.js';
import type { GoalDef, GoalSetDef, GoalStatusKind, RuleKind } from './schema.js';

/** One goal's status at a moment. */
export interface GoalStatus {
  /** Full id `set.goal`, e.g. `sep1.antibiotics`. */
  id: string;
  setId: string;
  goalId: string;
  setTitle: string;
  label: string;
  source: string;
  version: string;
  /** Plain words for when the goal applies. */
  appliesWhen: string;
  /** Tidemark's documented choice where the source is open; shown in the app. */
  decision: string | null;
  /** Rule kind (`target` goals carry `target` figures). `custom` for the worksheet's own goals. */
  kind: RuleKind | 'custom';
  status: GoalStatusKind;
  /** When it was done (met), or done late (missed). UTC ISO. */
  metAt: string | null;
  /** Exact minutes from time zero to metAt (negative when done before time zero). */
  minutesFromTimeZero: number | null;
  /** True for a missed goal that was done after its deadline. */
  late: boolean;
  /** UTC ISO, or null for a standing target or when it cannot be worked out. */
  deadline: string | null;
  /** What the deadline counts from, in words: "60 min from time zero". */
  deadlineText: string | null;
  /** Pending with a deadline: exact minutes left (0 at the deadline instant). */
  minutesLeft: number | null;
  /** Missed and still not done: exact minutes past the deadline at the evaluation moment (null when done late or failed for good). */
  minutesOverdue: number | null;
  /** Missed late: minutes between the deadline and the late completion. */
  minutesLate: number | null;
  /** When the condition arose (UTC ISO), when it holds. */
  conditionSince: string | null;
  /** Rows that make the goal apply (or show it does not). */
  conditionRowIds: string[];
  /** Rows that satisfy the goal (for highlighting). */
  supportRowIds: string[];
  /** Rows that fail it: a late or out-of-order entry, a value out of range. */
  failRowIds: string[];
  /** One line of plain words. */
  explanation: string;
  /** Live figures of a target goal. */
  target: TargetInfo | null;
  /** Progress of a per-kg volume goal. */
  volume: VolumeInfo | null;
}

/** Fields every status starts from. */
export function baseStatus(
  set: Pick<GoalSetDef, 'id' | 'title'>,
  goal: Pick<GoalDef, 'id' | 'label' | 'source' | 'version' | 'appliesWhen' | 'decision'>,
  kind: GoalStatus['kind'],
): GoalStatus {
  return {
    id: `${set.id}.${goal.id}`,
    setId: set.id,
    goalId: goal.id,
    setTitle: set.title,
    label: goal.label,
    source: goal.source,
    version: goal.version,
    appliesWhen: goal.appliesWhen,
    decision: goal.decision ?? null,
    kind,
    status: 'no-data',
    metAt: null,
    minutesFromTimeZero: null,
    late: false,
    deadline: null,
    deadlineText: null,
    minutesLeft: null,
    minutesOverdue: null,
    minutesLate: null,
    conditionSince: null,
    conditionRowIds: [],
    supportRowIds: [],
    failRowIds: [],
    explanation: '',
    target: null,
    volume: null,
  };
}

export function sentence(s: string): string {
  const t = s.trim().replace(/[.;,\s]+$/, '');
  return t ? `${t.charAt(0).toUpperCase()}${t.slice(1)}.` : '';
}

export function relToT0(ctx: EvalContext, ms: number): string {
  const d = ms - ctx.t0Ms;
  if (d === 0) return 'at time zero';
  return d > 0 ? `${durationText(d)} after time zero` : `${durationText(-d)} before time zero`;
}

export interface DeadlineInfo {
  ms: number;
  text: string;
}

/** Applies the precedence above to a rule's facts. */
export function decide(ctx: EvalContext, out: GoalStatus, facts: RuleFacts, deadline: DeadlineInfo | undefined): GoalStatus {
  out.supportRowIds = facts.supportRowIds;
  out.failRowIds = facts.failRowIds;
  out.target = facts.target ?? null;
  out.volume = facts.volume ?? null;
  if (deadline) {
    out.deadline = toInstant(deadline.ms);
    out.deadlineText = deadline.text;
  }
  const due = deadline ? `due by ${clockText(ctx, deadline.ms)} (${deadline.text})` : '';
  const detail = facts.detail ? `; ${facts.detail}` : '';
  const dl = deadline ? `deadline ${clockText(ctx, deadline.ms)}, ${deadline.text}` : '';
  const setDone = (ms: number): void => {
    out.metAt = toInstant(ms);
    out.minutesFromTimeZero = minutesBetween(ctx.t0Ms, ms);
  };

  if (facts.noData !== undefined) {
    out.status = 'no-data';
    out.explanation = sentence(facts.noData);
    return out;
  }
  if (facts.failed) {
    out.status = 'missed';
    if (facts.doneMs !== undefined) setDone(facts.doneMs);
    out.explanation = sentence(`${facts.text}${detail}`);
    return out;
  }
  const done = facts.doneMs;
  if (done !== undefined && (!deadline || done <= deadline.ms)) {
    setDone(done);
    if (facts.holdsNow) {
      out.status = 'met';
      const when = facts.target ? '' : `, ${relToT0(ctx, done)}`;
      out.explanation = sentence(`${facts.text}${when}${detail}${deadline && !facts.target ? `; in time (${dl})` : ''}`);
      return out;
    }
    out.status = 'pending';
    if (deadline && ctx.atMs <= deadline.ms) out.minutesLeft = minutesBetween(ctx.atMs, deadline.ms);
    out.explanation = sentence(`${facts.text}; first reached at ${clockText(ctx, done)}${detail}`);
    return out;
  }
  if (deadline && ctx.atMs > deadline.ms) {
    out.status = 'missed';
    if (done !== undefined) {
      setDone(done);
      out.late = true;
      out.minutesLate = minutesBetween(deadline.ms, done);
      out.explanation = sentence(`${facts.text}, ${relToT0(ctx, done)}: ${durationText(done - deadline.ms)} late (${dl})${detail}`);
      if (!facts.target) out.failRowIds = [...new Set([...out.failRowIds, ...out.supportRowIds])];
    } else {
      out.minutesOverdue = minutesBetween(deadline.ms, ctx.atMs);
      out.explanation = sentence(`${facts.text}${detail}; ${due}, now ${durationText(ctx.atMs - deadline.ms)} overdue`);
    }
    return out;
  }
  out.status = 'pending';
  if (deadline) {
    out.minutesLeft = minutesBetween(ctx.atMs, deadline.ms);
    out.explanation = sentence(`${facts.text}${detail}; ${due}, ${durationText(deadline.ms - ctx.atMs)} left`);
  } else {
    out.explanation = sentence(`${facts.text}${detail}`);
  }
  return out;
}
