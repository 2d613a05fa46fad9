// Node tests of the notebook store on fake-indexeddb (a fresh in-memory factory per test).
// Expected behaviour comes from the W3C Indexed Database API 3.0 (transactions are atomic; an
// aborted transaction, including an aborted versionchange transaction, leaves nothing behind;
// versionchange/blocked between connections) and the idb README (tx.done, openDB callbacks), as
// summarised in shared/reference/reliability-security-performance.md §1.1, §1.5-1.7, §2.
import 'fake-indexeddb/auto';
import { IDBFactory, forceCloseDatabase } from 'fake-indexeddb';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { addRow, setCell } from '../../src/sheet/worksheet.js';
import { DB_VERSION, MIGRATIONS, toStoredWorksheet } from '../../src/storage/schema.js';
import type { Migration } from '../../src/storage/schema.js';
import { StoreError, openStore, persistenceState, requestPersistence } from '../../src/storage/store.js';
import type { ChangeNotice, Store } from '../../src/storage/store.js';
import { MIN, makeCtx, sampleWorksheet } from './fixtures.js';
import { createV1Layout, rawAll, rawOpen, rawPut, within } from './idb-helpers.js';

let factory: IDBFactory;
let name: string;
let opened: Store[] = [];
let counter = 0;

async function open(extra: Parameters<typeof openStore>[0] = {}): Promise<Store> {
  const store = await openStore({ name, idbFactory: factory, ...extra });
  opened.push(store);
  return store;
}

beforeEach(() => {
  factory = new IDBFactory();
  counter += 1;
  name = `tm-store-test-${counter}`;
  opened = [];
});

afterEach(() => {
  for (const s of opened) s.close();
  vi.restoreAllMocks();
});

describe('create, get, list', () => {
  it('gives back exactly the worksheet it stored, edit log included', async () => {
    const store = await open();
    const ws = sampleWorksheet(makeCtx());
    const created = await store.create(ws);
    expect(created.ok).toBe(true);
    expect(await store.get(ws.id)).toStrictEqual(ws);
    expect(await store.get('no-such-id')).toBeUndefined();
  });

  it('refuses a second worksheet with the same id and keeps the first', async () => {
    const store = await open();
    const ws = sampleWorksheet(makeCtx());
    await store.create(ws);
    const again = await store.create({ ...ws, label: 'other' });
    expect(again).toMatchObject({ ok: false, reason: 'exists' });
    expect((await store.get(ws.id))?.label).toBe(ws.label);
  });

  it('refuses an invalid worksheet with the path of each problem', async () => {
    const store = await open();
    const ws = sampleWorksheet(makeCtx());
    const bad = { ...ws, rows: ws.rows.map((r, i) => (i === 1 ? { ...r, time: 'yesterday' } : r)) };
    const result = await store.create(bad);
    expect(result.ok).toBe(false);
    if (result.ok || result.reason !== 'invalid') throw new Error('expected invalid');
    expect(result.problems.some((p) => p.startsWith('rows[1].time:'))).toBe(true);
    expect((await store.list()).summaries).toHaveLength(0);
  });

  it('lists summaries (rows counted, time zero) newest change first, without rows', async () => {
    const store = await open();
    const ctx = makeCtx('a');
    const older = sampleWorksheet(ctx, 'DEMO bed 1 (fictional)');
    ctx.clock.advance(60 * MIN);
    const ctxB = makeCtx('b', ctx.clock.now());
    const newer = sampleWorksheet(ctxB, 'DEMO bed 2 (fictional)');
    await store.create(older);
    await store.create(newer);
    const { summaries, unreadable } = await store.list();
    expect(unreadable).toEqual([]);
    expect(summaries.map((s) => s.label)).toEqual(['DEMO bed 2 (fictional)', 'DEMO bed 1 (fictional)']);
    expect(summaries[1]).toStrictEqual({
      id: older.id,
      label: older.label,
      archived: false,
      createdAt: older.createdAt,
      updatedAt: older.updatedAt,
      rev: older.rev,
      rowCount: 3,
      timeZero: older.timeZero,
    });
  });

  it('stores the edit log entry by entry, not inside the worksheet record', async () => {
    const store = await open();
    const ws = sampleWorksheet(makeCtx());
    await store.create(ws);
    store.close();
    const db = await rawOpen(factory, name);
    const [record] = (await rawAll(db, 'worksheets')) as Record<string, unknown>[];
    expect(record).not.toHaveProperty('log');
    expect(record?.['logCount']).toBe(ws.log.length);
    const log = (await rawAll(db, 'log')) as { seq: number; entry: { id: string } }[];
    expect(log.map((e) => e.entry.id)).toEqual(ws.log.map((e) => e.id));
    db.close();
  });
});

