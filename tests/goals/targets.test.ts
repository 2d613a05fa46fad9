// Target goals (SSC 2021 resuscitation targets and EGDT): boundaries, latest value, age, in range
// now, and the time-weighted share of charted time in range.
// SSC 2021: reference file §1 — Evans L et al. Intensive Care Med 2021;47(11):1181–1247.
// EGDT: reference file §4 — Rivers E et al. N Engl J Med 2001;345(19):1368–1377.
import { describe, expect, it } from 'vitest';
import { goal, iso, rowId, sheet } from './fixture.js';

describe('ssc2021-targets.map', () => {
  // §1: septic shock on vasopressors, initial MAP target 65 mmHg.
  it('does not apply without a vasopressor', () => {
    expect(goal(sheet({}, [[0, { map: 60 }]]), 'ssc2021-targets.map', 10).status).toBe('not-applicable');
  });

  it('MAP exactly 65 is in range (met); 64 is out of range (pending, no deadline)', () => {
    const ok = goal(sheet({}, [[0, { norepinephrine: 0.1, map: 65 }]]), 'ssc2021-targets.map', 10);
    expect(ok.status).toBe('met');
    expect(ok.target).toMatchObject({ latestValue: 65, inRangeNow: true, ageMinutes: 10 });
    const low = goal(sheet({}, [[0, { norepinephrine: 0.1, map: 64 }]]), 'ssc2021-targets.map', 10);
    expect(low.status).toBe('pending');
    expect(low.deadline).toBeNull();
    expect(low.minutesLeft).toBeNull();
    expect(low.failRowIds).toEqual([rowId(0)]);
  });

  it('counts MAP only from when the vasopressor started, and gives the time-weighted share', () => {
    // Share definition (ours): from the first value in the window to now, each value holds until the next.
    // MAP 70 before the vasopressor is ignored; 60 at 10 (start), 70 at 40, now 70 → 30 of 60 min in range.
    const ws = sheet({}, [
      [0, { map: 70 }],
      [10, { norepinephrine: 0.05, map: 60 }],
      [40, { map: 70 }],
    ]);
    const g = goal(ws, 'ssc2021-targets.map', 70);
    expect(g.status).toBe('met');
    expect(g.metAt).toBe(iso(40));
    expect(g.target?.shareInRange).toBeCloseTo(0.5, 10);
    expect(g.target?.chartedMinutes).toBe(60);
    expect(g.target?.count).toBe(2);
    expect(g.target?.ageMinutes).toBe(30);
  });

  it('uses MAP estimated from SBP/DBP: 90/60 → 70 (reference file §16 derived vector)', () => {
    const g = goal(sheet({}, [[0, { norepinephrine: 0.05, sbp: 90, dbp: 60 }]]), 'ssc2021-targets.map', 5);
    expect(g.status).toBe('met');
    expect(g.target?.latestValue).toBeCloseTo(70, 10);
  });

  it('a target reached then lost is pending again', () => {
    const ws = sheet({}, [
      [0, { norepinephrine: 0.05, map: 70 }],
      [30, { map: 60 }],
    ]);
    const g = goal(ws, 'ssc2021-targets.map', 40);
    expect(g.status).toBe('pending');
    expect(g.target?.inRangeNow).toBe(false);
    expect(g.target?.shareInRange).toBeCloseTo(30 / 40, 10);
  });
});

