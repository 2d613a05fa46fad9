// Node tests of the optional notebook lock (src/storage/lock.ts) on fake-indexeddb, checked
// against independent implementations and published figures:
// - PBKDF2-HMAC-SHA256 test vectors of RFC 7914 §11 (the KDF WebCrypto is asked for);
// - node:crypto (OpenSSL) re-derives the key from the stored salt and iteration count and opens a
//   sealed record with AES-256-GCM and the documented additional data, so the format is what
//   lock.ts says it is (NIST SP 800-38D AES-GCM, 96-bit IV);
// - OWASP Password Storage Cheat Sheet (2023): 600,000 iterations for PBKDF2-HMAC-SHA256.
// Behaviour: nothing readable at rest once locked; a wrong passphrase is refused with a clear
// message and changes nothing; a tab without the key can neither read nor write; switching the
// lock on or off is one transaction that leaves the old records intact when it fails.
import 'fake-indexeddb/auto';
import { IDBFactory } from 'fake-indexeddb';
import { createDecipheriv, pbkdf2Sync } from 'node:crypto';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { FixedClock } from '../../src/sheet/clock.js';
import { setCell } from '../../src/sheet/worksheet.js';
import {
  IdleTimer,
  LOCK_META_KEY,
  PBKDF2_ITERATIONS,
  WRONG_PASSPHRASE_MESSAGE,
  createLock,
  disableLock,
  enableLock,
  fromBase64,
  readLockRecord,
  setIdleMinutes,
  storedLock,
  unlock,
} from '../../src/storage/lock.js';
import { StoreError, openStore } from '../../src/storage/store.js';
import type { RecordCodec, Store } from '../../src/storage/store.js';
import { makeCtx, sampleWorksheet } from '../storage/fixtures.js';
import { rawAll, rawOpen } from '../storage/idb-helpers.js';

/** Lower than the default only to keep most tests quick; the default is tested on its own. */
const FAST = 100_000;
const PASS = 'correct horse battery staple';

let factory: IDBFactory;
let name: string;
let opened: Store[] = [];
let n = 0;

async function open(): Promise<Store> {
  const s = await openStore({ name, idbFactory: factory, broadcast: false });
  opened.push(s);
  return s;
}

/** Every stored value of the notebook, as text (typed arrays and buffers spelled out as bytes). */
async function rawDump(): Promise<string> {
  const db = await rawOpen(factory, name);
  try {
    const parts: unknown[] = [];
    for (const store of ['worksheets', 'summaries', 'log', 'meta']) parts.push(await rawAll(db, store));
    return JSON.stringify(parts, (_k, v: unknown) =>
      v instanceof ArrayBuffer ? Buffer.from(v).toString('latin1') : v instanceof Uint8Array ? Buffer.from(v).toString('latin1') : v,
    );
  } finally {
    db.close();
  }
}

beforeEach(() => {
  factory = new IDBFactory();
  n += 1;
  name = `tm-lock-${n}`;
  opened = [];
});

afterEach(() => {
  for (const s of opened) s.close();
  vi.restoreAllMocks();
});

describe('key derivation and sealing format', () => {
  it('WebCrypto PBKDF2-HMAC-SHA256 matches the RFC 7914 §11 test vectors', async () => {
    const derive = async (p: string, s: string, c: number) => {
      const base = await crypto.subtle.importKey('raw', new TextEncoder().encode(p), 'PBKDF2', false, ['deriveBits']);
      return Buffer.from(
        await crypto.subtle.deriveBits({ name: 'PBKDF2', salt: new TextEncoder().encode(s), iterations: c, hash: 'SHA-256' }, base, 512),
      ).toString('hex');
    };
    // RFC 7914 §11, PBKDF2-HMAC-SHA256 vectors 1 and 2.
    expect(await derive('passwd', 'salt', 1)).toBe(
      '55ac046e56e3089fec1691c22544b605f94185216dde0465e68b9d57c20dacbc49ca9cccf179b645991664b39d77ef317c71b845b1e30bd509112041d3a19783',
    );
    expect(await derive('Password', 'NaCl', 80000)).toBe(
      '4ddcd8f60b98be21830cee5ef22701f9641a4418d04c0414aeff08876b34ab56a1d425a1225833549adb841b51c9b3176a272bdebba1d078478f62b397f33c8d',
    );
  });

  it(`uses ${PBKDF2_ITERATIONS.toLocaleString('en')} iterations by default and seals with AES-256-GCM that OpenSSL can open`, async () => {
    // OWASP Password Storage Cheat Sheet (2023): PBKDF2-HMAC-SHA256, 600,000 iterations.
    expect(PBKDF2_ITERATIONS).toBe(600_000);
    const started = performance.now();
    const { record, codec } = await createLock(PASS);
    const deriveMs = performance.now() - started;
    expect(record.iterations).toBe(600_000);
    expect(record.kdf).toBe('PBKDF2-HMAC-SHA-256');
    expect(fromBase64(record.salt).length).toBe(16);

    const sealed = await codec.seal('log', { worksheetId: 'ws-1', seq: 3, entry: { id: 'e', note: 'vancomycin started' } });
    expect(Object.keys(sealed).sort()).toEqual(['sealed', 'seq', 'worksheetId']);
    const { iv, data } = sealed['sealed'] as { iv: Uint8Array; data: ArrayBuffer };
    expect(iv.length).toBe(12);
    // Independent implementation: OpenSSL PBKDF2 + AES-256-GCM with the documented additional data.
    const key = pbkdf2Sync(PASS.normalize('NFC'), Buffer.from(fromBase64(record.salt)), record.iterations, 32, 'sha256');
    const bytes = Buffer.from(data);
    const decipher = createDecipheriv('aes-256-gcm', key, Buffer.from(iv));
    decipher.setAAD(Buffer.from('tidemark:log:ws-1|3'));
    decipher.setAuthTag(bytes.subarray(bytes.length - 16));
    const plain = Buffer.concat([decipher.update(bytes.subarray(0, bytes.length - 16)), decipher.final()]).toString('utf8');
    expect(JSON.parse(plain)).toEqual({ entry: { id: 'e', note: 'vancomycin started' } });
    // Figure for the README: the cost of one unlock on this machine (in Node).
    expect(deriveMs).toBeGreaterThan(0);
  }, 60_000);

  it('a sealed record moved to another place fails to open (additional data binds it)', async () => {
    const { codec } = await createLock(PASS, { iterations: FAST });
    const sealed = await codec.seal('log', { worksheetId: 'ws-1', seq: 3, entry: { id: 'e' } });
    await expect(codec.open('log', { ...sealed, seq: 4 })).rejects.toMatchObject({ kind: 'corrupt' });
    await expect(codec.open('log', sealed)).resolves.toEqual({ worksheetId: 'ws-1', seq: 3, entry: { id: 'e' } });
  });
});

