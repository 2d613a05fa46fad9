// Browser tests of the notebook store in Chromium's real IndexedDB: what fake-indexeddb cannot
// show (reference/reliability-security-performance.md §7): data surviving a reopen (reload),
// versionchange/blocked between real connections, the durability the browser reports, and
// navigator.storage answers. Expected behaviour: W3C Indexed Database API 3.0 (versionchange,
// blocked, durability hint) and the idb README (openDB callbacks), summarised in §1.2 and §1.6.
import { setCell } from '../../src/sheet/worksheet.js';
import { DB_VERSION, MIGRATIONS } from '../../src/storage/schema.js';
import type { Migration } from '../../src/storage/schema.js';
import { openStore, persistenceState, requestPersistence } from '../../src/storage/store.js';
import type { ChangeNotice, Store, VersionInfo } from '../../src/storage/store.js';
import { makeCtx, sampleWorksheet } from './fixtures.js';
import { createV1Layout, rawOpen, req, within } from './idb-helpers.js';

function assert(condition: unknown, what: string): asserts condition {
  if (!condition) throw new Error(`assertion failed: ${what}`);
}

/** JSON with sorted keys: equal for structurally equal JSON data. */
function canonical(value: unknown): string {
  return JSON.stringify(value, (_key, v: unknown) =>
    v !== null && typeof v === 'object' && !Array.isArray(v)
      ? Object.fromEntries(Object.entries(v as Record<string, unknown>).sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0)))
      : v,
  );
}

function assertDeepEqual(actual: unknown, expected: unknown, what: string): void {
  const a = canonical(actual);
  const e = canonical(expected);
  if (a !== e) throw new Error(`${what}: expected\n${e.slice(0, 400)}\ngot\n${a.slice(0, 400)}`);
}

let counter = 0;
let names: string[] = [];
let stores: Store[] = [];

function freshName(): string {
  counter += 1;
  const name = `tm-store-browser-${Date.now()}-${counter}`;
  names.push(name);
  return name;
}

async function open(options: Parameters<typeof openStore>[0]): Promise<Store> {
  const store = await within(10_000, openStore(options), 'openStore');
  stores.push(store);
  return store;
}

beforeEach(() => {
  names = [];
  stores = [];
});

afterEach(async () => {
  for (const s of stores) s.close();
  for (const name of names) await within(10_000, req(indexedDB.deleteDatabase(name)), `delete ${name}`);
});