describe('ssc2021-targets.lactate-falling and lactate-normal', () => {
  // §1 rec. 7: guide resuscitation to decrease raised lactate. Our figure: ≥ 10% fall, the Jones 2010
  // lactate-clearance goal (§8). §15 #19: (4.0 − 3.6)/4.0 × 100 = 9.999999999999998 in IEEE-754.
  it('4.0 → 3.6 is exactly a 10% fall and counts as falling', () => {
    const g = goal(
      sheet({}, [
        [0, { lactate: 4.0 }],
        [120, { lactate: 3.6 }],
      ]),
      'ssc2021-targets.lactate-falling',
      130,
    );
    expect(g.status).toBe('met');
    expect(g.metAt).toBe(iso(120));
  });

  it('4.0 → 3.61 (9.75%) is not falling enough; 4.0 → 3.5 (12.5%) is', () => {
    expect(
      goal(
        sheet({}, [
          [0, { lactate: 4.0 }],
          [120, { lactate: 3.61 }],
        ]),
        'ssc2021-targets.lactate-falling',
        130,
      ).status,
    ).toBe('pending');
    expect(
      goal(
        sheet({}, [
          [0, { lactate: 4.0 }],
          [120, { lactate: 3.5 }],
        ]),
        'ssc2021-targets.lactate-falling',
        130,
      ).status,
    ).toBe('met');
  });

  it('has no data with one lactate, and does not apply when lactate was never above 2.0', () => {
    expect(goal(sheet({}, [[0, { lactate: 4.0 }]]), 'ssc2021-targets.lactate-falling', 10).status).toBe('no-data');
    expect(
      goal(
        sheet({}, [
          [0, { lactate: 2.0 }],
          [60, { lactate: 1.5 }],
        ]),
        'ssc2021-targets.lactate-falling',
        70,
      ).status,
    ).toBe('not-applicable');
    expect(goal(sheet({}, [[0, { lactate: 2.0 }]]), 'ssc2021-targets.lactate-normal', 10).status).toBe('not-applicable');
  });

  it('lactate-normal: exactly 2.0 is normal, 2.1 is not', () => {
    expect(
      goal(
        sheet({}, [
          [0, { lactate: 4.0 }],
          [120, { lactate: 2.0 }],
        ]),
        'ssc2021-targets.lactate-normal',
        130,
      ).status,
    ).toBe('met');
    expect(
      goal(
        sheet({}, [
          [0, { lactate: 4.0 }],
          [120, { lactate: 2.1 }],
        ]),
        'ssc2021-targets.lactate-normal',
        130,
      ).status,
    ).toBe('pending');
  });
});

describe('ssc2021-targets.crt', () => {
  // §1 rec. 8 (CRT in septic shock); ≤ 3 s from ANDROMEDA-SHOCK (§9: normal CRT ≤ 3 s).
  // Septic shock (Sepsis-3, §5): vasopressor to keep MAP ≥ 65 and lactate > 2.
  it('3.0 s is in range and 3.1 s is not, once in septic shock', () => {
    expect(goal(sheet({}, [[0, { lactate: 2.5, norepinephrine: 0.1, crt: 3.0 }]]), 'ssc2021-targets.crt', 10).status).toBe('met');
    expect(goal(sheet({}, [[0, { lactate: 2.5, norepinephrine: 0.1, crt: 3.1 }]]), 'ssc2021-targets.crt', 10).status).toBe('pending');
  });

  it('does not apply with a vasopressor but lactate 2.0, and applies from a shock time set', () => {
    expect(goal(sheet({}, [[0, { lactate: 2.0, norepinephrine: 0.1, crt: 4 }]]), 'ssc2021-targets.crt', 10).status).toBe('not-applicable');
    expect(goal(sheet({ shockMin: 0 }, [[0, { lactate: 1.0, crt: 4 }]]), 'ssc2021-targets.crt', 10).status).toBe('pending');
  });
});

