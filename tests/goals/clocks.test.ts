// Clocks: elapsed time, goal countdowns, measure ages, and when the screen must next update.
// Design rule (design.md, Clocks): tick at least once a minute; our rule: every second in the last
// 10 minutes before a pending deadline. Durations are exact instants apart (common practice, no source).
import { describe, expect, it } from 'vitest';
import { FixedClock } from '../../src/sheet/clock.js';
import { elapsedSinceTimeZero, goalClocks, measureAges, nextTickMs, panelOrder } from '../../src/goals/index.js';
import type { GoalStatus } from '../../src/goals/index.js';
import { T0, at, iso, rowId, sheet } from './fixture.js';

type S = Pick<GoalStatus, 'id' | 'status' | 'deadline' | 'late'>;
const s = (id: string, status: GoalStatus['status'], deadlineMin: number | null, late = false): S => ({
  id,
  status,
  deadline: deadlineMin === null ? null : iso(deadlineMin),
  late,
});

describe('elapsedSinceTimeZero', () => {
  it('is exact and uses the injected clock', () => {
    const clock = new FixedClock(at(134));
    const ws = sheet({}, []);
    expect(elapsedSinceTimeZero(ws, clock.now())).toBe(134 * 60_000);
    clock.advance(1000);
    expect(elapsedSinceTimeZero(ws, clock.now())).toBe(134 * 60_000 + 1000);
    expect(elapsedSinceTimeZero(sheet({ t0: null }, []), clock.now())).toBeNull();
  });

  it('is exact across the fall-back change (00:30 −04:00 to 01:15 −05:00 is 105 min)', () => {
    const ws = { timeZero: { time: '2026-11-01T04:30:00.000Z', offset: -240, basis: 'triage' as const } };
    expect(elapsedSinceTimeZero(ws, Date.parse('2026-11-01T01:15:00-05:00'))).toBe(105 * 60_000);
  });
});

describe('goalClocks', () => {
  it('gives time left for pending, overdue for missed, and seconds in the last 10 minutes', () => {
    const c = goalClocks(
      [
        s('a', 'pending', 60),
        s('b', 'pending', 70),
        s('c', 'missed', 30),
        s('d', 'met', 60),
        s('e', 'pending', null),
        s('f', 'missed', 30, true),
      ],
      at(55),
    );
    expect(c[0]).toMatchObject({ msLeft: 5 * 60_000, showSeconds: true });
    expect(c[1]).toMatchObject({ msLeft: 15 * 60_000, showSeconds: false });
    expect(c[2]).toMatchObject({ msOverdue: 25 * 60_000, msLeft: null });
    expect(c[3]).toMatchObject({ msLeft: null, msOverdue: null });
    expect(c[4]).toMatchObject({ msLeft: null, deadlineMs: null });
    // Done late: no growing overdue clock.
    expect(c[5]).toMatchObject({ msOverdue: null, msLeft: null });
  });
});

describe('measureAges', () => {
  it('gives the time since each measure was last charted, ignoring later rows', () => {
    const ws = sheet({}, [
      [0, { map: 60, hr: 100 }],
      [20, { map: 65 }],
      [90, { map: 70 }],
    ]);
    const ages = measureAges(ws, at(50));
    expect(ages.get('map')).toEqual({ key: 'map', lastAt: iso(20), rowId: rowId(1), ageMs: 30 * 60_000 });
    expect(ages.get('hr')?.ageMs).toBe(50 * 60_000);
    expect(ages.has('lactate')).toBe(false);
  });
});

describe('nextTickMs', () => {
  const now = T0 + 12_345; // not on a second or minute boundary

  it('ticks at least once a minute with nothing pending', () => {
    expect(nextTickMs([], now)).toBe(now + 60_000);
    expect(nextTickMs([s('a', 'met', 10)], now)).toBe(now + 60_000);
  });

  it('lands on the minute boundary of the time-zero clock', () => {
    expect(nextTickMs([], now, T0)).toBe(T0 + 60_000);
    expect(nextTickMs([], T0 + 60_000, T0)).toBe(T0 + 120_000);
  });

  it('with a deadline 30 min away, ticks on its minute boundary and no later than a minute', () => {
    const n = nextTickMs([s('a', 'pending', 30)], now);
    expect(n).toBe(T0 + 60_000); // deadline at T0+30 min: boundaries at whole minutes from T0
    expect(n - now).toBeLessThanOrEqual(60_000);
  });

  it('wakes exactly when the last 10 minutes begin', () => {
    // Deadline at 10 min 30 s from now: the seconds window opens in 30 s.
    const d = now + 630_000;
    expect(nextTickMs([{ status: 'pending', deadline: new Date(d).toISOString() }], now)).toBe(now + 30_000);
  });

  it('ticks every second (on the deadline seconds) inside the last 10 minutes, up to the deadline itself', () => {
    const d = T0 + 10 * 60_000;
    const st = [{ status: 'pending' as const, deadline: new Date(d).toISOString() }];
    expect(nextTickMs(st, d - 600_000)).toBe(d - 599_000); // exactly 10 min left: per second
    expect(nextTickMs(st, d - 5_500)).toBe(d - 5_000);
    expect(nextTickMs(st, d - 1)).toBe(d);
    expect(nextTickMs(st, d)).toBe(d + 1000); // at the deadline: next second, when it turns missed
  });

  it('re-evaluates at once when a pending status has a past deadline (stale)', () => {
    expect(nextTickMs([s('a', 'pending', 0)], at(5))).toBe(at(5) + 1);
  });

  it('counts overdue minutes on the missed deadline minute boundary', () => {
    const d = T0 + 30_000; // deadline at 30 s past a minute
    expect(nextTickMs([{ status: 'missed', deadline: new Date(d).toISOString() }], T0 + 120_000)).toBe(T0 + 150_000);
    // Done late: nothing counts, so only the once-a-minute tick remains.
    expect(nextTickMs([{ status: 'missed', late: true, deadline: new Date(d).toISOString() }], T0 + 120_000)).toBe(T0 + 180_000);
  });
});

describe('panelOrder', () => {
  it('puts unmet and due soonest at the top', () => {
    const order = panelOrder([
      s('met', 'met', 60),
      s('pending-late', 'pending', 300),
      s('na', 'not-applicable', null),
      s('overdue', 'missed', 60),
      s('pending-soon', 'pending', 120),
      s('standing', 'pending', null),
      s('done-late', 'missed', 60, true),
      s('nodata', 'no-data', null),
    ]).map((x) => x.id);
    expect(order).toEqual(['overdue', 'pending-soon', 'pending-late', 'standing', 'nodata', 'done-late', 'met', 'na']);
  });
});
