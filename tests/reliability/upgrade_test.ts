// Schema upgrades in Chromium's real IndexedDB:
// - a fixture notebook of every earlier schema version (tests/reliability/fixtures/notebook-v*.json,
//   written with plain IndexedDB calls in that version's layout) opens in the current version with
//   every readable worksheet exactly as stored, its old records untouched, and an unreadable
//   record reported rather than lost;
// - a migration that fails part-way (after it has already changed records) aborts its
//   transaction: the database keeps its old version and its old data, and opens normally after;
// - migrations are made durable by a 'strict' write at once, and the writes that replace data
//   (imports, switching the lock on or off) use 'strict' too; ordinary edits keep the default.
// Expected behaviour: W3C Indexed Database API 3.0 (an aborted upgrade transaction leaves the
// database as it was; the durability hint), summarised in
// reference/reliability-security-performance.md §1.2 and §1.7.
import { expect } from 'chai';
import { setCell } from '../../src/sheet/worksheet.js';
import { createLock } from '../../src/storage/lock.js';
import { DB_VERSION, MIGRATIONS } from '../../src/storage/schema.js';
import type { Migration } from '../../src/storage/schema.js';
import { StoreError, openStore, type Store } from '../../src/storage/store.js';
import { makeCtx, sampleWorksheet } from '../storage/fixtures.js';
import { createV1Layout, rawAll, rawOpen, req, within } from '../storage/idb-helpers.js';

interface Fixture {
  version: number;
  stores: { worksheets: Record<string, unknown>[]; log: { worksheetId: string; seq: number; entry: unknown }[]; meta: [string, unknown][] };
}

/** The hand-written layout of each earlier version (independent of src/storage/schema.ts). */
const LAYOUTS: Record<number, (db: IDBDatabase) => void> = { 1: createV1Layout };
const FIXTURES = [1];

let names: string[] = [];
let stores: Store[] = [];

afterEach(async () => {
  for (const s of stores) s.close();
  for (const n of names) await within(10_000, req(indexedDB.deleteDatabase(n)), `delete ${n}`);
  names = [];
  stores = [];
});

function freshName(): string {
  const n = `tm-upgrade-${Date.now()}-${Math.random().toString(36).slice(2)}`;
  names.push(n);
  return n;
}

async function loadFixture(version: number): Promise<Fixture> {
  const res = await fetch(new URL(`./fixtures/notebook-v${version}.json`, import.meta.url));
  return (await res.json()) as Fixture;
}

/** Writes a fixture with plain IndexedDB at its own version, then closes it. */
async function writeFixture(name: string, fx: Fixture): Promise<void> {
  const db = await rawOpen(indexedDB, name, fx.version, (d, tx) => {
    LAYOUTS[fx.version]!(d);
    for (const w of fx.stores.worksheets) tx.objectStore('worksheets').put(w);
    for (const e of fx.stores.log) tx.objectStore('log').put(e);
    for (const [k, v] of fx.stores.meta) tx.objectStore('meta').put(v, k);
  });
  db.close();
}

/** JSON with sorted keys. */
function canonical(value: unknown): string {
  return JSON.stringify(value, (_k, v: unknown) =>
    v !== null && typeof v === 'object' && !Array.isArray(v)
      ? Object.fromEntries(Object.entries(v).sort(([a], [b]) => (a < b ? -1 : 1)))
      : v,
  );
}

async function rawStores(name: string, list: string[]): Promise<Record<string, string>> {
  const db = await rawOpen(indexedDB, name);
  const out: Record<string, string> = {};
  for (const s of list) out[s] = canonical(await rawAll(db, s));
  db.close();
  return out;
}

