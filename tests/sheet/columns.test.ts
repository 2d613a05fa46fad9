// User derived columns: compile, order, loops, helpers, facts; deriveAll and evaluateAtRows.
import { describe, expect, it } from 'vitest';
import { compileFormula } from '../../src/sheet/formula-engine.js';
import { compileColumns, deriveAll, evaluateAtRows, resolverAt } from '../../src/sheet/derived.js';
import { column, worksheet } from './sheet-fixture.js';

describe('compileColumns', () => {
  it('orders columns so each comes after the columns it reads', () => {
    const plan = compileColumns([column('c', 'b + a'), column('b', 'a * 2'), column('a', 'map + 1')]);
    expect(plan.errors).toEqual({});
    expect(plan.order.map((c) => c.column.key)).toEqual(['a', 'b', 'c']);
    expect(plan.order.find((c) => c.column.key === 'c')!.dependsOn.sort()).toEqual(['a', 'b']);
  });

  it('names a dependency loop, and the columns that read it', () => {
    const plan = compileColumns([column('a', 'b + 1'), column('b', 'a + 1'), column('c', 'a * 2'), column('d', 'map')]);
    expect(plan.errors['a']!.message).toMatch(/Dependency loop: a → b → a/);
    expect(plan.errors['b']!.message).toMatch(/Dependency loop: a → b → a/);
    expect(plan.errors['c']!.message).toMatch(/Reads "a", which cannot be worked out: Dependency loop/);
    expect(plan.order.map((c) => c.column.key)).toEqual(['d']);
  });

  it('names a longer loop and a column reading itself', () => {
    const plan = compileColumns([column('x', 'y'), column('y', 'z'), column('z', 'x + 1'), column('s', 's + 1')]);
    expect(plan.errors['x']!.message).toContain('x → y → z → x');
    expect(plan.errors['s']!.message).toContain('s → s');
  });

  it('refuses keys that would hide a measure, derived key, score, fact, helper or function', () => {
    const plan = compileColumns([
      column('map', 'sbp'),
      column('fluid_ml_kg', '1'),
      column('sofa', '1'),
      column('weight', '1'),
      column('prev', '1'),
      column('abs', '1'),
      column('and', '1'),
      column('true', '1'),
    ]);
    expect(plan.errors['and']!.message).toMatch(/formula function or word/);
    expect(plan.errors['true']!.message).toMatch(/formula function or word/);
    expect(plan.errors['map']!.message).toMatch(/already a charted measure/);
    expect(plan.errors['fluid_ml_kg']!.message).toMatch(/built-in derived/);
    expect(plan.errors['sofa']!.message).toMatch(/already a score/);
    expect(plan.errors['weight']!.message).toMatch(/worksheet fact/);
    expect(plan.errors['prev']!.message).toMatch(/helper/);
    expect(plan.errors['abs']!.message).toMatch(/function/);
    expect(plan.order).toEqual([]);
  });

  it('refuses duplicate keys and keeps the formula error with its position', () => {
    const plan = compileColumns([column('a', 'map'), column('a', 'sbp'), column('b', 'map + lactat')]);
    expect(plan.errors['a']!.message).toMatch(/Two columns use the key "a"/);
    expect(plan.errors['b']!.position).toBe(7);
  });

  it('helpers take measure, built-in or score keys, not user columns (keeps columns row-local)', () => {
    const plan = compileColumns([column('a', 'map'), column('b', 'prev(a)')]);
    expect(plan.errors['b']!.message).toMatch(/not a user column/);
  });
});

