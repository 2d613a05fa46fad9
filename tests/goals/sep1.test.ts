// SEP-1 goals at their boundaries.
// Rules: reference file §3 — CMS/The Joint Commission SEP-1, Specifications Manual for National
// Hospital Inpatient Quality Measures (v5.3 numerator: 3-h and 6-h elements), with abstraction
// details restated in IDSA 2021 (Rhee C et al., Clin Infect Dis 2021;72(4):541–552, Table 3).
import { describe, expect, it } from 'vitest';
import { goal, iso, rowId, sheet } from './fixture.js';

describe('sep1.lactate', () => {
  // §3b: initial lactate within 3 h; window 6 h before to 3 h after (from memory).
  it('is met at 180 min and missed at 181 min', () => {
    expect(goal(sheet({}, [[180, { lactate: 1.2 }]]), 'sep1.lactate', 200).status).toBe('met');
    const g = goal(sheet({}, [[181, { lactate: 1.2 }]]), 'sep1.lactate', 200);
    expect(g.status).toBe('missed');
    expect(g.metAt).toBe(iso(181));
  });

  it('counts a lactate up to 6 h before time zero, with negative minutes', () => {
    const g = goal(sheet({}, [[-360, { lactate: 3.0 }]]), 'sep1.lactate', 10);
    expect(g.status).toBe('met');
    expect(g.minutesFromTimeZero).toBe(-360);
    expect(goal(sheet({}, [[-361, { lactate: 3.0 }]]), 'sep1.lactate', 10).status).toBe('pending');
  });
});

describe('sep1.antibiotics and sep1.cultures-before-antibiotics', () => {
  // §3b: antibiotic within 3 h of severe sepsis presentation; §15 #15: SEP-1 clock is 3 h.
  it('antibiotic at 180 min is met, at 181 missed', () => {
    expect(goal(sheet({}, [[180, { antibiotic: 'cefepime' }]]), 'sep1.antibiotics', 200).status).toBe('met');
    expect(goal(sheet({}, [[181, { antibiotic: 'cefepime' }]]), 'sep1.antibiotics', 200).status).toBe('missed');
  });

  it('an antibiotic at 75 min misses the hour-1 clock but meets the SEP-1 clock (§15 #15: separate clocks)', () => {
    const ws = sheet({}, [[75, { antibiotic: 'cefepime' }]]);
    expect(goal(ws, 'ssc-hour1.antibiotics', 80).status).toBe('missed');
    expect(goal(ws, 'sep1.antibiotics', 80).status).toBe('met');
  });

  it('counts an antibiotic given up to 24 h before time zero (window from memory)', () => {
    expect(goal(sheet({}, [[-1440, { antibiotic: 'cefepime' }]]), 'sep1.antibiotics', 10).status).toBe('met');
    expect(goal(sheet({}, [[-1441, { antibiotic: 'cefepime' }]]), 'sep1.antibiotics', 10).status).toBe('pending');
  });

  it('cultures drawn after antibiotics are missed', () => {
    // §3b: blood cultures drawn before antibiotics.
    const ws = sheet({}, [
      [40, { antibiotic: 'cefepime' }],
      [50, { cultures_drawn: true }],
    ]);
    const g = goal(ws, 'sep1.cultures-before-antibiotics', 60);
    expect(g.status).toBe('missed');
    expect(g.failRowIds).toEqual([rowId(0), rowId(1)]);
  });

  it('cultures at 180 min before any antibiotic are met; at 181 missed', () => {
    expect(goal(sheet({}, [[180, { cultures_drawn: true }]]), 'sep1.cultures-before-antibiotics', 200).status).toBe('met');
    expect(goal(sheet({}, [[181, { cultures_drawn: true }]]), 'sep1.cultures-before-antibiotics', 200).status).toBe('missed');
  });
});