describe('ssc2021-targets.urine-output', () => {
  // 0.5 mL/kg/h: Rivers 2001 / SSC 2008 protocol (§4, §13); rate = mL / (kg × h) (§13).
  it('35 mL over 1 h at 70 kg is exactly 0.5 mL/kg/h (met); 34 mL is not', () => {
    expect(
      goal(
        sheet({ weightKg: 70 }, [
          [0, { hr: 100 }],
          [60, { uo_ml: 35 }],
        ]),
        'ssc2021-targets.urine-output',
        60,
      ).status,
    ).toBe('met');
    expect(
      goal(
        sheet({ weightKg: 70 }, [
          [0, { hr: 100 }],
          [60, { uo_ml: 34 }],
        ]),
        'ssc2021-targets.urine-output',
        60,
      ).status,
    ).toBe('pending');
  });

  it('weights the share by the interval each urine amount covers', () => {
    // 0–60: 20 mL (0.29, out), 60–180: 120 mL (0.71, in) → 120 of 180 min in range.
    const ws = sheet({ weightKg: 70 }, [
      [0, { hr: 100 }],
      [60, { uo_ml: 20 }],
      [180, { uo_ml: 120 }],
    ]);
    const g = goal(ws, 'ssc2021-targets.urine-output', 200);
    expect(g.target?.shareInRange).toBeCloseTo(120 / 180, 10);
    expect(g.target?.chartedMinutes).toBe(180);
  });

  it('has no data without a weight (per-kg goal)', () => {
    const g = goal(
      sheet({}, [
        [0, { hr: 100 }],
        [60, { uo_ml: 35 }],
      ]),
      'ssc2021-targets.urine-output',
      60,
    );
    expect(g.status).toBe('no-data');
    expect(g.explanation).toMatch(/weight/);
  });
});

describe('egdt targets', () => {
  // §4: CVP 8–12 mmHg, MAP 65–90 mmHg, ScvO2 ≥ 70%, urine ≥ 0.5 mL/kg/h, Hct ≥ 30% when ScvO2 < 70%,
  // within the first 6 h.
  it('CVP 8 and 12 are in range; 7 and 13 are not', () => {
    for (const [v, s] of [
      [8, 'met'],
      [12, 'met'],
      [7, 'pending'],
      [13, 'pending'],
    ] as const) {
      expect(goal(sheet({}, [[30, { cvp: v }]]), 'egdt.cvp', 40).status).toBe(s);
    }
  });

  it('MAP 65 and 90 are in range; 91 is not', () => {
    expect(goal(sheet({}, [[30, { map: 65 }]]), 'egdt.map', 40).status).toBe('met');
    expect(goal(sheet({}, [[30, { map: 90 }]]), 'egdt.map', 40).status).toBe('met');
    expect(goal(sheet({}, [[30, { map: 91 }]]), 'egdt.map', 40).status).toBe('pending');
  });

  it('ScvO2 first reached 70% at the 6-h minute is met; at 361 min it is missed though in range now', () => {
    const onTime = goal(
      sheet({}, [
        [60, { scvo2: 65 }],
        [360, { scvo2: 70 }],
      ]),
      'egdt.scvo2',
      400,
    );
    expect(onTime.status).toBe('met');
    expect(onTime.deadline).toBe(iso(360));
    const late = goal(
      sheet({}, [
        [60, { scvo2: 65 }],
        [361, { scvo2: 70 }],
      ]),
      'egdt.scvo2',
      400,
    );
    expect(late.status).toBe('missed');
    expect(late.late).toBe(true);
    expect(late.target?.inRangeNow).toBe(true);
  });

  it('a target never reached is pending before 6 h and missed after', () => {
    const ws = sheet({}, [[60, { scvo2: 65 }]]);
    expect(goal(ws, 'egdt.scvo2', 360).status).toBe('pending');
    expect(goal(ws, 'egdt.scvo2', 361).status).toBe('missed');
  });

  it('Hct applies only once an ScvO2 below 70% is charted; 30% is in range', () => {
    expect(goal(sheet({}, [[30, { scvo2: 70, hct: 25 }]]), 'egdt.hct', 40).status).toBe('not-applicable');
    expect(goal(sheet({}, [[30, { scvo2: 69, hct: 30 }]]), 'egdt.hct', 40).status).toBe('met');
    expect(goal(sheet({}, [[30, { scvo2: 69, hct: 29 }]]), 'egdt.hct', 40).status).toBe('pending');
  });

  it('urine output 0.5 mL/kg/h is in range', () => {
    expect(
      goal(
        sheet({ weightKg: 80 }, [
          [0, { hr: 90 }],
          [60, { uo_ml: 40 }],
        ]),
        'egdt.urine-output',
        60,
      ).status,
    ).toBe('met');
  });
});