describe('commit', () => {
  it('stores the new version and its log entries; get returns the committed worksheet', async () => {
    const store = await open();
    const ctx = makeCtx();
    const ws = sampleWorksheet(ctx);
    await store.create(ws);
    ctx.clock.advance(MIN);
    const change = setCell(ctx, ws, ws.rows[0]!.id, 'spo2', { value: 93 });
    const result = await store.commit(change, ws.rev);
    expect(result).toEqual({ ok: true, worksheet: change.worksheet });
    const back = await store.get(ws.id);
    expect(back).toStrictEqual(change.worksheet);
    expect(back?.log.at(-1)).toStrictEqual(change.entries[0]);
    expect((await store.list()).summaries[0]?.rev).toBe(ws.rev + 1);
  });

  it('reports a conflict when another tab committed first, and leaves that version stored', async () => {
    const tabA = await open();
    const tabB = await open();
    const ctx = makeCtx();
    const ws = sampleWorksheet(ctx);
    await tabA.create(ws);
    // Both tabs start an edit from the same stored version.
    const base = (await tabB.get(ws.id))!;
    const fromA = setCell(ctx, base, base.rows[0]!.id, 'hr', { value: 124, flag: 'high' });
    const fromB = setCell(ctx, base, base.rows[0]!.id, 'hr', { value: 110 });
    expect(await tabA.commit(fromA, base.rev)).toMatchObject({ ok: true });

    const late = await tabB.commit(fromB, base.rev);
    expect(late.ok).toBe(false);
    if (late.ok || late.reason !== 'conflict') throw new Error('expected a conflict');
    expect(late.current).toStrictEqual(fromA.worksheet);
    expect(late.message).toMatch(/another tab/);
    expect(await tabA.get(ws.id)).toStrictEqual(fromA.worksheet);

    // Re-applied on top of the current version (both values stay in the log), it is stored.
    const retry = setCell(ctx, late.current, base.rows[0]!.id, 'hr', { value: 110 }, 'conflict: other tab had 124');
    expect(await tabB.commit(retry, late.current.rev)).toMatchObject({ ok: true });
    const final = (await tabA.get(ws.id))!;
    const hrEntries = final.log.filter((e) => e.kind === 'cell' && e.key === 'hr');
    expect(hrEntries.map((e) => (e.new as { value: number }).value)).toEqual([118, 116, 124, 110]);
  });

  it('notifies other tabs after a commit (BroadcastChannel)', async () => {
    const tabA = await open();
    const tabB = await open();
    const ctx = makeCtx();
    const ws = sampleWorksheet(ctx);
    await tabA.create(ws);
    const seen = new Promise<ChangeNotice>((resolve) => {
      const off = tabB.onExternalChange((notice) => {
        if (notice.type === 'changed' && notice.rev === ws.rev + 1) {
          off();
          resolve(notice);
        }
      });
    });
    await tabA.commit(setCell(ctx, ws, ws.rows[0]!.id, 'rr', { value: 26 }), ws.rev);
    expect(await within(2000, seen, 'change notice')).toEqual({ type: 'changed', id: ws.id, rev: ws.rev + 1 });
  });

  it('refuses a change that is not valid or does not follow the edit it started from', async () => {
    const store = await open();
    const ctx = makeCtx();
    const ws = sampleWorksheet(ctx);
    await store.create(ws);
    const change = setCell(ctx, ws, ws.rows[0]!.id, 'rr', { value: 26 });
    // rev not above the starting rev
    expect(await store.commit(change, change.worksheet.rev)).toMatchObject({ ok: false, reason: 'invalid' });
    // entries that are not the end of the log
    expect(await store.commit({ ...change, entries: [ws.log[0]!] }, ws.rev)).toMatchObject({ ok: false, reason: 'invalid' });
    // a worksheet the model rejects
    const broken = { ...change, worksheet: { ...change.worksheet, weightKg: -3 } };
    const r = await store.commit(broken, ws.rev);
    if (r.ok || r.reason !== 'invalid') throw new Error('expected invalid');
    expect(r.problems[0]).toMatch(/^worksheet\.weightKg: /);
    // an invalid cell in the row the change touched
    const badCell = {
      ...change,
      worksheet: {
        ...change.worksheet,
        rows: change.worksheet.rows.map((row, i) => (i === 0 ? { ...row, cells: { ...row.cells, rr: { value: Number.NaN } } } : row)),
      },
    };
    const c = await store.commit(badCell, ws.rev);
    if (c.ok || c.reason !== 'invalid') throw new Error('expected invalid');
    expect(c.problems[0]).toMatch(/^worksheet\.rows\[0\]\.cells\.rr\.value: /);
    expect(await store.get(ws.id)).toStrictEqual(ws);
  });

  it('reports a worksheet removed in another tab as missing', async () => {
    const store = await open();
    const ctx = makeCtx();
    const ws = sampleWorksheet(ctx);
    await store.create(ws);
    expect(await store.remove(ws.id)).toEqual({ ok: true, removed: true });
    const r = await store.commit(setCell(ctx, ws, ws.rows[0]!.id, 'rr', { value: 26 }), ws.rev);
    expect(r).toMatchObject({ ok: false, reason: 'missing' });
    expect(await store.get(ws.id)).toBeUndefined();
  });

  it('on QuotaExceededError returns quota and keeps the previous version (nothing half-written)', async () => {
    const store = await open();
    const ctx = makeCtx();
    const ws = sampleWorksheet(ctx);
    await store.create(ws);
    // The worksheet record and summary puts are issued before the log add fails.
    vi.spyOn(IDBObjectStore.prototype, 'add').mockImplementation(() => {
      throw new DOMException('The quota has been exceeded.', 'QuotaExceededError');
    });
    const change = addRow(ctx, ws, '2026-03-01T08:30:00.000Z', 60, { map: { value: 63 } });
    const r = await store.commit(change, ws.rev);
    expect(r).toMatchObject({ ok: false, reason: 'quota' });
    vi.restoreAllMocks();
    expect(await store.get(ws.id)).toStrictEqual(ws);
    expect((await store.list()).summaries[0]?.rowCount).toBe(3);
  });

  it('on an aborted transaction returns failed and keeps the previous version', async () => {
    const store = await open();
    const ctx = makeCtx();
    const ws = sampleWorksheet(ctx);
    await store.create(ws);
    // eslint-disable-next-line @typescript-eslint/unbound-method -- called below with .apply on the real store
    const original = IDBObjectStore.prototype.add;
    vi.spyOn(IDBObjectStore.prototype, 'add').mockImplementation(function (this: IDBObjectStore, ...args) {
      const request = original.apply(this, args);
      this.transaction.abort();
      return request;
    });
    const r = await store.commit(setCell(ctx, ws, ws.rows[0]!.id, 'rr', { value: 26 }), ws.rev);
    expect(r).toMatchObject({ ok: false, reason: 'failed' });
    vi.restoreAllMocks();
    expect(await store.get(ws.id)).toStrictEqual(ws);
  });

  it('a corrupt stored record gives a clear error on read, never a crash', async () => {
    const store = await open();
    const ws = sampleWorksheet(makeCtx());
    await store.create(ws);
    const db = await rawOpen(factory, name);
    await rawPut(db, 'worksheets', [{ ...toStoredWorksheet(ws), rows: 'not rows', weightKg: 'heavy' }]);
    db.close();
    const error = await store.get(ws.id).then(
      () => undefined,
      (e: unknown) => e,
    );
    expect(error).toBeInstanceOf(StoreError);
    expect((error as StoreError).kind).toBe('corrupt');
    expect((error as StoreError).problems.some((p) => p.startsWith('rows:'))).toBe(true);
    expect((error as StoreError).problems.some((p) => p.startsWith('weightKg:'))).toBe(true);
    const all = await store.getAll();
    expect(all.unreadable.map((u) => u.id)).toEqual([ws.id]);
  });
});