describe('sep1.lactate-repeat', () => {
  // §3b 6-h element: repeat lactate only if the initial lactate is elevated; §15 #8: > 2, 2.0 → no.
  it('does not apply at 2.0 and applies at 2.1', () => {
    expect(goal(sheet({}, [[10, { lactate: 2.0 }]]), 'sep1.lactate-repeat', 20).status).toBe('not-applicable');
    expect(goal(sheet({}, [[10, { lactate: 2.1 }]]), 'sep1.lactate-repeat', 20).status).toBe('pending');
  });

  it('uses the lactate converted from mg/dL: 18.016 mg/dL ÷ 9.008 = 2.0 mmol/L does not trigger', () => {
    // §8: mg/dL → mmol/L ÷ 9.008; canonical value stored after conversion may carry float noise.
    const ws = sheet({}, [[10, { lactate: 18.016 / 9.008 }]]);
    expect(goal(ws, 'sep1.lactate-repeat', 20).status).toBe('not-applicable');
  });

  it('is due 6 h after time zero: repeat at 360 met, at 361 missed', () => {
    expect(
      goal(
        sheet({}, [
          [10, { lactate: 3 }],
          [360, { lactate: 2 }],
        ]),
        'sep1.lactate-repeat',
        400,
      ).status,
    ).toBe('met');
    expect(
      goal(
        sheet({}, [
          [10, { lactate: 3 }],
          [361, { lactate: 2 }],
        ]),
        'sep1.lactate-repeat',
        400,
      ).status,
    ).toBe('missed');
  });
});

describe('sep1.fluids-30', () => {
  // §3b: 30 mL/kg crystalloid within 3 h of initial hypotension or septic shock presentation;
  // §3a septic shock: initial lactate ≥ 4 mmol/L.
  it('applies at an initial lactate of exactly 4.0, due 3 h after it; 70 kg needs 2100 mL (§16)', () => {
    const ws = sheet({ weightKg: 70 }, [
      [0, { lactate: 4.0 }],
      [90, { fluid_ml: 1000 }],
      [180, { fluid_ml: 1100 }],
    ]);
    const g = goal(ws, 'sep1.fluids-30', 200);
    expect(g.status).toBe('met');
    expect(g.metAt).toBe(iso(180));
    expect(g.volume).toMatchObject({ givenMl: 2100, targetMl: 2100, weightKg: 70, weightBasis: 'actual' });
  });

  it('is missed, with its late completion time, when 30 mL/kg is reached one minute after the deadline', () => {
    const ws = sheet({ weightKg: 70 }, [
      [0, { lactate: 4.0 }],
      [180, { fluid_ml: 2099 }],
      [181, { fluid_ml: 1 }],
    ]);
    const g = goal(ws, 'sep1.fluids-30', 200);
    expect(g.status).toBe('missed');
    expect(g.late).toBe(true);
    expect(g.metAt).toBe(iso(181));
  });

  it('does not apply with initial lactate 3.9 and normal pressure', () => {
    expect(goal(sheet({ weightKg: 70 }, [[0, { lactate: 3.9, sbp: 120, map: 85 }]]), 'sep1.fluids-30', 20).status).toBe('not-applicable');
  });

  it('initial hypotension needs two consecutive low readings (our window: 6 h either side of time zero)', () => {
    // §3a initial hypotension: two hypotensive readings (SBP < 90 or MAP < 65) — from memory.
    const two = sheet({ weightKg: 70 }, [
      [0, { lactate: 1.5, sbp: 88 }],
      [15, { map: 64 }],
    ]);
    const g = goal(two, 'sep1.fluids-30', 20);
    expect(g.status).toBe('pending');
    expect(g.conditionSince).toBe(iso(15));
    expect(g.deadline).toBe(iso(195));
    expect(g.conditionRowIds).toEqual([rowId(0), rowId(1)]);
    const broken = sheet({ weightKg: 70 }, [
      [0, { lactate: 1.5, sbp: 88 }],
      [15, { map: 70 }],
      [30, { sbp: 86 }],
    ]);
    expect(goal(broken, 'sep1.fluids-30', 40).status).toBe('not-applicable');
  });

  it('an SBP drop of more than 40 from baseline does not trigger fluids (organ dysfunction only, our decision)', () => {
    const ws = sheet({ weightKg: 70, baselineSbp: 150 }, [
      [0, { lactate: 1.5, sbp: 100, map: 75 }],
      [15, { sbp: 105, map: 78 }],
    ]);
    expect(goal(ws, 'sep1.fluids-30', 20).status).toBe('not-applicable');
  });

  it('uses ideal body weight only when asked and BMI > 30; BMI exactly 30 uses actual weight (§15 #18)', () => {
    // 200 cm, 120 kg → BMI 30.0 exactly; 121 kg → 30.25. Devine male 200 cm: 50 + 2.3 × (200/2.54 − 60)
    // = 93.10 kg (reference file §12), so 30 mL/kg = 2793.1 mL; actual 120 kg → 3600 mL (§16 arithmetic).
    const rows = (): [number, Record<string, number>][] => [
      [0, { lactate: 4.5 }],
      [60, { fluid_ml: 2800 }],
    ];
    const bmi30 = sheet({ weightKg: 120, heightCm: 200, sex: 'male', useIdealWeight: true }, rows());
    const g30 = goal(bmi30, 'sep1.fluids-30', 90);
    expect(g30.status).toBe('pending');
    expect(g30.volume).toMatchObject({ targetMl: 3600, weightBasis: 'actual' });

    const bmiAbove = sheet({ weightKg: 121, heightCm: 200, sex: 'male', useIdealWeight: true }, rows());
    const gAbove = goal(bmiAbove, 'sep1.fluids-30', 90);
    expect(gAbove.status).toBe('met');
    expect(gAbove.volume?.weightBasis).toBe('ideal');
    expect(gAbove.volume?.weightKg).toBeCloseTo(93.1, 2);
    expect(gAbove.volume?.targetMl).toBeCloseTo(2793.07, 1);

    const notAsked = sheet({ weightKg: 121, heightCm: 200, sex: 'male', useIdealWeight: false }, rows());
    expect(goal(notAsked, 'sep1.fluids-30', 90).volume).toMatchObject({ targetMl: 3630, weightBasis: 'actual' });
  });

  it('has no data without a weight', () => {
    const g = goal(
      sheet({}, [
        [0, { lactate: 4.5 }],
        [60, { fluid_ml: 2800 }],
      ]),
      'sep1.fluids-30',
      90,
    );
    expect(g.status).toBe('no-data');
    expect(g.explanation).toMatch(/weight/);
  });
});

