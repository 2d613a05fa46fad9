// rederive (what the app runs after each change) equals a full recompute: fast-check over random
// worksheets and random sequences of the app's own commands (several cells at once, clears,
// facts, added rows). The reference is deriveAll on the new version; the dependency rules are
// documented at the top of src/sheet/derived.ts. Values are invented.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { longWorksheet } from '../../scripts/bench/long-worksheet.js';
import { FixedClock } from '../../src/sheet/clock.js';
import { deriveAll, type DeriveOptions } from '../../src/sheet/derived.js';
import type { Worksheet } from '../../src/sheet/model.js';
import { Worksheet as WorksheetSchema } from '../../src/sheet/model.js';
import { changedCells, MAX_INCREMENTAL_CHANGES, rederive } from '../../src/sheet/rederive.js';
import { addRow, setCells, setFacts, type CellEdit, type Ctx } from '../../src/sheet/worksheet.js';
import { column, T0, worksheet, type RowInput } from './sheet-fixture.js';

const ctx: Ctx = { clock: new FixedClock(T0 + 48 * 3_600_000) };

const VALUE_OF: Record<string, fc.Arbitrary<number | true>> = {
  sbp: fc.integer({ min: 60, max: 180 }),
  dbp: fc.integer({ min: 30, max: 100 }),
  map: fc.integer({ min: 40, max: 120 }),
  hr: fc.integer({ min: 50, max: 160 }),
  rr: fc.integer({ min: 8, max: 40 }),
  temp: fc.constantFrom(36.0, 38.2, 39.4),
  gcs: fc.integer({ min: 3, max: 15 }),
  lactate: fc.constantFrom(0.8, 2.0, 4.0, 6.1),
  fluid_ml: fc.constantFrom(0, 250, 1000),
  uo_ml: fc.constantFrom(0, 20, 120),
  norepinephrine: fc.constantFrom(0, 0.05, 0.2),
  dopamine: fc.constantFrom(0, 5, 16),
  pao2: fc.integer({ min: 50, max: 200 }),
  fio2: fc.constantFrom(0.21, 0.6, 1),
  platelets: fc.integer({ min: 10, max: 300 }),
  creatinine: fc.constantFrom(0.9, 2.5, 6),
  hb: fc.constantFrom(8, 12),
  spo2: fc.integer({ min: 85, max: 100 }),
  cultures_drawn: fc.constant(true as const),
};
const KEYS = Object.keys(VALUE_OF);

const COLUMNS = [
  column('a', 'map + 1'),
  column('c', 'prev(lactate) ?? 0'),
  column('d', 'running_sum(fluid_ml) / dosing_weight'),
  column('e', 'at_t0(map)'),
  column('g', 'sofa + qsofa + a'),
];

const cellsArb = fc
  .uniqueArray(fc.constantFrom(...KEYS), { maxLength: 5 })
  .chain((keys) => fc.tuple(...keys.map((k) => VALUE_OF[k]!.map((v) => [k, v] as const))))
  .map((pairs) => Object.fromEntries(pairs));

const worksheetArb = fc
  .record({
    gaps: fc.array(fc.integer({ min: 0, max: 8 * 60 }), { minLength: 1, maxLength: 14 }),
    cells: fc.array(cellsArb, { minLength: 14, maxLength: 14 }),
    withColumns: fc.boolean(),
    timeZeroMin: fc.option(fc.integer({ min: -60, max: 24 * 60 }), { nil: undefined }),
  })
  .map(({ gaps, cells, withColumns, timeZeroMin }) => {
    let t = 0;
    const rows: RowInput[] = gaps.map((g, k) => {
      t += g;
      return { min: t, cells: cells[k]! };
    });
    const input: Parameters<typeof worksheet>[0] = { rows, weightKg: 70, columns: withColumns ? COLUMNS : [] };
    if (timeZeroMin !== undefined) input.timeZeroMin = timeZeroMin;
    return worksheet(input);
  });

const editArb = fc
  .constantFrom(...KEYS)
  .chain((key) => fc.record({ row: fc.nat(), key: fc.constant(key), clear: fc.boolean(), value: VALUE_OF[key]! }));

/** One of the app's commands: a few cells at once, the weight, or a new row. */
const commandArb = fc.oneof(
  { weight: 8, arbitrary: fc.array(editArb, { minLength: 1, maxLength: 3 }).map((edits) => ({ kind: 'cells' as const, edits })) },
  { weight: 1, arbitrary: fc.constantFrom(55, 70, 120).map((weightKg) => ({ kind: 'weight' as const, weightKg })) },
  { weight: 1, arbitrary: fc.integer({ min: 0, max: 72 * 60 }).map((min) => ({ kind: 'row' as const, min })) },
);

type Command = typeof commandArb extends fc.Arbitrary<infer T> ? T : never;

function apply(ws: Worksheet, cmd: Command): Worksheet {
  if (cmd.kind === 'weight') return setFacts(ctx, ws, { weightKg: cmd.weightKg }).worksheet;
  if (cmd.kind === 'row') return addRow(ctx, ws, new Date(T0 + cmd.min * 60_000).toISOString(), 0, { hr: { value: 90 } }).worksheet;
  const edits: CellEdit[] = cmd.edits.map((e) => ({
    rowId: ws.rows[e.row % ws.rows.length]!.id,
    key: e.key,
    cell: e.clear ? null : { value: e.value },
  }));
  return setCells(ctx, ws, edits).worksheet;
}

