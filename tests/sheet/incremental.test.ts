// Incremental recompute equals full recompute (fast-check over random worksheets and edits).
// The rules under test are documented at the top of src/sheet/derived.ts.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { affectedRows, deriveAll, updateDerived, type Derivation, type DeriveOptions } from '../../src/sheet/derived.js';
import type { Cell, Worksheet } from '../../src/sheet/model.js';
import { column, worksheet, type RowInput } from './sheet-fixture.js';

/** Keys edited, with plausible canonical values (invented). */
const VALUE_OF: Record<string, fc.Arbitrary<number | true>> = {
  sbp: fc.integer({ min: 60, max: 180 }),
  dbp: fc.integer({ min: 30, max: 100 }),
  map: fc.integer({ min: 40, max: 120 }),
  hr: fc.integer({ min: 50, max: 160 }),
  rr: fc.integer({ min: 8, max: 40 }),
  temp: fc.constantFrom(35.5, 36.0, 37.0, 38.0, 38.2, 38.5, 39.4),
  gcs: fc.integer({ min: 3, max: 15 }),
  lactate: fc.constantFrom(0.8, 2.0, 2.5, 3.6, 4.0, 6.1),
  fluid_ml: fc.constantFrom(0, 250, 500, 1000),
  uo_ml: fc.constantFrom(0, 20, 50, 120),
  norepinephrine: fc.constantFrom(0, 0.05, 0.1, 0.2),
  dopamine: fc.constantFrom(0, 4, 5, 10, 16),
  dobutamine: fc.constantFrom(0, 5),
  pao2: fc.integer({ min: 50, max: 200 }),
  fio2: fc.constantFrom(0.21, 0.4, 0.6, 1),
  platelets: fc.integer({ min: 10, max: 300 }),
  bilirubin: fc.constantFrom(0.8, 1.5, 3, 7, 13),
  creatinine: fc.constantFrom(0.9, 1.5, 2.5, 4, 6),
  wbc: fc.constantFrom(2, 8, 15),
  paco2: fc.integer({ min: 25, max: 50 }),
  hb: fc.constantFrom(8, 12, 15),
  spo2: fc.integer({ min: 85, max: 100 }),
  cultures_drawn: fc.constant(true as const),
};
const KEYS = Object.keys(VALUE_OF);

const cellsArb = fc
  .uniqueArray(fc.constantFrom(...KEYS), { maxLength: 6 })
  .chain((keys) => fc.tuple(...keys.map((k) => VALUE_OF[k]!.map((v) => [k, v] as const))))
  .map((pairs) => Object.fromEntries(pairs));

const COLUMNS = [
  column('a', 'map + 1'),
  column('b', 'a * 2'),
  column('c', 'prev(lactate) ?? 0'),
  column('d', 'running_sum(fluid_ml) / dosing_weight'),
  column('e', 'at_t0(map)'),
  column('f', 'first(lactate) - lactate'),
  column('g', 'sofa + qsofa + b'),
  column('h', 'hours_since_prev() * (uo_ml ?? 0)'),
  column('i', 'prev(sofa) ?? -1'),
  column('j', 'lactate_change_pct <= -10'),
  column('k', 'has(cultures_drawn) ? running_sum(cultures_drawn) : 0'),
  column('l', 'fluid_ml_kg + first(sirs)'),
];

const worksheetArb = fc
  .record({
    gaps: fc.array(fc.integer({ min: 0, max: 8 * 60 }), { minLength: 1, maxLength: 18 }),
    cells: fc.array(cellsArb, { minLength: 18, maxLength: 18 }),
    weightKg: fc.option(fc.constantFrom(55, 70, 120), { nil: undefined }),
    timeZeroMin: fc.option(fc.integer({ min: -60, max: 24 * 60 }), { nil: undefined }),
  })
  .map(({ gaps, cells, weightKg, timeZeroMin }) => {
    let t = 0;
    const rows: RowInput[] = gaps.map((g, k) => {
      t += g;
      return { min: t, cells: cells[k]! };
    });
    const input: Parameters<typeof worksheet>[0] = { rows, columns: COLUMNS };
    if (weightKg !== undefined) input.weightKg = weightKg;
    if (timeZeroMin !== undefined) input.timeZeroMin = timeZeroMin;
    return worksheet(input);
  });