describe('remove, putAll, meta', () => {
  it('remove deletes the worksheet, its summary and its log entries', async () => {
    const store = await open();
    const a = sampleWorksheet(makeCtx('a'));
    const b = sampleWorksheet(makeCtx('b'));
    await store.create(a);
    await store.create(b);
    expect(await store.remove(a.id)).toEqual({ ok: true, removed: true });
    expect(await store.remove(a.id)).toEqual({ ok: true, removed: false });
    expect((await store.list()).summaries.map((s) => s.id)).toEqual([b.id]);
    store.close();
    const db = await rawOpen(factory, name);
    const log = (await rawAll(db, 'log')) as { worksheetId: string }[];
    expect(new Set(log.map((e) => e.worksheetId))).toEqual(new Set([b.id]));
    expect(log).toHaveLength(b.log.length);
    db.close();
  });

  it('putAll never overwrites without permission, and writes nothing when refused', async () => {
    const store = await open();
    const a = sampleWorksheet(makeCtx('a'));
    const b = sampleWorksheet(makeCtx('b'));
    await store.create(a);
    const r = await store.putAll([b, { ...a, label: 'imported copy' }], { replace: false });
    expect(r).toMatchObject({ ok: false, reason: 'exists', ids: [a.id] });
    expect(await store.get(b.id)).toBeUndefined();
    expect((await store.get(a.id))?.label).toBe(a.label);
  });

  it('putAll replaces only chosen ids, with a rev above the replaced one, and its own log', async () => {
    const store = await open();
    const ctx = makeCtx('a');
    const a = sampleWorksheet(ctx);
    await store.create(a);
    // The stored version moves on (rev + 2) after the backup was made.
    const c1 = setCell(ctx, a, a.rows[0]!.id, 'rr', { value: 26 });
    await store.commit(c1, a.rev);
    const c2 = setCell(ctx, c1.worksheet, a.rows[0]!.id, 'rr', { value: 28 });
    await store.commit(c2, c1.worksheet.rev);
    const b = sampleWorksheet(makeCtx('b'));
    const txSpy = vi.spyOn(IDBDatabase.prototype, 'transaction');
    const r = await store.putAll([a, b], { replace: [a.id] });
    if (!r.ok) throw new Error(r.message);
    expect(r.added).toEqual([b.id]);
    expect(r.replaced).toEqual([a.id]);
    // Imports use durability 'strict' (reference §1.2: migrations and bulk imports).
    expect(txSpy.mock.calls.some((call) => call[2]?.durability === 'strict')).toBe(true);
    const stored = (await store.get(a.id))!;
    expect(stored.rev).toBe(c2.worksheet.rev + 1);
    expect(stored).toStrictEqual({ ...a, rev: c2.worksheet.rev + 1 });
    expect(stored.log).toStrictEqual(a.log);
    expect(await store.get(b.id)).toStrictEqual(b);
    // An edit still open on the old version now conflicts instead of landing on the new data.
    const stale = setCell(ctx, c2.worksheet, a.rows[0]!.id, 'rr', { value: 30 });
    expect(await store.commit(stale, c2.worksheet.rev)).toMatchObject({ ok: false, reason: 'conflict' });
  });

  it('keeps small settings in meta', async () => {
    const store = await open();
    expect(await store.getMeta('lastOpened')).toBeUndefined();
    expect(await store.setMeta('lastOpened', { id: 'x' })).toEqual({ ok: true });
    expect(await store.getMeta('lastOpened')).toEqual({ id: 'x' });
  });
});

