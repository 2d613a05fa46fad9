import { describe, expect, it } from 'vitest';
import { WorksheetSession, type SessionStore } from '../../src/app/session.js';
import type { CommitResult } from '../../src/storage/store.js';
import { FixedClock } from '../../src/sheet/clock.js';
import type { Worksheet } from '../../src/sheet/model.js';
import { Worksheet as WorksheetSchema } from '../../src/sheet/model.js';
import { addRow, createWorksheet, setCell, type Change } from '../../src/sheet/worksheet.js';

/** An in-memory store with the same compare-and-set rule as the IndexedDB one. */
class MemoryStore implements SessionStore {
  stored: Worksheet;
  failNext: CommitResult | undefined;
  gate: Promise<void> | undefined;
  constructor(ws: Worksheet) {
    this.stored = ws;
  }
  async commit(change: Change, expectedRev: number): Promise<CommitResult> {
    if (this.gate) await this.gate;
    if (this.failNext) {
      const r = this.failNext;
      this.failNext = undefined;
      return r;
    }
    if (this.stored.rev !== expectedRev) return { ok: false, reason: 'conflict', message: 'changed elsewhere', current: this.stored };
    this.stored = change.worksheet;
    return { ok: true, worksheet: change.worksheet };
  }
}

function fixture() {
  let n = 0;
  const clock = new FixedClock(Date.parse('2026-03-01T08:00:00Z'));
  const ctx = { clock, newId: () => `id${++n}` };
  let ws = createWorksheet(ctx, { label: 'Bay 1', displayOffset: 0, weightKg: 70 });
  const r = addRow(ctx, ws, '2026-03-01T08:00:00.000Z', 0);
  ws = r.worksheet;
  const store = new MemoryStore(ws);
  const session = new WorksheetSession(ws, store, clock, () => `s${++n}`);
  return { ctx, ws, store, session, rowId: r.rowId, clock };
}

describe('WorksheetSession', () => {
  it('shows an edit at once as saving and calls it saved only after the store acknowledges it', async () => {
    const { store, session, rowId } = fixture();
    let release!: () => void;
    store.gate = new Promise((r) => (release = r));
    const saved = session.editCells([{ rowId, key: 'map', cell: { value: 62 } }]);
    expect(session.worksheet.rows[0]!.cells['map']).toEqual({ value: 62 });
    expect(session.snapshot().save.kind).toBe('saving');
    expect(session.snapshot().pending.get(`${rowId}:map`)).toBe('saving');
    expect(store.stored.rows[0]!.cells['map']).toBeUndefined();
    release();
    expect(await saved).toBe(true);
    expect(store.stored.rows[0]!.cells['map']).toEqual({ value: 62 });
    expect(session.snapshot().save.kind).toBe('saved');
    expect(session.snapshot().pending.size).toBe(0);
    expect(WorksheetSchema.safeParse(store.stored).success).toBe(true);
  });

  it('re-applies an edit on top of a change saved by another tab and keeps both in the log', async () => {
    const { store, session, rowId, ctx } = fixture();
    // Another tab writes HR first.
    store.stored = setCell(ctx, store.stored, rowId, 'hr', { value: 120 }).worksheet;
    expect(await session.editCells([{ rowId, key: 'map', cell: { value: 70 } }])).toBe(true);
    expect(store.stored.rows[0]!.cells).toEqual({ hr: { value: 120 }, map: { value: 70 } });
    expect(store.stored.log.filter((e) => e.kind === 'cell').map((e) => e.key)).toEqual(['hr', 'map']);
    expect(session.snapshot().notice).toMatch(/another tab/);
  });

  it('keeps a failed edit on screen, marked failed, and saves it on retry', async () => {
    const { store, session, rowId } = fixture();
    store.failNext = { ok: false, reason: 'quota', message: 'Device storage is full.' };
    expect(await session.editCells([{ rowId, key: 'lactate', cell: { value: 4.2 } }])).toBe(false);
    // A second edit made after the failure waits with it.
    expect(await session.editCells([{ rowId, key: 'hr', cell: { value: 110 } }])).toBe(false);
    const snap = session.snapshot();
    expect(snap.save).toEqual({ kind: 'failed', reason: 'quota', message: 'Device storage is full.' });
    expect(snap.pending.get(`${rowId}:lactate`)).toBe('failed');
    expect(session.worksheet.rows[0]!.cells['lactate']).toEqual({ value: 4.2 });
    expect(store.stored.rows[0]!.cells['lactate']).toBeUndefined();
    expect(await session.retry()).toBe(true);
    expect(store.stored.rows[0]!.cells).toEqual({ lactate: { value: 4.2 }, hr: { value: 110 } });
    expect(session.snapshot().save.kind).toBe('saved');
  });

  it('undoes and redoes an edit as new log entries', async () => {
    const { store, session, rowId } = fixture();
    await session.editCells([{ rowId, key: 'map', cell: { value: 60 } }]);
    await session.editCells([{ rowId, key: 'map', cell: { value: 66 } }]);
    await session.undo();
    expect(store.stored.rows[0]!.cells['map']).toEqual({ value: 60 });
    await session.redo();
    expect(store.stored.rows[0]!.cells['map']).toEqual({ value: 66 });
    const mapEntries = store.stored.log.filter((e) => e.key === 'map');
    expect(mapEntries.map((e) => (e.new as { value: number }).value)).toEqual([60, 66, 60, 66]);
  });

  it('undoes a row deletion by restoring the same row', async () => {
    const { store, session, rowId } = fixture();
    await session.editCells([{ rowId, key: 'map', cell: { value: 60 } }]);
    await session.deleteRow(rowId);
    expect(store.stored.rows).toHaveLength(0);
    await session.undo();
    expect(store.stored.rows).toHaveLength(1);
    expect(store.stored.rows[0]!.cells['map']).toEqual({ value: 60 });
  });

  it('keeps rows sorted when a row is added earlier than the others', async () => {
    const { store, session } = fixture();
    const { saved } = session.addRow('2026-03-01T07:30:00.000Z', 0, { lactate: { value: 3.1 } });
    await saved;
    expect(store.stored.rows.map((r) => r.time)).toEqual(['2026-03-01T07:30:00.000Z', '2026-03-01T08:00:00.000Z']);
    expect(store.stored.log.some((e) => e.kind === 'cell' && e.key === 'lactate')).toBe(true);
  });
});

