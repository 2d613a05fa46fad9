// Hour-1 bundle goals at their boundaries.
// Rules: reference file §2 — Levy MM, Evans LE, Rhodes A. The Surviving Sepsis Campaign Bundle:
// 2018 update. Intensive Care Med 2018;44(6):925–928 (Table 1: the five elements, all initiated
// within the first hour; time zero = ED triage).
import { describe, expect, it } from 'vitest';
import { goal, iso, rowId, sheet } from './fixture.js';

describe('ssc-hour1.lactate', () => {
  // §2 element 1 "measure lactate"; bundle window 1 h (Levy 2018 text).
  it('is met when the first lactate is charted at the deadline minute', () => {
    const ws = sheet({}, [[60, { lactate: 1.5 }]]);
    const g = goal(ws, 'ssc-hour1.lactate', 90);
    expect(g.status).toBe('met');
    expect(g.metAt).toBe(iso(60));
    expect(g.minutesFromTimeZero).toBe(60);
    expect(g.deadline).toBe(iso(60));
    expect(g.supportRowIds).toEqual([rowId(0)]);
  });

  it('is missed, keeping its completion time, one minute past the deadline', () => {
    const ws = sheet({}, [[61, { lactate: 1.5 }]]);
    const g = goal(ws, 'ssc-hour1.lactate', 90);
    expect(g.status).toBe('missed');
    expect(g.late).toBe(true);
    expect(g.metAt).toBe(iso(61));
    expect(g.minutesFromTimeZero).toBe(61);
    expect(g.minutesLate).toBe(1);
    expect(g.minutesOverdue).toBeNull();
    expect(g.failRowIds).toContain(rowId(0));
  });

  it('is pending with 0 minutes left at the deadline instant and missed one minute later', () => {
    const ws = sheet({}, [[5, { hr: 110 }]]);
    const atDeadline = goal(ws, 'ssc-hour1.lactate', 60);
    expect(atDeadline.status).toBe('pending');
    expect(atDeadline.minutesLeft).toBe(0);
    const after = goal(ws, 'ssc-hour1.lactate', 61);
    expect(after.status).toBe('missed');
    expect(after.late).toBe(false);
    expect(after.metAt).toBeNull();
    expect(after.minutesOverdue).toBe(1);
  });

  it('ignores rows charted after the evaluation moment', () => {
    const ws = sheet({}, [[30, { lactate: 3 }]]);
    expect(goal(ws, 'ssc-hour1.lactate', 20).status).toBe('pending');
    expect(goal(ws, 'ssc-hour1.lactate', 20).minutesLeft).toBe(40);
    expect(goal(ws, 'ssc-hour1.lactate', 30).status).toBe('met');
  });
});

describe('ssc-hour1.lactate-repeat', () => {
  // §2 element 1: "re-measure if initial lactate > 2 mmol/L"; §15 #8: use > 2, 2.0 → no repeat.
  it('does not apply when the first lactate is exactly 2.0 mmol/L', () => {
    const ws = sheet({}, [[10, { lactate: 2.0 }]]);
    const g = goal(ws, 'ssc-hour1.lactate-repeat', 30);
    expect(g.status).toBe('not-applicable');
    expect(g.conditionRowIds).toEqual([rowId(0)]);
  });

  it('applies above 2.0 and is due 4 h after the first lactate (2–4 h, from memory: outer bound)', () => {
    const ws = sheet({}, [[10, { lactate: 2.1 }]]);
    const g = goal(ws, 'ssc-hour1.lactate-repeat', 30);
    expect(g.status).toBe('pending');
    expect(g.deadline).toBe(iso(250));
    expect(g.conditionSince).toBe(iso(10));
  });

  it('is met by a repeat at the deadline minute and missed one minute after', () => {
    expect(
      goal(
        sheet({}, [
          [10, { lactate: 4.6 }],
          [250, { lactate: 3.1 }],
        ]),
        'ssc-hour1.lactate-repeat',
        300,
      ).status,
    ).toBe('met');
    const late = goal(
      sheet({}, [
        [10, { lactate: 4.6 }],
        [251, { lactate: 3.1 }],
      ]),
      'ssc-hour1.lactate-repeat',
      300,
    );
    expect(late.status).toBe('missed');
    expect(late.metAt).toBe(iso(251));
  });

  it('has no data before any lactate is charted', () => {
    expect(goal(sheet({}, [[10, { hr: 100 }]]), 'ssc-hour1.lactate-repeat', 30).status).toBe('no-data');
  });
});

