// Engine behaviour shared by every goal: precedence, time zero, row order, daylight saving, the
// --json contract, the registry (a new set version from data alone), and goal ids.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { FixedClock } from '../../src/sheet/clock.js';
import type { Worksheet } from '../../src/sheet/model.js';
import { parseTimeInput } from '../../src/sheet/time.js';
import { addRow, createWorksheet, setFacts } from '../../src/sheet/worksheet.js';
import {
  DEFAULT_SET_IDS,
  GOAL_SETS,
  GoalRegistry,
  UnknownGoalSetError,
  createDefaultRegistry,
  defaultRegistry,
  evaluate,
  statusReport,
  worksheetSetIds,
} from '../../src/goals/index.js';
import { T0, at, goal, iso, sheet } from './fixture.js';

const ALL = ['ssc-hour1', 'sep1', 'ssc2021-targets', 'egdt'];

describe('goal ids', () => {
  it('are exactly the ids of design.md (Goals: published sets and their goal ids)', () => {
    // Source: /work/shared/design.md, section Goals (project contract, not a clinical source).
    const ids = Object.fromEntries(GOAL_SETS.map((s) => [s.id, s.goals.map((g) => g.id)]));
    expect(ids).toEqual({
      'ssc-hour1': ['lactate', 'lactate-repeat', 'cultures-before-antibiotics', 'antibiotics', 'fluids-30', 'vasopressor'],
      sep1: ['lactate', 'cultures-before-antibiotics', 'antibiotics', 'lactate-repeat', 'fluids-30', 'vasopressor', 'reassessment'],
      'ssc2021-targets': ['map', 'lactate-falling', 'lactate-normal', 'crt', 'urine-output'],
      egdt: ['cvp', 'map', 'scvo2', 'urine-output', 'hct'],
    });
    expect(DEFAULT_SET_IDS).toEqual(['ssc-hour1', 'sep1', 'ssc2021-targets']);
  });

  it('every goal names its source and version; the §15 choices are written down', () => {
    for (const s of GOAL_SETS) {
      for (const g of s.goals) {
        expect(g.source.length).toBeGreaterThan(10);
        expect(g.version.length).toBeGreaterThan(0);
      }
    }
    const decision = (id: string): string => {
      const [set, g] = id.split('.') as [string, string];
      return GOAL_SETS.find((s) => s.id === set)!.goals.find((x) => x.id === g)!.decision ?? '';
    };
    // Reference file §15 #8 (repeat > 2), #15 (antibiotic clocks), #18 (IBW BMI > 30), #19 (10% boundary).
    expect(decision('sep1.lactate-repeat')).toMatch(/above 2/);
    expect(decision('ssc-hour1.antibiotics')).toMatch(/60 min/);
    expect(decision('sep1.antibiotics')).toMatch(/3 h/);
    expect(decision('sep1.fluids-30')).toMatch(/BMI > 30/);
    expect(decision('ssc2021-targets.lactate-falling')).toMatch(/10%/);
  });
});

describe('precedence and time zero', () => {
  it('every goal has no data when time zero is not set', () => {
    const ws = sheet({ t0: null, weightKg: 70 }, [[0, { lactate: 5, antibiotic: 'x' }]]);
    const all = evaluate(ws, ALL, at(30));
    expect(all.length).toBe(23);
    expect(new Set(all.map((g) => g.status))).toEqual(new Set(['no-data']));
    expect(all[0]!.explanation).toMatch(/Time zero is not set/);
  });

  it('not-applicable wins over missing data for the rule (no weight, but no reason for fluids)', () => {
    const g = goal(sheet({ t0: 0 }, [[0, { lactate: 1.0, sbp: 120, map: 85 }]]), 'sep1.fluids-30', 10);
    expect(g.status).toBe('not-applicable');
  });

  it('a definitive failure is missed before its deadline (antibiotic before cultures)', () => {
    const g = goal(
      sheet({}, [
        [5, { antibiotic: 'x' }],
        [10, { cultures_drawn: true }],
      ]),
      'sep1.cultures-before-antibiotics',
      15,
    );
    expect(g.status).toBe('missed');
    expect(g.minutesOverdue).toBeNull();
  });

  it('throws for an unknown set id, naming the known ones', () => {
    const ws = sheet({}, []);
    expect(() => evaluate(ws, ['nope'], at(0))).toThrow(UnknownGoalSetError);
    expect(() => evaluate(ws, ['nope'], at(0))).toThrow(/known sets: ssc-hour1/);
  });
});