describe('rederive', () => {
  for (const options of [{}, { sirsCriteria: 'sep1', windowHours: 6 }] as DeriveOptions[]) {
    it(`equals a full recompute after every random command (options ${JSON.stringify(options)})`, () => {
      fc.assert(
        fc.property(worksheetArb, fc.array(commandArb, { minLength: 1, maxLength: 10 }), (ws0, commands) => {
          let ws = ws0;
          let d = deriveAll(ws, options);
          for (const cmd of commands) {
            const next = apply(ws, cmd);
            d = rederive(d, ws, next, options);
            ws = next;
            expect(d.rows).toEqual(deriveAll(ws, options).rows);
          }
        }),
        { numRuns: 100 },
      );
    }, 120_000);
  }

  it('matches a full recompute for catecholamine and lactate edits, whose reach is bounded (derived.ts header)', () => {
    // Dense drug charting with gaps around the window and hold, so edits land before, inside and
    // after other rates; clears make a rate carry further.
    const drugs = ['norepinephrine', 'dopamine', 'dobutamine', 'epinephrine', 'lactate'] as const;
    const valueArb = fc.constantFrom(0, 0.05, 0.2, 5, 16);
    const denseArb = fc
      .record({
        gaps: fc.array(fc.integer({ min: 0, max: 10 * 60 }), { minLength: 2, maxLength: 24 }),
        cells: fc.array(fc.dictionary(fc.constantFrom(...drugs), valueArb, { maxKeys: 3 }), { minLength: 24, maxLength: 24 }),
      })
      .map(({ gaps, cells }) => {
        let t = 0;
        const rows: RowInput[] = gaps.map((g, k) => {
          t += g;
          return { min: t, cells: { map: 60, ...cells[k]! } };
        });
        return worksheet({ rows, weightKg: 70, timeZeroMin: 0 });
      });
    const drugEdit = fc.record({ row: fc.nat(), key: fc.constantFrom(...drugs), clear: fc.boolean(), value: valueArb });
    for (const options of [{}, { windowHours: 6, catecholamineMinHours: 2 }] as DeriveOptions[]) {
      fc.assert(
        fc.property(denseArb, fc.array(drugEdit, { minLength: 1, maxLength: 8 }), (ws0, edits) => {
          let ws = ws0;
          let d = deriveAll(ws, options);
          for (const e of edits) {
            const rowId = ws.rows[e.row % ws.rows.length]!.id;
            const next = setCells(ctx, ws, [{ rowId, key: e.key, cell: e.clear ? null : { value: e.value } }]).worksheet;
            d = rederive(d, ws, next, options);
            ws = next;
            expect(d.rows).toEqual(deriveAll(ws, options).rows);
          }
        }),
        { numRuns: 150 },
      );
    }
  }, 120_000);

  it('names exactly the cells whose value changed, and gives up when rows change', () => {
    const ws = worksheet({
      rows: [
        { min: 0, cells: { hr: 80, map: 70 } },
        { min: 60, cells: { hr: 82 } },
      ],
    });
    const edited = setCells(ctx, ws, [
      { rowId: ws.rows[1]!.id, key: 'hr', cell: { value: 90 } },
      { rowId: ws.rows[1]!.id, key: 'lactate', cell: { value: 2 } },
      { rowId: ws.rows[0]!.id, key: 'map', cell: null },
      // Same value with another typed text: derived values cannot change.
      { rowId: ws.rows[0]!.id, key: 'hr', cell: { value: 80, input: '80 /min' } },
    ]).worksheet;
    expect(changedCells(ws, edited)).toEqual([
      { rowIndex: 0, key: 'map' },
      { rowIndex: 1, key: 'hr' },
      { rowIndex: 1, key: 'lactate' },
    ]);
    const added = addRow(ctx, ws, new Date(T0 + 30 * 60_000).toISOString(), 0).worksheet;
    expect(changedCells(ws, added)).toBeUndefined();
  });

  it('recomputes in full past the limit of changed cells', () => {
    const ws = worksheet({ rows: Array.from({ length: MAX_INCREMENTAL_CHANGES + 2 }, (_, k) => ({ min: k * 15, cells: { hr: 80 } })) });
    const pasted = setCells(
      ctx,
      ws,
      ws.rows.map((r) => ({ rowId: r.id, key: 'hr', cell: { value: 100 } })),
    ).worksheet;
    expect(changedCells(ws, pasted)).toBeUndefined();
    expect(rederive(deriveAll(ws), ws, pasted).rows).toEqual(deriveAll(pasted).rows);
  });

  it('on the 500-row fictional bench worksheet: an edit at the first row reaches the end, and matches', () => {
    const ws = longWorksheet({ rows: 500 });
    expect(WorksheetSchema.safeParse(ws).success).toBe(true);
    const d = deriveAll(ws);
    const next = setCells(ctx, ws, [{ rowId: ws.rows[1]!.id, key: 'fluid_ml', cell: { value: 1000 } }]).worksheet;
    const r = rederive(d, ws, next);
    expect(r.rows).toEqual(deriveAll(next).rows);
    // Crystalloid is a running total (derived.ts header): 500 mL more at row 1 shows at the last row.
    expect(r.rows[499]!.values['fluid_total_ml']).toBe(d.rows[499]!.values['fluid_total_ml']! + 500);
    // Rows before the edit keep their objects.
    expect(r.rows[0]).toBe(d.rows[0]);
  });
});