describe('WorksheetSession paste', () => {
  it('stores a paste of new rows and edits as one version and undoes it in one step', async () => {
    const { store, session, rowId } = fixture();
    const revBefore = store.stored.rev;
    await session.paste(
      [
        { time: '2026-03-01T08:30:00.000Z', offset: 0, cells: { map: { value: 61 } } },
        { time: '2026-03-01T09:00:00.000Z', offset: 0, cells: { map: { value: 67 }, lactate: { value: 3.2 } } },
      ],
      [{ rowId, key: 'hr', cell: { value: 118 } }],
    );
    expect(store.stored.rev).toBe(revBefore + 1);
    expect(store.stored.rows.map((r) => r.time)).toEqual([
      '2026-03-01T08:00:00.000Z',
      '2026-03-01T08:30:00.000Z',
      '2026-03-01T09:00:00.000Z',
    ]);
    expect(store.stored.rows[0]!.cells['hr']).toEqual({ value: 118 });
    await session.undo();
    expect(store.stored.rows).toHaveLength(1);
    expect(store.stored.rows[0]!.cells['hr']).toBeUndefined();
    expect(store.stored.rev).toBe(revBefore + 2);
  });
});

describe('WorksheetSession calculated columns and own goals', () => {
  it('shows a new calculated column in the grid and removes it again on undo', async () => {
    const { store, session } = fixture();
    await session.setDerivedColumns([{ key: 'si_check', label: 'Shock index check', expression: 'hr / sbp' }]);
    expect(store.stored.derivedColumns.map((c) => c.key)).toEqual(['si_check']);
    expect(store.stored.columns).toContain('si_check');
    await session.undo();
    expect(store.stored.derivedColumns).toEqual([]);
    expect(store.stored.columns).not.toContain('si_check');
  });

  it('stores the worksheet own goals', async () => {
    const { store, session } = fixture();
    await session.setCustomGoals([{ id: 'sbp-90', label: 'SBP at least 90', target: 'sbp >= 90', deadlineMinutes: 60 }]);
    expect(store.stored.customGoals.map((g) => g.id)).toEqual(['sbp-90']);
  });
});
