// store.commit checks the stored revision and log length without reading the stored worksheet
// back (from its summary and two log keys; see the comment in commit). These tests hold it to the
// same guarantees as before, on fake-indexeddb: a stale edit is a conflict, a change that does
// not continue the stored edit log is refused with nothing written (W3C Indexed Database API 3.0:
// an aborted transaction leaves nothing behind), and a worksheet without a usable summary still
// commits. Data: the fictional sample worksheet.
import 'fake-indexeddb/auto';
import { IDBFactory } from 'fake-indexeddb';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { setCell } from '../../src/sheet/worksheet.js';
import { openStore, type Store } from '../../src/storage/store.js';
import { makeCtx, sampleWorksheet } from './fixtures.js';
import { rawAll, rawOpen, req, txDone } from './idb-helpers.js';

let factory: IDBFactory;
let name: string;
let stores: Store[] = [];
let n = 0;

beforeEach(() => {
  factory = new IDBFactory();
  name = `tm-commit-head-${++n}`;
  stores = [];
});

afterEach(() => {
  for (const s of stores) s.close();
});

async function open(): Promise<Store> {
  const s = await openStore({ name, idbFactory: factory, broadcast: false });
  stores.push(s);
  return s;
}

describe('commit checks the stored head', () => {
  it('commits edit after edit, each continuing the log, and reports a stale edit as a conflict', async () => {
    const store = await open();
    const ctx = makeCtx();
    const ws = sampleWorksheet(ctx);
    expect((await store.create(ws)).ok).toBe(true);
    const first = setCell(ctx, ws, ws.rows[0]!.id, 'rr', { value: 26 });
    expect((await store.commit(first, ws.rev)).ok).toBe(true);
    const second = setCell(ctx, first.worksheet, ws.rows[0]!.id, 'rr', { value: 24 });
    expect((await store.commit(second, first.worksheet.rev)).ok).toBe(true);
    // An edit made on the version before `second` (another tab did not see it).
    const stale = setCell(ctx, first.worksheet, ws.rows[1]!.id, 'hr', { value: 100 });
    const r = await store.commit(stale, first.worksheet.rev);
    expect(r).toMatchObject({ ok: false, reason: 'conflict' });
    if (!r.ok && r.reason === 'conflict') expect(r.current).toStrictEqual(second.worksheet);
    expect(await store.get(ws.id)).toStrictEqual(second.worksheet);
  });

  it('refuses a change whose entries do not continue the stored log, writing nothing', async () => {
    const store = await open();
    const ctx = makeCtx();
    const ws = sampleWorksheet(ctx);
    await store.create(ws);
    const edit = setCell(ctx, ws, ws.rows[0]!.id, 'rr', { value: 26 });
    // Same revision, but the log skips an entry: its new entry would be entry logCount + 1.
    const gap = {
      worksheet: { ...edit.worksheet, log: [...ws.log, { ...edit.entries[0]!, id: 'gap' }, ...edit.entries] },
      entries: edit.entries,
    };
    const skipped = await store.commit(gap, ws.rev);
    expect(skipped).toMatchObject({ ok: false, reason: 'invalid' });
    // The log one entry short of the stored one: its new entry would overwrite the last stored one.
    const short = { worksheet: { ...edit.worksheet, log: [...ws.log.slice(0, -1), ...edit.entries] }, entries: edit.entries };
    expect(await store.commit(short, ws.rev)).toMatchObject({ ok: false, reason: 'invalid' });
    expect(await store.get(ws.id)).toStrictEqual(ws);
  });

  it('still commits (reading the record) when the summary is gone', async () => {
    const store = await open();
    const ctx = makeCtx();
    const ws = sampleWorksheet(ctx);
    await store.create(ws);
    const db = await rawOpen(factory, name);
    const tx = db.transaction('summaries', 'readwrite');
    await Promise.all([req(tx.objectStore('summaries').delete(ws.id)), txDone(tx)]);
    db.close();
    const edit = setCell(ctx, ws, ws.rows[0]!.id, 'rr', { value: 26 });
    expect((await store.commit(edit, ws.rev)).ok).toBe(true);
    expect(await store.get(ws.id)).toStrictEqual(edit.worksheet);
    const check = await rawOpen(factory, name);
    expect((await rawAll(check, 'summaries')).length).toBe(1);
    check.close();
  });
});