describe('a locked notebook', () => {
  it('keeps nothing readable at rest, reads back exactly, and goes back to clear text when the lock is removed', async () => {
    const store = await open();
    const ctx = makeCtx();
    const ws = sampleWorksheet(ctx);
    await store.create(ws);
    const change = setCell(ctx, ws, ws.rows[0]!.id, 'note', { value: 'family at bedside' });
    expect(await store.commit(change, ws.rev)).toMatchObject({ ok: true });
    const before = await rawDump();
    for (const text of ['DEMO bed 7', 'piperacillin', 'urinary source', 'family at bedside']) expect(before).toContain(text);

    const locked = await enableLock(store, PASS, { iterations: FAST, idleMinutes: 5 });
    expect(locked.ok).toBe(true);
    const after = await rawDump();
    for (const text of ['DEMO bed 7', 'piperacillin', 'urinary source', 'family at bedside', '"hr"', 'lactate']) {
      expect(after).not.toContain(text);
    }
    expect(await store.get(ws.id)).toEqual(change.worksheet);
    expect((await store.list()).summaries.map((s) => s.label)).toEqual([ws.label]);

    // Edits keep working, sealed, with the same conflict rules.
    const next = setCell(ctx, change.worksheet, ws.rows[1]!.id, 'hr', { value: 99 });
    expect(await store.commit(next, change.worksheet.rev)).toMatchObject({ ok: true });
    expect(await rawDump()).not.toContain('"value":99');
    expect((await store.get(ws.id))?.rows[1]?.cells['hr']).toEqual({ value: 99 });

    expect(await disableLock(store)).toEqual({ ok: true });
    expect(await store.getMeta(LOCK_META_KEY)).toBeUndefined();
    expect(await rawDump()).toContain('family at bedside');
    expect(await store.get(ws.id)).toEqual(next.worksheet);
  });

  it('refuses a wrong passphrase with a clear message and changes nothing', async () => {
    const store = await open();
    const ws = sampleWorksheet(makeCtx());
    await store.create(ws);
    await enableLock(store, PASS, { iterations: FAST });
    store.close();
    const before = await rawDump();

    const again = await open();
    const lock = await storedLock(again);
    if (lock === undefined || lock === 'damaged') throw new Error('no lock record');
    for (const wrong of ['correct horse battery stapler', 'CORRECT HORSE BATTERY STAPLE', '', 'x'.repeat(500)]) {
      const r = await unlock(lock, wrong);
      expect(r).toEqual({ ok: false, reason: 'wrong-passphrase', message: WRONG_PASSPHRASE_MESSAGE });
    }
    expect(WRONG_PASSPHRASE_MESSAGE).toMatch(/does not unlock.*Nothing was changed or deleted/);
    expect(await rawDump()).toBe(before);
    // Without the key nothing can be read or written.
    await expect(again.list()).rejects.toMatchObject({ kind: 'locked' });
    await expect(again.get(ws.id)).rejects.toBeInstanceOf(StoreError);
    const blind = await again.commit(setCell(makeCtx(), ws, ws.rows[0]!.id, 'rr', { value: 30 }), ws.rev);
    expect(blind).toMatchObject({ ok: false, reason: 'closed' });
    expect(await rawDump()).toBe(before);

    const right = await unlock(lock, PASS);
    expect(right.ok).toBe(true);
    if (right.ok) again.setCodec(right.codec);
    expect(await again.get(ws.id)).toEqual(ws);
  });

  it('a tab that missed the lock being switched on cannot write clear text into the notebook', async () => {
    const tabA = await open();
    const tabB = await open();
    const ctx = makeCtx();
    const ws = sampleWorksheet(ctx);
    await tabA.create(ws);
    await enableLock(tabA, PASS, { iterations: FAST });
    const before = await rawDump();
    const stale = await tabB.commit(setCell(ctx, ws, ws.rows[0]!.id, 'rr', { value: 30 }), ws.rev);
    expect(stale).toMatchObject({
      ok: false,
      reason: 'closed',
      message: expect.stringMatching(/lock was switched on, off or changed in another tab/) as unknown,
    });
    const other = sampleWorksheet(makeCtx('other'), 'OTHER bed (fictional)');
    expect(await tabB.create(other)).toMatchObject({ ok: false, reason: 'closed' });
    expect(await tabB.putAll([other], { replace: false })).toMatchObject({ ok: false, reason: 'closed' });
    expect(await rawDump()).toBe(before);
  });

  it('switching the lock on retries when another tab writes in between, and keeps that write', async () => {
    const tabA = await open();
    const tabB = await open();
    const ctx = makeCtx();
    const ws = sampleWorksheet(ctx);
    await tabA.create(ws);
    const lock = await createLock(PASS, { iterations: FAST });
    const change = setCell(ctx, ws, ws.rows[0]!.id, 'rr', { value: 31 });
    let interfered = false;
    // A codec that lets tab B commit while tab A is sealing (between its read and its write).
    const racing: RecordCodec = {
      keyId: lock.codec.keyId,
      seal: async (store, plain) => {
        if (!interfered) {
          interfered = true;
          expect(await tabB.commit(change, ws.rev)).toMatchObject({ ok: true });
        }
        return lock.codec.seal(store, plain);
      },
      open: (store, sealed) => lock.codec.open(store, sealed),
    };
    expect(await tabA.reseal(racing, lock.record)).toEqual({ ok: true });
    expect(interfered).toBe(true);
    tabA.setCodec(lock.codec);
    expect(await tabA.get(ws.id)).toEqual(change.worksheet);
    expect(await rawDump()).not.toContain('DEMO bed 7');
  });

  it('a failure while switching the lock on leaves the notebook as it was', async () => {
    const store = await open();
    const ws = sampleWorksheet(makeCtx());
    await store.create(ws);
    const before = await rawDump();
    // A storage failure in the middle of the rewrite: the whole transaction aborts.
    let puts = 0;
    // eslint-disable-next-line @typescript-eslint/unbound-method -- called below with .apply on the real store
    const original = IDBObjectStore.prototype.put;
    vi.spyOn(IDBObjectStore.prototype, 'put').mockImplementation(function (this: IDBObjectStore, ...args) {
      puts += 1;
      if (puts === 4) throw new DOMException('The quota has been exceeded.', 'QuotaExceededError');
      return original.apply(this, args);
    });
    const r = await enableLock(store, PASS, { iterations: FAST });
    expect(r).toMatchObject({ ok: false, reason: 'quota' });
    vi.restoreAllMocks();
    expect(await rawDump()).toBe(before);
    expect(store.keyId).toBeUndefined();
    expect(await store.get(ws.id)).toEqual(ws);

    // A record that cannot be sealed: nothing is written at all.
    const failing: RecordCodec = {
      keyId: 'k-failing-1',
      seal: () => Promise.reject(new Error('no')),
      open: () => Promise.reject(new Error('no')),
    };
    expect(await store.reseal(failing, { keyId: 'k-failing-1' })).toMatchObject({ ok: false, reason: 'failed' });
    expect(await rawDump()).toBe(before);
  });

  it('stores the idle time with the lock and checks passphrase length', async () => {
    const store = await open();
    await store.create(sampleWorksheet(makeCtx()));
    expect(await enableLock(store, 'short', { iterations: FAST })).toMatchObject({ ok: false, reason: 'invalid' });
    await enableLock(store, PASS, { iterations: FAST, idleMinutes: 15 });
    expect(readLockRecord(await store.getMeta(LOCK_META_KEY))?.idleMinutes).toBe(15);
    expect(await setIdleMinutes(store, 2)).toEqual({ ok: true });
    expect(readLockRecord(await store.getMeta(LOCK_META_KEY))?.idleMinutes).toBe(2);
    expect(store.keyId).toBeDefined();
  });
});

describe('idle timer', () => {
  it('fires once after the idle time on the injected clock, and activity postpones it', () => {
    const clock = new FixedClock(Date.parse('2026-03-01T08:00:00Z'));
    let fired = 0;
    const idle = new IdleTimer(clock, 5 * 60_000, () => (fired += 1));
    clock.advance(4 * 60_000);
    idle.check();
    expect(fired).toBe(0);
    idle.activity();
    clock.advance(4 * 60_000);
    idle.check();
    expect(fired).toBe(0);
    expect(idle.remaining()).toBe(60_000);
    clock.advance(60_000);
    idle.check();
    idle.check();
    expect(fired).toBe(1);
  });
});
