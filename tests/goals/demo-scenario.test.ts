// The fictional demo scenario: valid, clearly labelled, and showing a realistic mix of statuses
// across the default sets. Expected statuses follow the published rules the other goal tests
// check: hour-1 antibiotic 1 h from triage (reference file §2, §15 #15), SEP-1 antibiotic 3 h
// (§3b), repeat lactate when the first is > 2 (§2, §3b, §15 #8), SEP-1 persistent hypotension =
// two consecutive low readings in the hour after 30 mL/kg (§3b).
import { describe, expect, it } from 'vitest';
import { demoWorksheet, DEMO_LABEL } from '../../src/app/demo-scenario.js';
import { Worksheet } from '../../src/sheet/model.js';
import { DEFAULT_SET_IDS, evaluate, suggestTimeZero } from '../../src/goals/index.js';

const NOW = Date.parse('2026-06-15T14:37:25.000Z');

function counter(): () => string {
  let n = 0;
  return () => `demo-${++n}`;
}

describe('demoWorksheet', () => {
  const ws = demoWorksheet(NOW, counter());

  it('is a valid, fictional, deterministic worksheet with time zero about 2 h 10 min ago (triage)', () => {
    expect(() => Worksheet.parse(ws)).not.toThrow();
    expect(ws.label).toBe(DEMO_LABEL);
    expect(ws.label).toMatch(/fictional/);
    expect(ws.demo).toBe(true);
    expect(ws.rows.some((r) => typeof r.cells['note']?.value === 'string' && /fictional/.test(r.cells['note'].value))).toBe(true);
    expect(ws.timeZero?.basis).toBe('triage');
    const elapsed = NOW - Date.parse(ws.timeZero!.time);
    expect(elapsed).toBeGreaterThanOrEqual(130 * 60_000);
    expect(elapsed).toBeLessThan(131 * 60_000);
    expect(ws.goalSets).toEqual([...DEFAULT_SET_IDS]);
    expect(JSON.stringify(demoWorksheet(NOW, counter()))).toBe(JSON.stringify(ws));
    // Every row is in the past and every edit is logged.
    expect(ws.rows.every((r) => Date.parse(r.time) <= NOW)).toBe(true);
    expect(ws.log.length).toBeGreaterThan(ws.rows.length);
  });

  it('shows a realistic mix of met, pending, missed, not-applicable (and no-data) goals', () => {
    const st = Object.fromEntries(evaluate(ws, ws.goalSets, NOW).map((g) => [g.id, g]));
    const status = (id: string) => st[id]!.status;
    expect(status('ssc-hour1.lactate')).toBe('met');
    expect(status('ssc-hour1.cultures-before-antibiotics')).toBe('met');
    expect(status('ssc-hour1.antibiotics')).toBe('missed');
    expect(st['ssc-hour1.antibiotics']!.late).toBe(true);
    expect(st['ssc-hour1.antibiotics']!.minutesFromTimeZero).toBe(75);
    expect(status('ssc-hour1.lactate-repeat')).toBe('pending');
    expect(status('ssc-hour1.fluids-30')).toBe('met');
    expect(status('ssc-hour1.vasopressor')).toBe('missed');
    expect(status('sep1.antibiotics')).toBe('met');
    expect(status('sep1.lactate-repeat')).toBe('pending');
    expect(status('sep1.fluids-30')).toBe('met');
    expect(status('sep1.vasopressor')).toBe('not-applicable');
    expect(status('sep1.reassessment')).toBe('met');
    expect(status('ssc2021-targets.map')).toBe('met');
    expect(status('ssc2021-targets.lactate-normal')).toBe('pending');
    expect(status('ssc2021-targets.lactate-falling')).toBe('no-data');
    const kinds = new Set(Object.values(st).map((g) => g.status));
    for (const k of ['met', 'pending', 'missed', 'not-applicable'] as const) expect(kinds.has(k)).toBe(true);
  });

  it('its criteria suggest severe sepsis at triage and septic shock at the 4.6 lactate', () => {
    const s = suggestTimeZero(ws, NOW);
    expect(s.severeSepsis?.time).toBe(ws.timeZero!.time);
    expect(Date.parse(s.septicShock!.time) - Date.parse(ws.timeZero!.time)).toBe(12 * 60_000);
  });

  it('keeps the display offset it is given', () => {
    const local = demoWorksheet(NOW, counter(), -300);
    expect(local.displayOffset).toBe(-300);
    expect(local.rows.every((r) => r.offset === -300)).toBe(true);
  });
});