describe('schema versions and upgrades', () => {
  it('a fresh database is created at the current version with every store and index', async () => {
    const store = await open();
    expect(store.version).toBe(DB_VERSION);
    expect(DB_VERSION).toBe(2);
    store.close();
    const db = await rawOpen(factory, name);
    expect([...db.objectStoreNames].sort()).toEqual(['log', 'meta', 'summaries', 'worksheets']);
    const tx = db.transaction(['log', 'summaries'], 'readonly');
    expect([...tx.objectStore('log').indexNames]).toEqual(['by-worksheet']);
    expect([...tx.objectStore('summaries').indexNames]).toEqual(['by-updated']);
    db.close();
  });

  it('upgrades a version-1 database with data to the current version', async () => {
    const a = sampleWorksheet(makeCtx('a'));
    const b = sampleWorksheet(makeCtx('b'), 'DEMO bed 9 (fictional)');
    // Version-1 fixture written with raw IndexedDB calls: records without log, log entry by entry.
    const v1 = await rawOpen(factory, name, 1, (db) => createV1Layout(db));
    const records = [a, b].map((ws) => {
      const { log, ...rest } = ws;
      return { ...rest, logCount: log.length };
    });
    await rawPut(v1, 'worksheets', [...records, { id: 'broken', label: 42 }]);
    await rawPut(
      v1,
      'log',
      [a, b].flatMap((ws) => ws.log.map((entry, seq) => ({ worksheetId: ws.id, seq, entry }))),
    );
    await rawPut(v1, 'meta', [{ id: a.id }], ['lastOpened']);
    v1.close();

    const store = await open();
    expect(store.version).toBe(2);
    const listing = await store.list();
    expect(listing.summaries.map((s) => [s.id, s.rowCount]).sort()).toEqual([
      [a.id, 3],
      [b.id, 3],
    ]);
    // The unreadable record does not block the upgrade and is reported, not dropped.
    expect(listing.unreadable.map((u) => u.id)).toEqual(['broken']);
    expect(await store.get(a.id)).toStrictEqual(a);
    expect(await store.get(b.id)).toStrictEqual(b);
    expect(await store.getMeta('lastOpened')).toEqual({ id: a.id });
  });

  it('a failing upgrade step aborts: the database stays at version 1 with its data intact', async () => {
    const a = sampleWorksheet(makeCtx('a'));
    const v1 = await rawOpen(factory, name, 1, (db) => createV1Layout(db));
    const { log, ...rest } = a;
    await rawPut(v1, 'worksheets', [{ ...rest, logCount: log.length }]);
    await rawPut(
      v1,
      'log',
      log.map((entry, seq) => ({ worksheetId: a.id, seq, entry })),
    );
    v1.close();

    // The real v2 step runs (creates the store, writes summaries), then a later part fails.
    const failingV2: Migration = {
      version: 2,
      description: 'v2, failing after its writes',
      async run(db, tx) {
        await MIGRATIONS[1]!.run(db, tx);
        await tx.objectStore('worksheets').delete(a.id);
        throw new Error('simulated failure in step 2');
      },
    };
    const error = await openStore({ name, idbFactory: factory, migrations: [MIGRATIONS[0]!, failingV2] }).then(
      (s) => {
        s.close();
        return undefined;
      },
      (e: unknown) => e,
    );
    expect(error).toBeInstanceOf(StoreError);
    expect((error as StoreError).kind).toBe('upgrade-failed');
    expect((error as StoreError).message).toMatch(/simulated failure in step 2/);

    const db = await rawOpen(factory, name);
    expect(db.version).toBe(1);
    expect([...db.objectStoreNames].sort()).toEqual(['log', 'meta', 'worksheets']);
    expect(await rawAll(db, 'worksheets')).toHaveLength(1);
    expect(await rawAll(db, 'log')).toHaveLength(log.length);
    db.close();

    // With the correct step, the same data upgrades.
    const store = await open();
    expect(await store.get(a.id)).toStrictEqual(a);
  });

  it('a step that awaits a timer (the transaction auto-commits) is refused loudly, not ignored', async () => {
    // Reference §1.7: awaiting a macrotask inside a transaction lets it commit; the next request
    // throws TransactionInactiveError (fake-indexeddb reproduces it).
    const sloppyV2: Migration = {
      version: 2,
      description: 'awaits a timer mid-step',
      async run(db) {
        db.createObjectStore('summaries', { keyPath: 'id' });
        await new Promise((resolve) => setTimeout(resolve, 30));
        db.createObjectStore('too-late');
      },
    };
    const v1 = await rawOpen(factory, name, 1, (db) => createV1Layout(db));
    v1.close();
    await expect(openStore({ name, idbFactory: factory, migrations: [MIGRATIONS[0]!, sloppyV2] })).rejects.toMatchObject({
      kind: 'upgrade-failed',
    });
  });

  it('refuses a database made by a newer version, clearly', async () => {
    const newer = await rawOpen(factory, name, DB_VERSION + 1, (db) => createV1Layout(db));
    newer.close();
    await expect(open()).rejects.toMatchObject({ name: 'StoreError', kind: 'newer-version' });
  });
});