describe('deriveAll with user columns', () => {
  const ws = worksheet({
    weightKg: 70,
    heightCm: 170,
    sex: 'male',
    baselineSbp: 130,
    timeZeroMin: 0,
    rows: [
      { min: -30, cells: { lactate: 4.0, fluid_ml: 500, map: 60 } },
      { min: 0, cells: { map: 62, cultures_drawn: true } },
      { min: 60, cells: { fluid_ml: 1000, antibiotic: 'ceftriaxone', sbp: 85 } },
      { min: 120, cells: { lactate: 3.6, fluid_ml: 1100, map: 66 } },
    ],
    columns: [
      column('clearance', '100 * (first(lactate) - lactate) / first(lactate)'),
      column('cleared_10', 'clearance >= 10'),
      column('lact_prev', 'prev(lactate)'),
      column('fluid_sum', 'running_sum(fluid_ml)'),
      column('fluid_per_kg', 'fluid_sum / dosing_weight'),
      column('map_t0', 'at_t0(map)'),
      column('gap_h', 'hours_since_prev()'),
      column('since_t0', 'hours_since_t0()'),
      column('abx', 'has(antibiotic)'),
      column('cultures', 'cultures_drawn ?? 0'),
      column('sbp_drop', 'baseline_sbp - sbp'),
      column('ibw_kg', 'round(ibw, 2)'),
    ],
  });
  const d = deriveAll(ws);
  const col = (key: string) => d.rows.map((r) => r.values[key]);

  it('computes lactate clearance exactly at the 10 % boundary (Nguyen 2004 formula; reference §16, §15 #19)', () => {
    expect(col('clearance')).toEqual([0, undefined, undefined, 10]);
    expect(col('cleared_10')).toEqual([0, undefined, undefined, 1]);
    expect(d.rows[1]!.gaps['clearance']).toBe('needs lactate');
  });

  it('prev() reads the last earlier value', () => {
    expect(col('lact_prev')).toEqual([undefined, 4, 4, 4]);
    expect(d.rows[0]!.gaps['lact_prev']).toBe('needs prev(lactate)');
  });

  it('running_sum() matches the built-in fluid total (from time zero), and 2100 mL / 70 kg = 30 mL/kg (reference §16)', () => {
    expect(col('fluid_sum')).toEqual([undefined, 0, 1000, 2100]);
    expect(col('fluid_sum').slice(1)).toEqual(col('fluid_total_ml').slice(1));
    expect(col('fluid_per_kg')[3]).toBe(30);
  });

  it('at_t0() is the value at time zero or last before it', () => {
    expect(col('map_t0')).toEqual([62, 62, 62, 62]);
  });

  it('time helpers give hours', () => {
    expect(col('gap_h')).toEqual([undefined, 0.5, 1, 1]);
    expect(col('since_t0')).toEqual([-0.5, 0, 1, 2]);
  });

  it('marks and text read as 1 when filled; has() and ?? give defaults', () => {
    expect(col('abx')).toEqual([0, 0, 1, 0]);
    expect(col('cultures')).toEqual([0, 1, 0, 0]);
  });

  it('facts: baseline SBP and Devine ideal weight (170 cm male = 65.94 kg, reference §16)', () => {
    expect(col('sbp_drop')[2]).toBe(45);
    expect(col('ibw_kg')[0]).toBe(65.94);
  });

  it('reports no plan errors for a valid set', () => {
    expect(d.plan.errors).toEqual({});
  });
});

describe('evaluating a formula over rows (for custom goals)', () => {
  it('evaluateAtRows and resolverAt agree with the helpers user columns see', () => {
    const ws = worksheet({
      timeZeroMin: 0,
      rows: [
        { min: 0, cells: { lactate: 5 } },
        { min: 60, cells: { lactate: 4 } },
        { min: 120, cells: { lactate: 2.5 } },
      ],
    });
    const d = deriveAll(ws);
    const r = compileFormula('lactate <= 0.9 * prev(lactate)');
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(evaluateAtRows(ws, d, r.formula)).toEqual([
      { ok: false, missing: ['prev(lactate)'] },
      { ok: true, value: true },
      { ok: true, value: true },
    ]);
    expect(r.formula.evaluate(resolverAt(ws, d, 2, r.formula))).toEqual({ ok: true, value: true });
  });
});