const editArb = fc
  .constantFrom(...KEYS)
  .chain((key) => fc.record({ row: fc.nat(), key: fc.constant(key), clear: fc.boolean(), value: VALUE_OF[key]! }));

/** The edit applied to a worksheet, as setCell would (new objects, same row order). */
function applyEdit(ws: Worksheet, rowIndex: number, key: string, cell: Cell | null): Worksheet {
  const rows = ws.rows.map((r, k) => {
    if (k !== rowIndex) return r;
    const cells = { ...r.cells };
    if (cell === null) delete cells[key];
    else cells[key] = cell;
    return { ...r, cells };
  });
  return { ...ws, rows };
}

function cellFor(edit: { clear: boolean; value: number | true }): Cell | null {
  return edit.clear ? null : { value: edit.value };
}

function rowsOf(d: Derivation): unknown {
  return d.rows;
}

describe('incremental recompute', () => {
  for (const options of [{}, { sirsCriteria: 'sep1', windowHours: 6 }] as DeriveOptions[]) {
    it(`equals a full recompute after every random edit (options ${JSON.stringify(options)})`, () => {
      fc.assert(
        fc.property(worksheetArb, fc.array(editArb, { minLength: 1, maxLength: 12 }), (ws0, edits) => {
          let ws = ws0;
          let d = deriveAll(ws, options);
          for (const e of edits) {
            const rowIndex = e.row % ws.rows.length;
            ws = applyEdit(ws, rowIndex, e.key, cellFor(e));
            d = updateDerived(d, ws, { rowIndex, key: e.key }, options);
            const full = deriveAll(ws, options);
            expect(rowsOf(d)).toEqual(rowsOf(full));
            expect(d.plan.errors).toEqual(full.plan.errors);
          }
        }),
        { numRuns: 120 },
      );
    }, 120_000);
  }

  it('recomputes only the reachable rows (row-local key: one row; running key: to the end)', () => {
    const ws = worksheet({
      columns: [column('a', 'hr * 2')],
      rows: Array.from({ length: 10 }, (_, k) => ({ min: k * 60 * 30, cells: { hr: 80 } })),
    });
    const d = deriveAll(ws);
    expect(affectedRows(ws, d.plan, { rowIndex: 4, key: 'hb' })).toEqual({ from: 4, to: 4 });
    expect(affectedRows(ws, d.plan, { rowIndex: 4, key: 'fluid_ml' })).toEqual({ from: 4, to: 9 });
    expect(affectedRows(ws, d.plan, { rowIndex: 4, key: 'lactate' })).toEqual({ from: 4, to: 9 });
    // Rows every 30 h: a score input reaches only rows within the next 24 h (none here).
    expect(affectedRows(ws, d.plan, { rowIndex: 4, key: 'hr' })).toEqual({ from: 4, to: 4 });
    expect(affectedRows(ws, d.plan, { rowIndex: 4, key: 'norepinephrine' })).toEqual({ from: 4, to: 9 });
  });

  it('keeps the row objects it did not recompute', () => {
    const ws = worksheet({ rows: Array.from({ length: 6 }, (_, k) => ({ min: k * 60 * 30, cells: { hr: 80, hb: 10 } })) });
    const d = deriveAll(ws);
    const ws2 = applyEdit(ws, 2, 'hb', { value: 9 });
    const d2 = updateDerived(d, ws2, { rowIndex: 2, key: 'hb' });
    expect(d2.rows[0]).toBe(d.rows[0]);
    expect(d2.rows[2]).not.toBe(d.rows[2]);
    expect(d2.rows[3]).toBe(d.rows[3]);
  });

  it('falls back to a full recompute when rows or facts change', () => {
    const ws = worksheet({
      weightKg: 70,
      rows: [
        { min: 0, cells: { fluid_ml: 700 } },
        { min: 60, cells: { fluid_ml: 700 } },
      ],
    });
    const d = deriveAll(ws);
    const heavier = { ...ws, weightKg: 140 };
    const d2 = updateDerived(d, heavier, { rowIndex: 0, key: 'hr' });
    expect(d2.rows[1]!.values['fluid_ml_kg']).toBe(10);
    const fewer = { ...ws, rows: ws.rows.slice(1) };
    const d3 = updateDerived(d, fewer, { rowIndex: 0, key: 'fluid_ml' });
    expect(d3.rows.length).toBe(1);
    expect(d3.rows[0]!.values['fluid_total_ml']).toBe(700);
  });
});
