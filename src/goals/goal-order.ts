/**
 * Order and wording of goals in the goal panel (pure, tested in Node).
 *
 * Order: what still needs doing comes first — overdue and not yet done, then pending by the
 * soonest deadline, then goals that cannot be judged yet — followed by what is settled: done late,
 * met, and not applicable.
 */
import { formatClock, formatDuration } from '../sheet/time.js';
import type { GoalStatus } from './status.js';

function rank(g: GoalStatus): number {
  if (g.status === 'missed' && !g.late) return 0;
  if (g.status === 'pending') return 1;
  if (g.status === 'no-data') return 2;
  if (g.status === 'missed') return 3;
  if (g.status === 'met') return 4;
  return 5;
}

/** Sorts a copy: unmet first, soonest deadline first. Stable within a rank. */
export function orderGoals(goals: readonly GoalStatus[]): GoalStatus[] {
  return goals
    .map((g, i) => ({ g, i }))
    .sort((a, b) => {
      const r = rank(a.g) - rank(b.g);
      if (r !== 0) return r;
      const da = a.g.deadline ? Date.parse(a.g.deadline) : Infinity;
      const db = b.g.deadline ? Date.parse(b.g.deadline) : Infinity;
      if (da !== db) return da - db;
      return a.i - b.i;
    })
    .map((x) => x.g);
}

/**
 * The time line of a goal for people, from the moment `nowMs`:
 * pending "41 min left · due 09:15", missed "overdue 12 min · was due 08:15",
 * missed late "done 09:27, 12 min late", met "done 08:40 · 25 min after time zero".
 * Seconds are shown in the last ten minutes before a deadline.
 */
export function goalTimeText(g: GoalStatus, nowMs: number, offset: number): string {
  switch (g.status) {
    case 'pending': {
      if (!g.deadline) return g.target ? 'standing target' : 'open';
      const left = Date.parse(g.deadline) - nowMs;
      return `${formatDuration(Math.max(left, 0), left < 10 * 60_000)} left · due ${formatClock(g.deadline, offset)}`;
    }
    case 'missed': {
      if (g.late && g.metAt) {
        const late = g.deadline ? Date.parse(g.metAt) - Date.parse(g.deadline) : 0;
        return `done ${formatClock(g.metAt, offset)}, ${formatDuration(late)} late`;
      }
      if (!g.deadline) return 'not met';
      return `overdue ${formatDuration(nowMs - Date.parse(g.deadline))} · was due ${formatClock(g.deadline, offset)}`;
    }
    case 'met': {
      if (!g.metAt) return 'met';
      const mins = g.minutesFromTimeZero;
      const rel =
        mins === null
          ? ''
          : mins >= 0
            ? ` · ${formatDuration(mins * 60_000)} after time zero`
            : ` · ${formatDuration(-mins * 60_000)} before time zero`;
      return `done ${formatClock(g.metAt, offset)}${rel}`;
    }
    case 'not-applicable':
      return 'does not apply now';
    case 'no-data':
      return 'cannot be judged yet';
  }
}
