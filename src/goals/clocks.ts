/**
 * Clocks for the screen: time since time zero, each goal's time left or overdue, each measure's
 * time since its last value, and when the screen must next update. All take `nowMs` from the one
 * injected Clock (src/sheet/clock.ts); nothing here reads the wall clock. Durations are exact
 * differences between instants, so daylight-saving changes cannot bend them. Pure.
 */
import { MINUTE_MS } from '../sheet/clock.js';
import type { Worksheet } from '../sheet/model.js';
import type { GoalStatus } from './status.js';

export const SECOND_MS = 1000;
/** Within this many minutes before a pending deadline the screen updates every second. */
export const SECONDS_WINDOW_MINUTES = 10;

/** Milliseconds since time zero (negative before it), or null when time zero is not set. */
export function elapsedSinceTimeZero(ws: Pick<Worksheet, 'timeZero'>, nowMs: number): number | null {
  if (!ws.timeZero) return null;
  const t0 = Date.parse(ws.timeZero.time);
  return Number.isFinite(t0) ? nowMs - t0 : null;
}

export interface GoalClock {
  id: string;
  status: GoalStatus['status'];
  deadlineMs: number | null;
  /** Pending with a deadline: ms left (never negative; 0 at and after the deadline). */
  msLeft: number | null;
  /** Missed and not done: ms past the deadline (null when it was done late). */
  msOverdue: number | null;
  /** True in the last SECONDS_WINDOW_MINUTES before a pending deadline: show seconds. */
  showSeconds: boolean;
}

/**
 * Each goal's clock at `nowMs`. Statuses may have been evaluated a little earlier; the clock uses
 * the deadline and `nowMs`, and the status is re-evaluated at the tick nextTickMs gives.
 */
export function goalClocks(
  statuses: readonly (Pick<GoalStatus, 'id' | 'status' | 'deadline'> & { late?: boolean })[],
  nowMs: number,
): GoalClock[] {
  return statuses.map((s) => {
    const d = s.deadline === null ? null : Date.parse(s.deadline);
    const clock: GoalClock = { id: s.id, status: s.status, deadlineMs: d, msLeft: null, msOverdue: null, showSeconds: false };
    if (d === null) return clock;
    if (s.status === 'pending') {
      clock.msLeft = Math.max(0, d - nowMs);
      clock.showSeconds = d - nowMs <= SECONDS_WINDOW_MINUTES * MINUTE_MS;
    } else if (s.status === 'missed' && !s.late) {
      clock.msOverdue = Math.max(0, nowMs - d);
    }
    return clock;
  });
}

export interface MeasureAge {
  key: string;
  /** UTC ISO time of the last row (at or before now) with a value of this key. */
  lastAt: string;
  rowId: string;
  /** Milliseconds from that row to now. */
  ageMs: number;
}

/** Time since each charted measure's last value (rows after `nowMs` are ignored), by key. */
export function measureAges(ws: Pick<Worksheet, 'rows'>, nowMs: number): Map<string, MeasureAge> {
  const out = new Map<string, MeasureAge>();
  for (const row of ws.rows) {
    const ms = Date.parse(row.time);
    if (ms > nowMs) continue;
    for (const key of Object.keys(row.cells)) {
      const prev = out.get(key);
      if (!prev || Date.parse(prev.lastAt) < ms) out.set(key, { key, lastAt: row.time, rowId: row.id, ageMs: nowMs - ms });
    }
  }
  return out;
}

/** The smallest step > 0 from `nowMs` to the next multiple of `period` counted from `anchorMs`. */
function toNextBoundary(nowMs: number, anchorMs: number, period: number): number {
  const r = (((nowMs - anchorMs) % period) + period) % period;
  return period - r;
}

/**
 * When the screen must next update (an instant in ms, always later than `nowMs`):
 * - at least once a minute, on the minute of time zero's clock when `timeZeroMs` is given;
 * - on each minute boundary of every pending deadline's countdown and every overdue count (missed
 *   and not done), so "12 min left" changes exactly when it should;
 * - every second (on the deadline's second boundaries) in the last 10 minutes before any pending
 *   deadline, including the moment the deadline passes (when the goal turns missed);
 * - at once (1 ms) when a status says pending but its deadline has already passed (stale list).
 */
export function nextTickMs(
  statuses: readonly (Pick<GoalStatus, 'status' | 'deadline'> & { late?: boolean })[],
  nowMs: number,
  timeZeroMs?: number,
): number {
  let step = MINUTE_MS;
  if (timeZeroMs !== undefined && Number.isFinite(timeZeroMs)) step = Math.min(step, toNextBoundary(nowMs, timeZeroMs, MINUTE_MS));
  for (const s of statuses) {
    if (s.deadline === null) continue;
    const d = Date.parse(s.deadline);
    if (!Number.isFinite(d)) continue;
    const left = d - nowMs;
    if (s.status === 'pending') {
      if (left < 0) {
        step = Math.min(step, 1);
      } else if (left <= SECONDS_WINDOW_MINUTES * MINUTE_MS) {
        step = Math.min(step, toNextBoundary(nowMs, d, SECOND_MS));
      } else {
        step = Math.min(step, left - SECONDS_WINDOW_MINUTES * MINUTE_MS, toNextBoundary(nowMs, d, MINUTE_MS));
      }
    } else if (s.status === 'missed' && !s.late && left < 0) {
      step = Math.min(step, toNextBoundary(nowMs, d, MINUTE_MS));
    }
  }
  return nowMs + Math.max(1, step);
}

const PANEL_RANK: Record<string, number> = { overdue: 0, pending: 1, standing: 2, 'no-data': 3, late: 4, met: 5, 'not-applicable': 6 };

/**
 * Order for the goal panel: what is unmet and due soonest at the top. Missed and not done
 * (most overdue first), pending with a deadline (soonest first), pending targets without a
 * deadline, no data, done late, met, not applicable. Stable within a group.
 */
export function panelOrder<T extends Pick<GoalStatus, 'status' | 'deadline' | 'late'>>(statuses: readonly T[]): T[] {
  const group = (s: T): string => {
    if (s.status === 'missed') return s.late ? 'late' : 'overdue';
    if (s.status === 'pending') return s.deadline === null ? 'standing' : 'pending';
    return s.status;
  };
  return statuses
    .map((s, i) => ({ s, i, g: PANEL_RANK[group(s)]!, d: s.deadline === null ? Infinity : Date.parse(s.deadline) }))
    .sort((a, b) => a.g - b.g || ((a.g === 0 || a.g === 1) && a.d !== b.d ? a.d - b.d : 0) || a.i - b.i)
    .map((x) => x.s);
}