describe('other connections', () => {
  it('closes on versionchange so a newer version opens (no hang), then reports closed', async () => {
    const onVersionChange = vi.fn();
    const old = await open({ onVersionChange });
    const ws = sampleWorksheet(makeCtx());
    await old.create(ws);
    const newer = await within(
      2000,
      rawOpen(factory, name, DB_VERSION + 1, (db) => db.createObjectStore('extra')),
      'newer version open',
    );
    expect(onVersionChange).toHaveBeenCalledWith({ currentVersion: DB_VERSION, requestedVersion: DB_VERSION + 1 });
    expect(old.isOpen()).toBe(false);
    expect(await old.commit(setCell(makeCtx(), ws, ws.rows[0]!.id, 'rr', { value: 20 }), ws.rev)).toMatchObject({
      ok: false,
      reason: 'closed',
    });
    await expect(old.get(ws.id)).rejects.toMatchObject({ kind: 'closed' });
    newer.close();
  });

  it('calls onBlocked while an old connection stays open, then opens once it closes', async () => {
    const stubborn = await rawOpen(factory, name, 1, (db) => createV1Layout(db));
    // An old tab that ignores versionchange.
    const onBlocked = vi.fn();
    const opening = openStore({ name, idbFactory: factory, onBlocked });
    await vi.waitFor(() => expect(onBlocked).toHaveBeenCalledWith({ currentVersion: 1, requestedVersion: DB_VERSION }));
    stubborn.close();
    const store = await within(2000, opening, 'open after the old tab closed');
    opened.push(store);
    expect(store.version).toBe(DB_VERSION);
  });

  it('reports an abnormal close through onClosed; writes then return closed', async () => {
    const onClosed = vi.fn();
    const store = await open({ onClosed });
    const ws = sampleWorksheet(makeCtx());
    // Reach the underlying connection the way the browser would close it (storage cleared).
    const db = await new Promise<IDBDatabase>((resolve) => {
      const spy = vi.spyOn(IDBDatabase.prototype, 'transaction');
      void store.getMeta('x').then(() => {
        resolve(spy.mock.contexts[0] as IDBDatabase);
        spy.mockRestore();
      });
    });
    forceCloseDatabase(db as unknown as Parameters<typeof forceCloseDatabase>[0]);
    await vi.waitFor(() => expect(onClosed).toHaveBeenCalled());
    expect(await store.create(ws)).toMatchObject({ ok: false, reason: 'closed' });
  });

  it('reports a missing IndexedDB as unsupported', async () => {
    const saved = globalThis.indexedDB;
    try {
      (globalThis as { indexedDB?: IDBFactory }).indexedDB = undefined;
      await expect(openStore({ name })).rejects.toMatchObject({ kind: 'unsupported' });
    } finally {
      globalThis.indexedDB = saved;
    }
  });
});

describe('persistence wrappers', () => {
  it('are "unsupported" without navigator.storage and follow what the browser answers', async () => {
    expect(await requestPersistence(undefined)).toBe('unsupported');
    expect(await persistenceState(undefined)).toEqual({ state: 'unsupported' });
    // A fresh headless profile answers persist() -> false (reference §1.4, measured here).
    const refused = { persist: async () => false, persisted: async () => false, estimate: async () => ({ usage: 10, quota: 100 }) };
    expect(await requestPersistence(refused)).toBe('best-effort');
    expect(await persistenceState(refused)).toEqual({ state: 'best-effort', usage: 10, quota: 100 });
    const granted = { persist: async () => true, persisted: async () => true };
    expect(await requestPersistence(granted)).toBe('persisted');
    expect(await persistenceState(granted)).toEqual({ state: 'persisted' });
    const throwing = { persist: () => Promise.reject(new Error('not allowed')), persisted: () => Promise.reject(new Error('x')) };
    expect(await requestPersistence(throwing)).toBe('unsupported');
    expect(await persistenceState(throwing)).toEqual({ state: 'unsupported' });
  });
});