describe('ssc-hour1.cultures-before-antibiotics', () => {
  // §2 element 2: obtain blood cultures before antibiotics; bundle window 1 h.
  it('is met when cultures come before the first antibiotic', () => {
    const ws = sheet({}, [
      [10, { cultures_drawn: true }],
      [30, { antibiotic: 'ceftriaxone 2 g' }],
    ]);
    const g = goal(ws, 'ssc-hour1.cultures-before-antibiotics', 40);
    expect(g.status).toBe('met');
    expect(g.metAt).toBe(iso(10));
    expect(g.supportRowIds).toEqual([rowId(0), rowId(1)]);
  });

  it('is missed when cultures are drawn after antibiotics, even within the hour', () => {
    const ws = sheet({}, [
      [20, { antibiotic: 'ceftriaxone 2 g' }],
      [30, { cultures_drawn: true }],
    ]);
    const g = goal(ws, 'ssc-hour1.cultures-before-antibiotics', 40);
    expect(g.status).toBe('missed');
    expect(g.metAt).toBe(iso(30));
    expect(g.failRowIds).toEqual([rowId(0), rowId(1)]);
    expect(g.explanation).toMatch(/after the first antibiotic/);
  });

  it('is missed as soon as an antibiotic is charted with no cultures', () => {
    const g = goal(sheet({}, [[20, { antibiotic: 'ceftriaxone 2 g' }]]), 'ssc-hour1.cultures-before-antibiotics', 25);
    expect(g.status).toBe('missed');
    expect(g.metAt).toBeNull();
  });

  it('counts cultures charted at the same minute as the antibiotic as before it (our decision)', () => {
    const ws = sheet({}, [[20, { cultures_drawn: true, antibiotic: 'ceftriaxone 2 g' }]]);
    expect(goal(ws, 'ssc-hour1.cultures-before-antibiotics', 25).status).toBe('met');
  });

  it('is met at the 60th minute and missed at the 61st', () => {
    expect(goal(sheet({}, [[60, { cultures_drawn: true }]]), 'ssc-hour1.cultures-before-antibiotics', 70).status).toBe('met');
    expect(goal(sheet({}, [[61, { cultures_drawn: true }]]), 'ssc-hour1.cultures-before-antibiotics', 70).status).toBe('missed');
  });
});

describe('ssc-hour1.antibiotics', () => {
  // §2 element 3; §15 #15: hour-1 antibiotic clock is 1 h from triage (time zero).
  it('is met at 60 min and missed at 61 min', () => {
    expect(goal(sheet({}, [[60, { antibiotic: 'pip-tazo 4.5 g' }]]), 'ssc-hour1.antibiotics', 90).status).toBe('met');
    const g = goal(sheet({}, [[61, { antibiotic: 'pip-tazo 4.5 g' }]]), 'ssc-hour1.antibiotics', 90);
    expect(g.status).toBe('missed');
    expect(g.late).toBe(true);
    expect(g.minutesFromTimeZero).toBe(61);
    expect(g.explanation).toMatch(/pip-tazo/);
  });
});