describe('store in real IndexedDB', () => {
  it('finds the committed worksheet after the store is reopened (as after a reload)', async () => {
    const name = freshName();
    const first = await open({ name });
    const ctx = makeCtx();
    const ws = sampleWorksheet(ctx);
    assert((await first.create(ws)).ok, 'create');
    const change = setCell(ctx, ws, ws.rows[0]!.id, 'spo2', { value: 91 });
    const committed = await first.commit(change, ws.rev);
    assert(committed.ok, 'commit ok');
    first.close();

    const second = await open({ name });
    const back = await second.get(ws.id);
    assertDeepEqual(back, change.worksheet, 'worksheet after reopen');
    const listing = await second.list();
    assert(listing.summaries.length === 1 && listing.summaries[0]!.rev === ws.rev + 1, 'summary rev after reopen');
  });

  it('an older connection gets onVersionChange and closes; the newer version opens without hanging', async () => {
    const name = freshName();
    const changes: VersionInfo[] = [];
    const older = await open({ name, onVersionChange: (info) => changes.push(info) });
    const ws = sampleWorksheet(makeCtx());
    assert((await older.create(ws)).ok, 'create');

    const v3: Migration = { version: DB_VERSION + 1, description: 'test-only step', run: (db) => void db.createObjectStore('extra') };
    const blocked: VersionInfo[] = [];
    const newer = await open({ name, migrations: [...MIGRATIONS, v3], onBlocked: (info) => blocked.push(info) });
    assert(newer.version === DB_VERSION + 1, `newer version ${newer.version}`);
    assertDeepEqual(changes, [{ currentVersion: DB_VERSION, requestedVersion: DB_VERSION + 1 }], 'onVersionChange');
    assert(blocked.length === 0, 'the newer open was not blocked: the older connection closed at once');
    assert(!older.isOpen(), 'older store closed');
    const late = await older.commit(setCell(makeCtx(), ws, ws.rows[0]!.id, 'rr', { value: 22 }), ws.rev);
    assert(!late.ok && late.reason === 'closed', `older commit after close: ${JSON.stringify(late)}`);
    assertDeepEqual(await newer.get(ws.id), ws, 'data kept across the upgrade');
  });

  it('calls onBlocked while an old tab keeps version 1 open, and opens once it closes', async () => {
    const name = freshName();
    const stubborn = await rawOpen(indexedDB, name, 1, (db) => createV1Layout(db));
    const blocked: VersionInfo[] = [];
    let sawBlocked!: () => void;
    const blockedSeen = new Promise<void>((resolve) => (sawBlocked = resolve));
    const opening = openStore({
      name,
      onBlocked: (info) => {
        blocked.push(info);
        sawBlocked();
      },
    });
    await within(5_000, blockedSeen, 'onBlocked');
    assertDeepEqual(blocked, [{ currentVersion: 1, requestedVersion: DB_VERSION }], 'onBlocked info');
    stubborn.close();
    const store = await within(5_000, opening, 'open after the old tab closed');
    stores.push(store);
    assert(store.version === DB_VERSION, 'upgraded');
  });

  it('imports with durability "strict"; ordinary edits keep the browser default', async () => {
    const name = freshName();
    const store = await open({ name });
    const seen: { mode: string; durability: string }[] = [];
    // eslint-disable-next-line @typescript-eslint/unbound-method -- called below with .apply on the real database
    const original = IDBDatabase.prototype.transaction;
    IDBDatabase.prototype.transaction = function (this: IDBDatabase, ...args: Parameters<IDBDatabase['transaction']>) {
      const tx = original.apply(this, args);
      seen.push({ mode: tx.mode, durability: (tx as IDBTransaction & { durability: string }).durability });
      return tx;
    };
    try {
      const ctx = makeCtx();
      const ws = sampleWorksheet(ctx);
      assert((await store.putAll([ws], { replace: false })).ok, 'putAll');
      assert((await store.commit(setCell(ctx, ws, ws.rows[0]!.id, 'rr', { value: 24 }), ws.rev)).ok, 'commit');
    } finally {
      IDBDatabase.prototype.transaction = original;
    }
    const writes = seen.filter((s) => s.mode === 'readwrite').map((s) => s.durability);
    // Chromium reports "default" when no hint is given (reference §1.2, measured here).
    assertDeepEqual(writes, ['strict', 'default'], 'durability of the import and the edit');
  });

  it('tells other tabs of a commit through BroadcastChannel', async () => {
    const name = freshName();
    const tabA = await open({ name });
    const tabB = await open({ name });
    const ctx = makeCtx();
    const ws = sampleWorksheet(ctx);
    const notices: ChangeNotice[] = [];
    const got = new Promise<void>((resolve) =>
      tabB.onExternalChange((n) => {
        notices.push(n);
        if (n.type === 'changed' && n.rev === ws.rev + 1) resolve();
      }),
    );
    assert((await tabA.create(ws)).ok, 'create');
    assert((await tabA.commit(setCell(ctx, ws, ws.rows[0]!.id, 'rr', { value: 24 }), ws.rev)).ok, 'commit');
    await within(5_000, got, 'notice');
    assertDeepEqual(notices.at(-1), { type: 'changed', id: ws.id, rev: ws.rev + 1 }, 'notice');
  });

  it('answers persistence questions without assuming persistence is granted', async () => {
    const asked = await requestPersistence();
    assert(asked === 'persisted' || asked === 'best-effort', `requestPersistence: ${asked}`);
    const state = await persistenceState();
    assert(state.state === 'persisted' || state.state === 'best-effort', `persistenceState: ${state.state}`);
    assert(typeof state.quota === 'number' && state.quota > 0, 'a quota estimate');
  });
});