describe('sep1.vasopressor', () => {
  // §3b: vasopressor within 6 h of septic shock presentation only if hypotension persists after
  // the 30 mL/kg: two consecutive readings SBP < 90 or MAP < 65 within 1 h after the infusion
  // ends; one normal reading → no; one low reading only → cannot be determined.
  const fluids: [number, Record<string, number>][] = [
    [0, { lactate: 2.5 }],
    [30, { fluid_ml: 1000 }],
    [60, { fluid_ml: 1100 }],
  ];

  it('applies after two consecutive low readings in the hour after fluids; due 6 h from shock', () => {
    const ws = sheet({ weightKg: 70 }, [...fluids, [80, { map: 62 }], [100, { sbp: 85 }], [110, { norepinephrine: 0.05 }]]);
    const g = goal(ws, 'sep1.vasopressor', 120);
    expect(g.status).toBe('met');
    expect(g.conditionSince).toBe(iso(100));
    expect(g.deadline).toBe(iso(460));
  });

  it('counts the deadline from an earlier shock presentation (initial lactate ≥ 4)', () => {
    const ws = sheet({ weightKg: 70 }, [
      [0, { lactate: 4.0 }],
      [30, { fluid_ml: 1000 }],
      [60, { fluid_ml: 1100 }],
      [80, { map: 62 }],
      [100, { map: 60 }],
    ]);
    const g = goal(ws, 'sep1.vasopressor', 120);
    expect(g.status).toBe('pending');
    expect(g.deadline).toBe(iso(360));
  });

  it('a vasopressor at the 6-h deadline is met and one minute later missed', () => {
    const base: [number, Record<string, number>][] = [...fluids, [80, { map: 62 }], [100, { sbp: 85 }]];
    expect(goal(sheet({ weightKg: 70 }, [...base, [460, { norepinephrine: 0.1 }]]), 'sep1.vasopressor', 500).status).toBe('met');
    expect(goal(sheet({ weightKg: 70 }, [...base, [461, { norepinephrine: 0.1 }]]), 'sep1.vasopressor', 500).status).toBe('missed');
  });

  it('does not apply when a normal reading breaks the low readings and the hour has passed', () => {
    const ws = sheet({ weightKg: 70 }, [...fluids, [70, { map: 63 }], [85, { map: 67 }], [100, { map: 62 }], [125, { map: 61 }]]);
    expect(goal(ws, 'sep1.vasopressor', 130).status).toBe('not-applicable');
  });

  it('cannot be judged with a single low reading in the hour', () => {
    const ws = sheet({ weightKg: 70 }, [...fluids, [90, { map: 60 }]]);
    const g = goal(ws, 'sep1.vasopressor', 130);
    expect(g.status).toBe('no-data');
    expect(g.explanation).toMatch(/only one low reading/);
    // While the hour is still open it is also not yet judged.
    expect(goal(ws, 'sep1.vasopressor', 100).status).toBe('no-data');
  });

  it('does not apply before the 30 mL/kg is complete; MAP exactly 65 is not low', () => {
    expect(
      goal(
        sheet({ weightKg: 70 }, [
          [0, { lactate: 2.5 }],
          [30, { fluid_ml: 1000, map: 60 }],
          [45, { map: 58 }],
        ]),
        'sep1.vasopressor',
        50,
      ).status,
    ).toBe('not-applicable');
    const at65 = sheet({ weightKg: 70 }, [...fluids, [80, { map: 65 }], [100, { map: 65 }]]);
    expect(goal(at65, 'sep1.vasopressor', 130).status).toBe('not-applicable');
  });
});