describe('ssc-hour1.fluids-30', () => {
  // §2 element 4: begin rapid 30 mL/kg crystalloid for hypotension or lactate ≥ 4 mmol/L.
  it('applies at lactate exactly 4.0 and not at 3.9 with normal pressure', () => {
    const four = sheet({ weightKg: 70 }, [
      [0, { sbp: 120, dbp: 70 }],
      [15, { lactate: 4.0 }],
    ]);
    expect(goal(four, 'ssc-hour1.fluids-30', 20).status).toBe('pending');
    const below = sheet({ weightKg: 70 }, [
      [0, { sbp: 120, dbp: 70 }],
      [15, { lactate: 3.9 }],
    ]);
    expect(goal(below, 'ssc-hour1.fluids-30', 20).status).toBe('not-applicable');
  });

  it('does not count MAP exactly 65 or SBP exactly 90 as low, but MAP 64 is', () => {
    // SEP-1 thresholds SBP < 90, MAP < 65 (reference file §3a), used by our decision.
    expect(goal(sheet({ weightKg: 70 }, [[0, { sbp: 90, map: 65 }]]), 'ssc-hour1.fluids-30', 5).status).toBe('not-applicable');
    expect(goal(sheet({ weightKg: 70 }, [[0, { sbp: 95, map: 64 }]]), 'ssc-hour1.fluids-30', 5).status).toBe('pending');
  });

  it('is due 60 min after a lactate ≥ 4 that comes after time zero, and met by the first crystalloid then', () => {
    const onTime = sheet({ weightKg: 70 }, [
      [0, { sbp: 120, dbp: 70 }],
      [30, { lactate: 4.2 }],
      [90, { fluid_ml: 500 }],
    ]);
    const g = goal(onTime, 'ssc-hour1.fluids-30', 95);
    expect(g.deadline).toBe(iso(90));
    expect(g.status).toBe('met');
    // Volume shown against 30 mL/kg × 70 kg = 2100 mL (reference file §16 derived vector).
    expect(g.volume).toMatchObject({ givenMl: 500, targetMl: 2100, weightBasis: 'actual' });
    const late = sheet({ weightKg: 70 }, [
      [0, { sbp: 120, dbp: 70 }],
      [30, { lactate: 4.2 }],
      [91, { fluid_ml: 500 }],
    ]);
    expect(goal(late, 'ssc-hour1.fluids-30', 95).status).toBe('missed');
  });

  it('has no data when neither blood pressure nor lactate is charted', () => {
    expect(goal(sheet({ weightKg: 70 }, [[0, { hr: 120 }]]), 'ssc-hour1.fluids-30', 5).status).toBe('no-data');
  });
});

describe('ssc-hour1.vasopressor', () => {
  // §2 element 5: vasopressors if hypotensive during or after fluid resuscitation to keep MAP ≥ 65.
  it('applies to a MAP below 65 at or after the first crystalloid, due 60 min later', () => {
    const ws = sheet({ weightKg: 70 }, [
      [10, { fluid_ml: 500, map: 62 }],
      [70, { norepinephrine: 0.05 }],
    ]);
    const g = goal(ws, 'ssc-hour1.vasopressor', 75);
    expect(g.conditionSince).toBe(iso(10));
    expect(g.deadline).toBe(iso(70));
    expect(g.status).toBe('met');
    const late = sheet({ weightKg: 70 }, [
      [10, { fluid_ml: 500, map: 62 }],
      [71, { norepinephrine: 0.05 }],
    ]);
    expect(goal(late, 'ssc-hour1.vasopressor', 75).status).toBe('missed');
  });

  it('does not apply at MAP exactly 65, nor to a low MAP charted only before fluids', () => {
    expect(goal(sheet({ weightKg: 70 }, [[10, { fluid_ml: 500, map: 65 }]]), 'ssc-hour1.vasopressor', 20).status).toBe('not-applicable');
    const before = sheet({ weightKg: 70 }, [
      [0, { map: 60 }],
      [10, { fluid_ml: 500 }],
      [20, { map: 70 }],
    ]);
    expect(goal(before, 'ssc-hour1.vasopressor', 30).status).toBe('not-applicable');
  });

  it('uses the MAP estimated from SBP and DBP when no MAP is charted', () => {
    // MAP = DBP + (SBP − DBP)/3: 90/50 → 63.3 mmHg (reference file §12, common practice, no source).
    const ws = sheet({ weightKg: 70 }, [[10, { fluid_ml: 500, sbp: 90, dbp: 50 }]]);
    expect(goal(ws, 'ssc-hour1.vasopressor', 20).status).toBe('pending');
    // 120/80 → 93.3, not low.
    expect(goal(sheet({ weightKg: 70 }, [[10, { fluid_ml: 500, sbp: 120, dbp: 80 }]]), 'ssc-hour1.vasopressor', 20).status).toBe(
      'not-applicable',
    );
  });
});
