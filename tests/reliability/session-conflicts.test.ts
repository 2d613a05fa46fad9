// The editing session against another tab that keeps writing (Node, in-memory store with the same
// compare-and-set rule as the IndexedDB store: a commit whose starting rev is not the stored one
// is a conflict and gets the stored version back). Found with two real tabs in
// two-tabs.test.ts: a tab that lost the race a few times in a row gave up with "Not saved".
// Expected: optimistic concurrency as in reference/reliability-security-performance.md §2 — a
// conflict is re-applied on top of the other version, never dropped, both values in the log.
import { describe, expect, it } from 'vitest';
import { CONFLICT_ATTEMPTS, WorksheetSession, type SessionStore } from '../../src/app/session.js';
import { FixedClock } from '../../src/sheet/clock.js';
import type { Worksheet } from '../../src/sheet/model.js';
import { addRow, createWorksheet, setCell, type Change } from '../../src/sheet/worksheet.js';
import type { CommitResult } from '../../src/storage/store.js';

/** A store shared with a busy "other tab" that saves `burst` edits before each of ours lands. */
class BusyStore implements SessionStore {
  stored: Worksheet;
  otherWrites = 0;
  conflicts = 0;
  constructor(
    ws: Worksheet,
    private readonly ctx: { clock: FixedClock; newId: () => string },
    private readonly rowId: string,
    private burst: number,
  ) {
    this.stored = ws;
  }
  async commit(change: Change, expectedRev: number): Promise<CommitResult> {
    await Promise.resolve();
    if (this.burst > 0) {
      // The other tab commits first (as its transaction is scheduled before ours).
      this.burst -= 1;
      this.otherWrites += 1;
      this.stored = setCell(this.ctx, this.stored, this.rowId, 'note', { value: `other tab ${this.otherWrites}` }).worksheet;
    }
    if (this.stored.rev !== expectedRev) {
      this.conflicts += 1;
      return { ok: false, reason: 'conflict', message: 'changed elsewhere', current: this.stored };
    }
    this.stored = change.worksheet;
    return { ok: true, worksheet: change.worksheet };
  }
}

function fixture(burst: number) {
  let n = 0;
  const clock = new FixedClock(Date.parse('2026-03-01T08:00:00Z'));
  const ctx = { clock, newId: () => `id${++n}` };
  let ws = createWorksheet(ctx, { label: 'Bay 2 (fictional)', displayOffset: 0, weightKg: 70 });
  const r = addRow(ctx, ws, '2026-03-01T08:00:00.000Z', 0);
  ws = r.worksheet;
  const store = new BusyStore(ws, ctx, r.rowId, burst);
  const session = new WorksheetSession(ws, store, clock, () => `s${++n}`);
  return { store, session, rowId: r.rowId };
}

describe('a session while another tab keeps writing', () => {
  it('saves its edit after losing the race ten times in a row, keeping every value in the log', async () => {
    const { store, session, rowId } = fixture(10);
    const ok = await session.editCells([{ rowId, key: 'note', cell: { value: 'mine' } }]);
    expect(ok).toBe(true);
    expect(store.conflicts).toBe(10);
    expect(session.snapshot().save.kind).toBe('saved');
    expect(session.snapshot().notice).toMatch(/also changed in another tab/);
    const notes = store.stored.log.filter((e) => e.key === 'note').map((e) => (e.new as { value: string }).value);
    expect(notes).toEqual([...Array.from({ length: 10 }, (_, i) => `other tab ${i + 1}`), 'mine']);
    expect(store.stored.rows[0]!.cells['note']).toEqual({ value: 'mine' });
  }, 20_000);

  it('gives up only after the bounded number of attempts, keeping the edit on screen to retry', async () => {
    const { store, session, rowId } = fixture(CONFLICT_ATTEMPTS + 5);
    const ok = await session.editCells([{ rowId, key: 'note', cell: { value: 'mine' } }]);
    expect(ok).toBe(false);
    expect(store.conflicts).toBe(CONFLICT_ATTEMPTS);
    expect(session.snapshot().save).toMatchObject({
      kind: 'failed',
      message: expect.stringMatching(/keeps changing in another tab/) as unknown,
    });
    expect(session.worksheet.rows[0]!.cells['note']).toEqual({ value: 'mine' });
    expect(session.snapshot().pending.get(`${rowId}:note`)).toBe('failed');
    // The other tab stops; "Try saving again" stores it on top of everything the other tab wrote.
    expect(await session.retry()).toBe(true);
    expect(store.stored.rows[0]!.cells['note']).toEqual({ value: 'mine' });
    expect(store.stored.log.filter((e) => e.key === 'note')).toHaveLength(CONFLICT_ATTEMPTS + 5 + 1);
  }, 20_000);
});
