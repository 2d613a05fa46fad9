/**
 * Quality review across many worksheets: for each goal id, how many worksheets it applied to,
 * how many met it, missed it (late completions included), are still pending, could not be
 * judged, or where it did not apply; and the median minutes from time zero to met. Pure.
 *
 * Decisions:
 * - "Applicable" = met + missed + pending: the goal's condition held. `no-data` (cannot be judged,
 *   e.g. no weight or no time zero) and `not-applicable` are counted apart, never as applicable.
 * - The median is over the worksheets where the goal is met (minutes from time zero to met,
 *   exact); a late completion counts as missed and is left out of it. Even counts take the mean
 *   of the two middle values. Null when nothing is met.
 */
import type { GoalStatus } from '../goals/index.js';

export interface ReviewGoalRow {
  id: string;
  worksheets: number;
  applicable: number;
  met: number;
  missed: number;
  pending: number;
  noData: number;
  notApplicable: number;
  medianMinutesToMet: number | null;
}

export interface ReviewReport {
  at: string;
  worksheets: number;
  goals: ReviewGoalRow[];
}

/** Median of numbers (mean of the two middle values for an even count); null when empty. */
export function median(values: readonly number[]): number | null {
  if (values.length === 0) return null;
  const s = [...values].sort((a, b) => a - b);
  const mid = Math.floor(s.length / 2);
  return s.length % 2 === 1 ? s[mid]! : (s[mid - 1]! + s[mid]!) / 2;
}

/** Aggregates the statuses of each worksheet (one array per worksheet). Goal order: first seen. */
export function reviewGoals(
  perWorksheet: readonly (readonly Pick<GoalStatus, 'id' | 'status' | 'minutesFromTimeZero'>[])[],
  atIso: string,
): ReviewReport {
  const rows = new Map<string, ReviewGoalRow & { minutes: number[] }>();
  for (const statuses of perWorksheet) {
    for (const g of statuses) {
      let r = rows.get(g.id);
      if (!r) {
        r = {
          id: g.id,
          worksheets: 0,
          applicable: 0,
          met: 0,
          missed: 0,
          pending: 0,
          noData: 0,
          notApplicable: 0,
          medianMinutesToMet: null,
          minutes: [],
        };
        rows.set(g.id, r);
      }
      r.worksheets += 1;
      switch (g.status) {
        case 'met':
          r.met += 1;
          r.applicable += 1;
          if (g.minutesFromTimeZero !== null) r.minutes.push(g.minutesFromTimeZero);
          break;
        case 'missed':
          r.missed += 1;
          r.applicable += 1;
          break;
        case 'pending':
          r.pending += 1;
          r.applicable += 1;
          break;
        case 'no-data':
          r.noData += 1;
          break;
        case 'not-applicable':
          r.notApplicable += 1;
          break;
      }
    }
  }
  const goals = [...rows.values()].map(({ minutes, ...r }) => ({ ...r, medianMinutesToMet: median(minutes) }));
  return { at: atIso, worksheets: perWorksheet.length, goals };
}

/** A plain-text table of the review. */
export function reviewTable(report: ReviewReport, folder: string): string {
  const head = ['goal', 'worksheets', 'applicable', 'met', 'missed', 'pending', 'no-data', 'n/a', 'median min to met'];
  const body = report.goals.map((g) => [
    g.id,
    String(g.worksheets),
    String(g.applicable),
    String(g.met),
    String(g.missed),
    String(g.pending),
    String(g.noData),
    String(g.notApplicable),
    g.medianMinutesToMet === null ? '-' : String(Math.round(g.medianMinutesToMet * 10) / 10),
  ]);
  const widths = head.map((h, i) => Math.max(h.length, ...body.map((r) => r[i]!.length)));
  const line = (cells: string[]): string =>
    cells
      .map((c, i) => (i === 0 ? c.padEnd(widths[i]!) : c.padStart(widths[i]!)))
      .join('  ')
      .trimEnd();
  return [
    `Review of ${report.worksheets} worksheet${report.worksheets === 1 ? '' : 's'} in ${folder}, judged at ${report.at}`,
    '',
    line(head),
    ...body.map(line),
    '',
    'applicable = met + missed + pending; missed includes late completions; the median is over',
    'worksheets where the goal was met in time.',
    '',
  ].join('\n');
}