describe('schema upgrades in real IndexedDB', () => {
  for (const version of FIXTURES) {
    it(`opens the version-${version} fixture in version ${DB_VERSION} with every worksheet as stored`, async () => {
      const fx = await loadFixture(version);
      expect(fx.version).to.equal(version);
      const name = freshName();
      await writeFixture(name, fx);
      const before = await rawStores(name, ['worksheets', 'log']);

      const store = await within(10_000, openStore({ name, broadcast: false }), 'openStore');
      stores.push(store);
      expect(store.version).to.equal(DB_VERSION);
      const listing = await store.list();
      const readable = fx.stores.worksheets.filter((w) => typeof w['label'] === 'string');
      expect(listing.summaries.map((s) => s.id).sort()).to.deep.equal(readable.map((w) => w['id']).sort());
      expect(listing.unreadable.map((u) => u.id)).to.deep.equal(['broken-1']);
      for (const record of readable) {
        const id = record['id'] as string;
        const { logCount, ...rest } = record;
        const log = fx.stores.log
          .filter((e) => e.worksheetId === id)
          .sort((a, b) => a.seq - b.seq)
          .map((e) => e.entry);
        expect(log.length).to.equal(logCount);
        const got = await store.get(id);
        expect(canonical(got)).to.equal(canonical({ ...rest, log }));
        const summary = listing.summaries.find((s) => s.id === id)!;
        expect(summary.rowCount).to.equal((record['rows'] as unknown[]).length);
        expect(summary.label).to.equal(record['label']);
      }
      // The upgrade added what it needed and changed no old record.
      store.close();
      expect(await rawStores(name, ['worksheets', 'log'])).to.deep.equal(before);
      // An edit on upgraded data works as on new data.
      const again = await openStore({ name, broadcast: false });
      stores.push(again);
      const ws = (await again.get(readable[0]!['id'] as string))!;
      const r = await again.commit(setCell(makeCtx('after'), ws, ws.rows[0]!.id, 'rr', { value: 22 }), ws.rev);
      expect(r.ok).to.equal(true);
    });
  }

  it('a migration that fails part-way leaves the old version and its data exactly as they were', async () => {
    const fx = await loadFixture(1);
    const name = freshName();
    await writeFixture(name, fx);
    const before = await rawStores(name, ['worksheets', 'log', 'meta']);
    // A later step that rewrites records, deletes the log, then fails.
    const failing: Migration = {
      version: DB_VERSION + 1,
      description: 'test-only step that fails after changing data',
      async run(_db, tx) {
        let cursor = await tx.objectStore('worksheets').openCursor();
        while (cursor) {
          await cursor.update({ ...(cursor.value as object), label: 'REWRITTEN' });
          cursor = await cursor.continue();
        }
        await tx.objectStore('log').clear();
        throw new Error('step failed on purpose');
      },
    };
    let error: unknown;
    try {
      stores.push(await openStore({ name, broadcast: false, migrations: [...MIGRATIONS, failing] }));
    } catch (e) {
      error = e;
    }
    expect(error).to.be.instanceOf(StoreError);
    expect((error as StoreError).kind).to.equal('upgrade-failed');
    expect((error as StoreError).message).to.match(/left as it was/);
    const db = await rawOpen(indexedDB, name);
    expect(db.version).to.equal(1);
    expect([...db.objectStoreNames].sort()).to.deep.equal(['log', 'meta', 'worksheets']);
    db.close();
    expect(await rawStores(name, ['worksheets', 'log', 'meta'])).to.deep.equal(before);
    // The current version still opens it.
    const store = await openStore({ name, broadcast: false });
    stores.push(store);
    expect((await store.list()).summaries.length).to.equal(2);
  });

  it('makes migrations durable with a strict write, and replaces data only in strict transactions', async () => {
    const fx = await loadFixture(1);
    const name = freshName();
    await writeFixture(name, fx);
    const seen: { stores: string[]; mode: string; durability: string }[] = [];
    // eslint-disable-next-line @typescript-eslint/unbound-method -- called below with .apply on the real database
    const original = IDBDatabase.prototype.transaction;
    IDBDatabase.prototype.transaction = function (this: IDBDatabase, ...args: Parameters<IDBDatabase['transaction']>) {
      const tx = original.apply(this, args);
      if (tx.mode === 'readwrite')
        seen.push({
          stores: [...tx.objectStoreNames],
          mode: tx.mode,
          durability: (tx as IDBTransaction & { durability: string }).durability,
        });
      return tx;
    };
    let store: Store;
    try {
      store = await openStore({ name, broadcast: false });
      stores.push(store);
      const upgradeFlush = seen.length;
      const ctx = makeCtx('dur');
      const ws = sampleWorksheet(ctx, 'DURABILITY bed (fictional)');
      expect((await store.putAll([ws], { replace: false })).ok).to.equal(true);
      expect((await store.commit(setCell(ctx, ws, ws.rows[0]!.id, 'rr', { value: 24 }), ws.rev)).ok).to.equal(true);
      const lock = await createLock('a long enough passphrase', { iterations: 100_000 });
      expect((await store.reseal(lock.codec, lock.record)).ok).to.equal(true);
      expect((await store.reseal(undefined, undefined)).ok).to.equal(true);
      expect(upgradeFlush).to.equal(1);
    } finally {
      IDBDatabase.prototype.transaction = original;
    }
    const kinds = seen.map((s) => `${s.stores.join('+')}:${s.durability}`);
    // Chromium reports "default" when no hint is given (reference §1.2, measured).
    expect(kinds).to.deep.equal([
      'meta:strict', // right after the upgrade
      'log+meta+summaries+worksheets:strict', // import (putAll)
      'log+meta+summaries+worksheets:default', // an ordinary edit
      'log+meta+summaries+worksheets:strict', // lock on
      'log+meta+summaries+worksheets:strict', // lock off
    ]);
  });
});