describe('sep1.reassessment', () => {
  // §3b: repeat volume status and tissue perfusion assessment within 6 h of septic shock
  // presentation, if persistent hypotension after fluids or initial lactate ≥ 4.
  it('does not apply with initial lactate 3.9 and no persistent hypotension', () => {
    expect(goal(sheet({ weightKg: 70 }, [[0, { lactate: 3.9 }]]), 'sep1.reassessment', 10).status).toBe('not-applicable');
  });

  it('counts only a reassessment charted after the 30 mL/kg is complete (our decision)', () => {
    const early = sheet({ weightKg: 70 }, [
      [0, { lactate: 4.0 }],
      [20, { perfusion_reassessed: true }],
      [60, { fluid_ml: 2100 }],
    ]);
    expect(goal(early, 'sep1.reassessment', 70).status).toBe('pending');
    const after = sheet({ weightKg: 70 }, [
      [0, { lactate: 4.0 }],
      [60, { fluid_ml: 2100 }],
      [90, { perfusion_reassessed: true }],
    ]);
    const g = goal(after, 'sep1.reassessment', 100);
    expect(g.status).toBe('met');
    expect(g.metAt).toBe(iso(90));
  });

  it('is due 6 h from septic shock presentation: 360 met, 361 missed', () => {
    const make = (m: number) =>
      sheet({ weightKg: 70 }, [
        [0, { lactate: 4.0 }],
        [60, { fluid_ml: 2100 }],
        [m, { perfusion_reassessed: true }],
      ]);
    expect(goal(make(360), 'sep1.reassessment', 400).status).toBe('met');
    expect(goal(make(361), 'sep1.reassessment', 400).status).toBe('missed');
  });

  it('applies from a septic shock time set on the worksheet', () => {
    const g = goal(sheet({ weightKg: 70, shockMin: 30 }, [[0, { lactate: 1.0 }]]), 'sep1.reassessment', 40);
    expect(g.status).toBe('pending');
    expect(g.deadline).toBe(iso(390));
  });
});