describe('rows entered out of order', () => {
  it('give the same statuses as rows entered in time order', () => {
    const rows: [number, Record<string, number | string | true>][] = [
      [0, { sbp: 88, map: 60, lactate: 4.4 }],
      [20, { cultures_drawn: true }],
      [45, { antibiotic: 'cefepime', fluid_ml: 1000 }],
      [90, { fluid_ml: 1100, map: 66 }],
      [150, { lactate: 3.0 }],
    ];
    const inOrder = sheet({ weightKg: 70 }, rows);
    const reversed = sheet({ weightKg: 70 }, [...rows].reverse());
    const strip = (ws: Worksheet) => evaluate(ws, ALL, at(200)).map((g) => [g.id, g.status, g.metAt, g.deadline]);
    expect(strip(reversed)).toEqual(strip(inOrder));
    // Even a stored worksheet whose rows array is not sorted (e.g. imported) is read in time order.
    const shuffled: Worksheet = {
      ...inOrder,
      rows: [inOrder.rows[3]!, inOrder.rows[0]!, inOrder.rows[4]!, inOrder.rows[2]!, inOrder.rows[1]!],
    };
    expect(strip(shuffled)).toEqual(strip(inOrder));
    expect(goal(shuffled, 'sep1.lactate-repeat', 200).metAt).toBe(iso(150));
  });
});

describe('daylight-saving change', () => {
  // US Eastern time falls back on 2026-11-01 at 02:00 EDT (−04:00) to 01:00 EST (−05:00).
  // Durations are exact differences between instants (common practice, no source).
  function dstSheet(): Worksheet {
    let n = 0;
    const clock = new FixedClock(Date.parse('2026-11-01T04:30:00Z'));
    const ctx = { clock, newId: () => `d${++n}` };
    const t0 = parseTimeInput('2026-11-01T00:30-04:00', -240);
    if (!t0.ok) throw new Error(t0.error);
    let ws = createWorksheet(ctx, { label: 'DST bed (fictional)', displayOffset: -240, weightKg: 70 });
    ws = setFacts(ctx, ws, { timeZero: { time: t0.time, offset: t0.offset, basis: 'triage' } }).worksheet;
    const add = (text: string, offset: number, cells: Worksheet['rows'][number]['cells']): void => {
      const p = parseTimeInput(text, offset);
      if (!p.ok) throw new Error(p.error);
      ws = addRow(ctx, ws, p.time, p.offset, cells).worksheet;
    };
    add('2026-11-01T00:40-04:00', -240, { lactate: { value: 3.2 } });
    add('2026-11-01T01:45-04:00', -240, { cultures_drawn: { value: true } }); // 75 min after time zero
    add('2026-11-01T01:15-05:00', -300, { antibiotic: { value: 'cefepime 2 g' } }); // 105 min: wall clock earlier!
    return ws;
  }

  it('counts 105 min to an antibiotic charted at 01:15 −05:00 after a 00:30 −04:00 time zero', () => {
    const ws = dstSheet();
    expect(ws.rows.map((r) => r.time)).toEqual(['2026-11-01T04:40:00.000Z', '2026-11-01T05:45:00.000Z', '2026-11-01T06:15:00.000Z']);
    const atMs = Date.parse('2026-11-01T06:30:00Z');
    const [h1] = evaluate(ws, ['ssc-hour1'], atMs).filter((g) => g.goalId === 'antibiotics');
    expect(h1!.status).toBe('missed');
    expect(h1!.minutesFromTimeZero).toBe(105);
    expect(h1!.minutesLate).toBe(45);
    const [s1] = evaluate(ws, ['sep1'], atMs).filter((g) => g.goalId === 'antibiotics');
    expect(s1!.status).toBe('met');
    expect(s1!.minutesFromTimeZero).toBe(105);
    // Cultures at 75 min (01:45 −04:00) come before the antibiotic (01:15 −05:00) in real time.
    const [c1] = evaluate(ws, ['sep1'], atMs).filter((g) => g.goalId === 'cultures-before-antibiotics');
    expect(c1!.status).toBe('met');
    expect(c1!.minutesFromTimeZero).toBe(75);
  });
});

