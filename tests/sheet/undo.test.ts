// Undo/redo history. The expected behaviour is the usual linear undo model of editors (common
// practice, no source): undo walks back one step at a time, redo walks forward again, and a new
// action after an undo discards what could have been redone. Inverse edits are checked by
// applying them with the real worksheet commands and comparing with the original cells.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { FixedClock } from '../../src/sheet/clock.js';
import type { Cell, Worksheet } from '../../src/sheet/model.js';
import {
  canRedo,
  canUndo,
  emptyHistory,
  inverseCellEdits,
  recordDone,
  recordRedone,
  recordUndone,
  takeRedo,
  takeUndo,
  type CellEdit,
  type UndoHistory,
} from '../../src/sheet/undo.js';
import { addRow, createWorksheet, setCells, type Ctx } from '../../src/sheet/worksheet.js';

function ctx(): Ctx {
  let n = 0;
  return { clock: new FixedClock(Date.parse('2026-03-01T08:00:00Z')), newId: () => `id${++n}` };
}

function worksheetWithRows(c: Ctx): Worksheet {
  let ws = createWorksheet(c, { label: 'Bed 4 (fictional)', displayOffset: 60, weightKg: 70 });
  ws = addRow(c, ws, '2026-03-01T07:00:00.000Z', 60, { map: { value: 62 }, lactate: { value: 4.1 } }).worksheet;
  ws = addRow(c, ws, '2026-03-01T08:00:00.000Z', 60, { map: { value: 66 } }).worksheet;
  return ws;
}

const cellsByRow = (ws: Worksheet) => Object.fromEntries(ws.rows.map((r) => [r.id, r.cells]));

describe('undo history (pure stack)', () => {
  it('undoes newest first, redoes in turn, and a new action clears redo', () => {
    let h: UndoHistory<string> = emptyHistory();
    expect(canUndo(h)).toBe(false);
    h = recordDone(h, 'undo-A');
    h = recordDone(h, 'undo-B');
    const first = takeUndo(h)!;
    expect(first.command).toBe('undo-B');
    h = recordUndone(first.history, 'redo-B');
    expect(canRedo(h)).toBe(true);
    const second = takeUndo(h)!;
    expect(second.command).toBe('undo-A');
    h = recordUndone(second.history, 'redo-A');
    expect(takeUndo(h)).toBeUndefined();
    const again = takeRedo(h)!;
    expect(again.command).toBe('redo-A');
    h = recordRedone(again.history, 'undo-A2');
    expect(h.undo).toEqual(['undo-A2']);
    expect(h.redo).toEqual(['redo-B']);
    h = recordDone(h, 'undo-C');
    expect(canRedo(h)).toBe(false);
    expect(h.undo).toEqual(['undo-A2', 'undo-C']);
  });

  it('never mutates the history it is given', () => {
    const h0 = recordDone(emptyHistory<number>(), 1);
    const frozen = JSON.stringify(h0);
    takeUndo(h0);
    recordDone(h0, 2);
    recordUndone(h0, 3);
    expect(JSON.stringify(h0)).toBe(frozen);
  });

  it('keeps at most `limit` undo steps, dropping the oldest', () => {
    let h = emptyHistory<number>(3);
    for (let i = 1; i <= 5; i += 1) h = recordDone(h, i);
    expect(h.undo).toEqual([3, 4, 5]);
    expect(() => emptyHistory(0)).toThrow(/positive integer/);
  });
});

describe('inverse cell edits', () => {
  it('restores values, clears cells that were empty, and refills cells that were cleared', () => {
    const c = ctx();
    const before = worksheetWithRows(c);
    const [r1, r2] = before.rows;
    const edits: CellEdit[] = [
      { rowId: r1!.id, key: 'map', cell: { value: 70 } },
      { rowId: r1!.id, key: 'lactate', cell: null },
      { rowId: r2!.id, key: 'hr', cell: { value: 118 } },
    ];
    const inverse = inverseCellEdits(before, edits);
    expect(inverse).toEqual([
      { rowId: r2!.id, key: 'hr', cell: null },
      { rowId: r1!.id, key: 'lactate', cell: { value: 4.1 } },
      { rowId: r1!.id, key: 'map', cell: { value: 62 } },
    ]);
    const after = setCells(c, before, edits).worksheet;
    const undone = setCells(c, after, inverse).worksheet;
    expect(cellsByRow(undone)).toEqual(cellsByRow(before));
    // The log keeps the history: both the edit and its undo are entries.
    expect(undone.log.length).toBe(before.log.length + edits.length + inverse.length);
  });

  it('a cell edited twice in one batch returns to its first value', () => {
    const c = ctx();
    const before = worksheetWithRows(c);
    const id = before.rows[0]!.id;
    const edits: CellEdit[] = [
      { rowId: id, key: 'map', cell: { value: 70 } },
      { rowId: id, key: 'map', cell: { value: 75 } },
    ];
    const after = setCells(c, before, edits).worksheet;
    const undone = setCells(c, after, inverseCellEdits(before, edits)).worksheet;
    expect(undone.rows[0]!.cells['map']).toEqual({ value: 62 });
  });

  it('names the missing row when an edit targets none', () => {
    const before = worksheetWithRows(ctx());
    expect(() => inverseCellEdits(before, [{ rowId: 'nope', key: 'map', cell: null }])).toThrow(/no row "nope"/);
  });

  it('applying any batch and then its inverse gives back the original cells', () => {
    const keys = ['map', 'hr', 'lactate', 'note'];
    const cellArb: fc.Arbitrary<Cell | null> = fc.oneof(
      fc.constant(null),
      fc.integer({ min: 20, max: 200 }).map((v) => ({ value: v })),
      fc.string({ maxLength: 5 }).map((s) => ({ value: `t${s}` })),
    );
    fc.assert(fc.property(fc.array(fc.record({ row: fc.integer({ min: 0, max: 1 }), key: fc.constantFrom(...keys), cell: cellArb }), { maxLength: 12 }), (raw) => {
      const c = ctx();
      const before = worksheetWithRows(c);
      const edits = raw.map((e) => ({ rowId: before.rows[e.row]!.id, key: e.key, cell: e.cell }));
      const after = setCells(c, before, edits).worksheet;
      const undone = setCells(c, after, inverseCellEdits(before, edits)).worksheet;
      expect(cellsByRow(undone)).toEqual(cellsByRow(before));
    }));
  });
});
