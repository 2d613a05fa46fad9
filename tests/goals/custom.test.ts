// Custom goals: the worksheet's own condition and target formulas, evaluated only through the
// restricted formula engine (src/sheet/formula-engine.ts). The thresholds below are example user
// input, not clinical figures; these tests check evaluation semantics (no source needed), and
// that a refused formula never runs.
import { describe, expect, it } from 'vitest';
import { evaluate } from '../../src/goals/index.js';
import type { CustomGoal } from '../../src/sheet/model.js';
import { at, iso, rowId, sheet } from './fixture.js';

function custom(goals: CustomGoal[], rows: Parameters<typeof sheet>[1], atMin: number) {
  const ws = sheet({ weightKg: 70, customGoals: goals }, rows);
  return evaluate(ws, ['custom'], at(atMin));
}

describe('custom goals', () => {
  it('are evaluated only when "custom" is asked for', () => {
    const ws = sheet({ customGoals: [{ id: 'spo2', label: 'SpO2 at least 92', target: 'spo2 >= 92' }] }, [[0, { spo2: 95 }]]);
    expect(evaluate(ws, ['sep1'], at(10)).some((g) => g.setId === 'custom')).toBe(false);
    expect(
      evaluate(ws, ['sep1', 'custom'], at(10))
        .filter((g) => g.setId === 'custom')
        .map((g) => g.id),
    ).toEqual(['custom.spo2']);
  });

  it('a standing target is met while true at the latest row, with a time-weighted share', () => {
    const [g] = custom(
      [{ id: 'spo2', label: 'SpO2 at least 92', target: 'spo2 >= 92' }],
      [
        [0, { spo2: 90 }],
        [30, { spo2: 92 }],
      ],
      60,
    );
    expect(g!.status).toBe('met');
    expect(g!.kind).toBe('custom');
    expect(g!.metAt).toBe(iso(30));
    expect(g!.target?.shareInRange).toBeCloseTo(0.5, 10);
    expect(g!.supportRowIds).toEqual([rowId(1)]);
  });

  it('a standing target that became false is pending', () => {
    const [g] = custom(
      [{ id: 'spo2', label: 'SpO2 at least 92', target: 'spo2 >= 92' }],
      [
        [0, { spo2: 95 }],
        [30, { spo2: 91 }],
      ],
      60,
    );
    expect(g!.status).toBe('pending');
    expect(g!.failRowIds).toEqual([rowId(1)]);
  });

  it('with a deadline: first true at the deadline minute is met, one minute later missed', () => {
    const goalDef: CustomGoal = {
      id: 'lac',
      label: 'Lactate under 2 within 4 h',
      condition: 'lactate > 2',
      target: 'lactate < 2',
      deadlineMinutes: 240,
    };
    expect(
      custom(
        [goalDef],
        [
          [0, { lactate: 3.5 }],
          [240, { lactate: 1.8 }],
        ],
        250,
      )[0]!.status,
    ).toBe('met');
    const late = custom(
      [goalDef],
      [
        [0, { lactate: 3.5 }],
        [241, { lactate: 1.8 }],
      ],
      250,
    )[0]!;
    expect(late.status).toBe('missed');
    expect(late.metAt).toBe(iso(241));
    expect(late.deadline).toBe(iso(240));
  });

  it('uses derived values and helpers (per-kg fluid from the dosing weight)', () => {
    // 30 mL/kg × 70 kg = 2100 mL (reference file §16, derived vector).
    const [g] = custom(
      [{ id: 'fluid', label: '30 mL/kg in 3 h', target: 'running_sum(fluid_ml) / dosing_weight >= 30', deadlineMinutes: 180 }],
      [
        [60, { fluid_ml: 1000 }],
        [120, { fluid_ml: 1100 }],
      ],
      130,
    );
    expect(g!.status).toBe('met');
    expect(g!.metAt).toBe(iso(120));
  });

  it('a condition that is never true does not apply; one that cannot be worked out has no data', () => {
    const cond: CustomGoal = { id: 'lac', label: 'Lactate falling', condition: 'lactate > 4', target: 'lactate < 4' };
    expect(custom([cond], [[0, { lactate: 3.0 }]], 10)[0]!.status).toBe('not-applicable');
    const none = custom([cond], [[0, { hr: 100 }]], 10)[0]!;
    expect(none.status).toBe('no-data');
    expect(none.explanation).toMatch(/needs lactate/);
  });

  it('a formula the engine refuses is reported and never runs', () => {
    const [g] = custom([{ id: 'bad', label: 'Bad', target: 'import({x: 1})' }], [[0, { hr: 100 }]], 10);
    expect(g!.status).toBe('no-data');
    expect(g!.explanation).toMatch(/The target cannot be read/);
    const [h] = custom([{ id: 'bad2', label: 'Bad', target: 'spo2 >= 92', condition: 'hr = 3' }], [[0, { hr: 100 }]], 10);
    expect(h!.status).toBe('no-data');
    expect(h!.explanation).toMatch(/The condition cannot be read/);
  });

  it('have no data when time zero is not set', () => {
    const ws = sheet({ t0: null, customGoals: [{ id: 'spo2', label: 'SpO2', target: 'spo2 >= 92' }] }, [[0, { spo2: 95 }]]);
    expect(evaluate(ws, ['custom'], at(10))[0]!.status).toBe('no-data');
  });
});