describe('statusReport (design.md --json contract)', () => {
  it('has exactly timeZero, at and goals with id, status, metAt, minutesFromTimeZero, deadline', () => {
    const ws = sheet({ weightKg: 70 }, [
      [10, { lactate: 4.6 }],
      [75, { antibiotic: 'x' }],
    ]);
    const r = statusReport(ws, ['ssc-hour1', 'sep1'], at(90));
    expect(Object.keys(r)).toEqual(['timeZero', 'at', 'goals']);
    expect(r.timeZero).toBe(iso(0));
    expect(r.at).toBe(iso(90));
    expect(r.goals.length).toBe(13);
    for (const g of r.goals) expect(Object.keys(g)).toEqual(['id', 'status', 'metAt', 'minutesFromTimeZero', 'deadline']);
    expect(r.goals.find((g) => g.id === 'sep1.antibiotics')).toEqual({
      id: 'sep1.antibiotics',
      status: 'met',
      metAt: iso(75),
      minutesFromTimeZero: 75,
      deadline: iso(180),
    });
    expect(r.goals.find((g) => g.id === 'ssc-hour1.antibiotics')).toEqual({
      id: 'ssc-hour1.antibiotics',
      status: 'missed',
      metAt: iso(75),
      minutesFromTimeZero: 75,
      deadline: iso(60),
    });
    expect(JSON.parse(JSON.stringify(r))).toEqual(r);
  });

  it('says null time zero when none is set', () => {
    expect(statusReport(sheet({ t0: null }, []), ['sep1'], T0).timeZero).toBeNull();
  });
});

describe('registry: a new set version from data alone', () => {
  // An invented future set written as JSON (not a published figure): it only exercises the engine.
  const json = JSON.stringify({
    id: 'example-2026',
    version: '2026-test',
    title: 'Example future targets (test data)',
    source: 'Test data only',
    goals: [
      {
        id: 'map',
        label: 'MAP at least 70 while on a vasopressor',
        source: 'Test data only',
        version: '2026-test',
        appliesWhen: 'a vasopressor is running',
        condition: { kind: 'any-value', keys: ['norepinephrine', 'vasopressin'], op: '>', value: 0 },
        rule: { kind: 'target', key: 'map', test: { kind: 'range', min: 70 }, from: 'condition' },
        decision: 'Test decision text',
      },
      {
        id: 'antibiotics',
        label: 'Antibiotic within 45 min',
        source: 'Test data only',
        version: '2026-test',
        appliesWhen: 'always',
        condition: { kind: 'always' },
        rule: { kind: 'first-value-within', keys: ['antibiotic'], event: 'first antibiotic' },
        deadline: { minutes: 45, from: 'time-zero' },
      },
    ],
  });

  it('registers and evaluates without touching the engine', () => {
    const registry = createDefaultRegistry();
    registry.register(JSON.parse(json) as unknown);
    expect(registry.ids()).toContain('example-2026');
    const ws = sheet({}, [
      [0, { norepinephrine: 0.1, map: 68 }],
      [46, { antibiotic: 'x' }],
    ]);
    const out = evaluate(ws, ['example-2026'], at(50), { registry });
    expect(out.map((g) => [g.id, g.status])).toEqual([
      ['example-2026.map', 'pending'],
      ['example-2026.antibiotics', 'missed'],
    ]);
    expect(out[0]!.decision).toBe('Test decision text');
    // The shared registry is untouched.
    expect(defaultRegistry.has('example-2026')).toBe(false);
  });

  it('refuses invalid data, a reserved id, and a duplicate id', () => {
    const registry = new GoalRegistry();
    const bad = JSON.parse(json) as { goals: { rule: { kind: string } }[] };
    bad.goals[0]!.rule.kind = 'teleport';
    expect(() => registry.register(bad)).toThrow(/Not a valid goal set at goals\.0\.rule/);
    expect(() => registry.register({ ...(JSON.parse(json) as object), id: 'custom' })).toThrow(/reserved/);
    registry.register(JSON.parse(json) as unknown);
    expect(() => registry.register(JSON.parse(json) as unknown)).toThrow(/already registered/);
  });

  it('the published sets themselves pass the schema', () => {
    expect(() => new GoalRegistry(GOAL_SETS)).not.toThrow();
  });
});

describe('the engine has no set-specific code', () => {
  it('engine files never name a set or goal id', () => {
    for (const f of ['engine', 'status', 'rules', 'predicates', 'context', 'clocks', 'custom']) {
      const source = readFileSync(new URL(`../../src/goals/${f}.ts`, import.meta.url), 'utf8');
      // Comments may give examples; code may not branch on ids.
      const text = source.replace(/\/\*[\s\S]*?\*\//g, '').replace(/\/\/.*$/gm, '');
      expect(text.length).toBeGreaterThan(200);
      expect(text, f).not.toMatch(/ssc-hour1|sep1\.|ssc2021|egdt|'sep1'/);
    }
  });
});

describe('worksheetSetIds', () => {
  it('adds custom when the worksheet has goals of its own', () => {
    const ws = sheet({ customGoals: [{ id: 'spo2', label: 'SpO2 ≥ 92', target: 'spo2 >= 92' }] }, []);
    expect(worksheetSetIds(ws)).toEqual([...DEFAULT_SET_IDS, 'custom']);
  });
});
