// Two tabs on one notebook, in the production app in Chromium (one browser profile, so the tabs
// share IndexedDB and BroadcastChannel exactly as two real tabs do):
// - a change saved in one tab shows in the other within a second;
// - edits made at the same moment in both tabs are all kept: the rev check and the write happen
//   in one readwrite transaction, which IndexedDB serialises across tabs; the later edit is
//   re-applied on top of the other tab's version, and both values stay in the edit log;
// - a tab that missed the other's notice shows the conflict in words;
// - a tab holding an older schema version open makes the newer one wait with a message saying
//   what to do, and the newer one continues as soon as the old tab closes; an app tab facing a
//   newer version closes its connection (no hang) and says to reload, keeping unsaved entries.
// Expected behaviour: W3C Indexed Database API 3.0 (transaction scheduling; versionchange and
// blocked events) and MDN's Broadcast Channel API, summarised in
// reference/reliability-security-performance.md §1.1, §1.6 and §2.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { buildAndServe, Chromium, serveAgain, waitForApp, writeFigures, type ServedApp } from './harness.js';
import { appMessages, readStored, sendEdit, shownWorksheet, whenShown } from './page-scripts.js';
import { makeCtx, sampleWorksheet } from '../storage/fixtures.js';
import { toStoredWorksheet } from '../../src/storage/schema.js';

let app: ServedApp;
let chrome: Chromium;
const servers: ServedApp[] = [];
const figures: Record<string, unknown> = {};

beforeAll(async () => {
  app = await buildAndServe();
  chrome = await Chromium.start();
}, 120_000);

afterAll(async () => {
  writeFigures('two-tabs', figures);
  await chrome?.close();
  for (const s of servers) await s.close();
  await app?.close();
}, 60_000);

async function openTab(url: string, init?: () => void): Promise<Page> {
  const page = await chrome.context().newPage();
  if (init) await page.addInitScript(init);
  await page.goto(url, { waitUntil: 'load', timeout: 60_000 });
  await waitForApp(page);
  return page;
}

async function freshOrigin(): Promise<ServedApp> {
  const s = await serveAgain(app);
  servers.push(s);
  return s;
}

type Row = { id: string; cells: Record<string, { value: unknown } | undefined> };

/** JSON with object keys sorted, so equal data compares equal whatever the key order. */
function canonical(value: unknown): string {
  return JSON.stringify(value, (_k, v: unknown) =>
    v !== null && typeof v === 'object' && !Array.isArray(v)
      ? Object.fromEntries(Object.entries(v).sort(([x], [y]) => (x < y ? -1 : 1)))
      : v,
  );
}

describe('two tabs on one notebook', () => {
  it('shows a change saved in one tab in the other within a second', async () => {
    const origin = await freshOrigin();
    const a = await openTab(origin.url);
    const b = await openTab(origin.url);
    const rows = (await a.evaluate(shownWorksheet)).rows as Row[];
    const latencies: number[] = [];
    for (let i = 0; i < 15; i++) {
      const row = rows[i % rows.length]!;
      const value = 60 + i * 3;
      const seenInB = b.evaluate(whenShown, { rowId: row.id, key: 'hr', value, timeoutMs: 5_000 });
      await a.evaluate(sendEdit, { rowId: row.id, key: 'hr', value });
      const savedInA = await a.evaluate(whenShown, { rowId: row.id, key: 'hr', value, timeoutMs: 5_000 });
      latencies.push(Math.max(0, (await seenInB) - savedInA));
    }
    figures['propagation'] = {
      changes: latencies.length,
      maxMs: Math.max(...latencies),
      medianMs: [...latencies].sort((x, y) => x - y)[7],
    };
    expect(Math.max(...latencies)).toBeLessThan(1000);
    await a.close();
    await b.close();
  }, 120_000);

  it('keeps every edit made at the same moment in both tabs, in the edit log and on both screens', async () => {
    const origin = await freshOrigin();
    const a = await openTab(origin.url);
    const b = await openTab(origin.url);
    const before = await a.evaluate(readStored);
    const rows = before.record.rows;
    const sent: { tab: string; rowId: string; value: string }[] = [];
    let conflictsShown = 0;
    const ROUNDS = 25;
    for (let round = 0; round < ROUNDS; round++) {
      // Even rounds: both tabs write the same cell; odd rounds: two cells of the same worksheet.
      const rowA = rows[round % rows.length]!.id;
      const rowB = round % 2 === 0 ? rowA : rows[(round + 1) % rows.length]!.id;
      const va = `round ${round} from tab A`;
      const vb = `round ${round} from tab B`;
      sent.push({ tab: 'A', rowId: rowA, value: va }, { tab: 'B', rowId: rowB, value: vb });
      await Promise.all([
        a.evaluate(sendEdit, { rowId: rowA, key: 'note', value: va }),
        b.evaluate(sendEdit, { rowId: rowB, key: 'note', value: vb }),
      ]);
      await new Promise((r) => setTimeout(r, 40));
      for (const p of [a, b])
        if ((await p.evaluate(appMessages)).banners.some((t) => /also changed in another tab/.test(t))) conflictsShown += 1;
    }
    for (const [tab, p] of [
      ['A', a],
      ['B', b],
    ] as const) {
      try {
        await p.waitForFunction(
          () => document.querySelector('tm-app')?.shadowRoot?.querySelector('.save')?.textContent?.includes('All changes saved'),
          null,
          { timeout: 20_000 },
        );
      } catch (e) {
        throw new Error(`tab ${tab} never said "All changes saved": ${JSON.stringify(await p.evaluate(appMessages))}`, { cause: e });
      }
    }
    const after = await a.evaluate(readStored);
    const entries = after.log.slice(before.log.length).map((e) => e.entry);
    // Every edit is in the log exactly once, as a cell entry on the note of its row.
    for (const s of sent) {
      const found = entries.filter(
        (e) => e.kind === 'cell' && e.key === 'note' && e.rowId === s.rowId && (e.new as { value?: unknown } | null)?.value === s.value,
      );
      expect(found.length, `${s.value} in the log`).toBe(1);
    }
    expect(entries.length).toBe(sent.length);
    expect(after.record.rev).toBe(before.record.rev + sent.length);
    // The stored cell is the value of the last entry written for it (nothing overwritten silently).
    const last = new Map<string, unknown>();
    for (const e of entries) last.set(String(e.rowId), (e.new as { value?: unknown } | null)?.value);
    for (const [rowId, value] of last) expect(after.record.rows.find((r) => r.id === rowId)?.cells['note']?.value).toBe(value);
    // Both tabs end up showing what is stored.
    for (const p of [a, b]) {
      await p.waitForFunction(
        (rev) =>
          (document.querySelector('tm-app')?.shadowRoot?.querySelector('tm-grid') as unknown as { worksheet?: { rev: number } })?.worksheet
            ?.rev === rev,
        after.record.rev,
        { timeout: 5_000 },
      );
      expect(canonical((await p.evaluate(shownWorksheet)).rows)).toBe(canonical(after.record.rows));
    }
    figures['simultaneous'] = { rounds: ROUNDS, edits: sent.length, keptInLog: entries.length, conflictNoticesSeen: conflictsShown };
    await a.close();
    await b.close();
  }, 180_000);

  it('shows the conflict in a tab that missed the other tab’s notice, and keeps both values', async () => {
    const origin = await freshOrigin();
    const a = await openTab(origin.url);
    // Tab B never hears the other tab (as a frozen tab misses BroadcastChannel messages).
    const b = await openTab(origin.url, () => {
      const Real = BroadcastChannel;
      class Deaf extends Real {
        override addEventListener(...args: Parameters<BroadcastChannel['addEventListener']>): void {
          if (args[0] !== 'message') super.addEventListener(...args);
        }
      }
      (window as unknown as { BroadcastChannel: typeof BroadcastChannel }).BroadcastChannel = Deaf;
    });
    const row = ((await a.evaluate(shownWorksheet)).rows as Row[])[0]!;
    await a.evaluate(sendEdit, { rowId: row.id, key: 'note', value: 'first, from tab A' });
    await a.evaluate(whenShown, { rowId: row.id, key: 'note', value: 'first, from tab A', timeoutMs: 5_000 });
    // Tab B still shows the older version and writes the same cell.
    expect(((await b.evaluate(shownWorksheet)).rows as Row[])[0]!.cells['note']?.value).not.toBe('first, from tab A');
    await b.evaluate(sendEdit, { rowId: row.id, key: 'note', value: 'second, from tab B' });
    await b.evaluate(whenShown, { rowId: row.id, key: 'note', value: 'second, from tab B', timeoutMs: 5_000 });
    const notice = (await b.evaluate(appMessages)).banners.find((t) => /changed in another tab/.test(t));
    expect(notice).toMatch(/also changed in another tab; both changes are kept in the edit log/);
    const stored = await b.evaluate(readStored);
    const notes = stored.log
      .filter((e) => e.entry.kind === 'cell' && e.entry.key === 'note' && e.entry.rowId === row.id)
      .map((e) => e.entry);
    expect(notes.at(-2)?.new).toEqual({ value: 'first, from tab A' });
    expect(notes.at(-1)).toMatchObject({ old: { value: 'first, from tab A' }, new: { value: 'second, from tab B' } });
    // Tab A hears tab B's change and shows it within a second.
    await a.evaluate(whenShown, { rowId: row.id, key: 'note', value: 'second, from tab B', timeoutMs: 1_000 });
    await a.close();
    await b.close();
  }, 120_000);

  it('a tab holding the old schema open makes the new one wait with a message, then it opens the old data', async () => {
    const origin = await freshOrigin();
    // An old tab (an earlier build that ignores versionchange) holds version 1 with a worksheet.
    const ws = sampleWorksheet(makeCtx('v1'), 'OLD bed 3 (fictional)');
    const old = await chrome.context().newPage();
    await old.goto(`${origin.origin}/manifest.webmanifest`);
    await old.evaluate(
      (arg) =>
        new Promise<void>((resolve, reject) => {
          const r = indexedDB.open('tidemark', 1);
          r.onupgradeneeded = () => {
            const db = r.result;
            const w = db.createObjectStore('worksheets', { keyPath: 'id' });
            const log = db.createObjectStore('log', { keyPath: ['worksheetId', 'seq'] });
            log.createIndex('by-worksheet', 'worksheetId');
            const meta = db.createObjectStore('meta');
            w.put(arg.record);
            arg.log.forEach((entry, seq) => log.put({ worksheetId: arg.record.id, seq, entry }));
            meta.put(true, 'demoSeeded');
            meta.put(arg.record.id, 'lastOpen');
          };
          // Kept open on purpose, with no versionchange handler: the old build's behaviour.
          r.onsuccess = () => {
            (window as unknown as { keep: IDBDatabase }).keep = r.result;
            resolve();
          };
          r.onerror = () => reject(r.error ?? new Error('IndexedDB open failed'));
        }),
      { record: toStoredWorksheet(ws), log: ws.log },
    );
    const fresh = await chrome.context().newPage();
    const startedAt = Date.now();
    await fresh.goto(origin.url, { waitUntil: 'load' });
    await fresh.waitForFunction(
      () => document.querySelector('tm-app')?.shadowRoot?.textContent?.includes('open in another tab with an older version'),
      null,
      { timeout: 15_000 },
    );
    const message = (await fresh.evaluate(appMessages)).banners.join(' ');
    expect(message).toMatch(/Tidemark is open in another tab with an older version\. Close or reload the other tabs to continue\./);
    const blockedShownMs = Date.now() - startedAt;
    await old.close();
    await waitForApp(fresh, 15_000);
    const shown = await fresh.evaluate(shownWorksheet);
    expect(shown.id).toBe(ws.id);
    expect(canonical(shown.rows)).toBe(canonical(ws.rows));
    figures['olderTab'] = { blockedMessageShownWithinMs: blockedShownMs };
    await fresh.close();
  }, 120_000);

  it('an app tab facing a newer version closes at once (no hang), says to reload, and keeps what is typed', async () => {
    const origin = await freshOrigin();
    const tab = await openTab(origin.url);
    const other = await chrome.context().newPage();
    await other.goto(`${origin.origin}/manifest.webmanifest`);
    // A newer build opens version 99 with an extra store.
    const openedIn = await other.evaluate(
      () =>
        new Promise<number>((resolve, reject) => {
          const t0 = performance.now();
          const r = indexedDB.open('tidemark', 99);
          r.onupgradeneeded = () => r.result.createObjectStore('from-the-future');
          r.onblocked = () => reject(new Error('the newer version was blocked by the app tab'));
          r.onsuccess = () => {
            r.result.close();
            resolve(performance.now() - t0);
          };
          r.onerror = () => reject(r.error ?? new Error('IndexedDB open failed'));
        }),
    );
    expect(openedIn).toBeLessThan(5_000);
    await tab.waitForFunction(
      () => document.querySelector('tm-app')?.shadowRoot?.textContent?.includes('A newer Tidemark opened in another tab'),
      null,
      { timeout: 5_000 },
    );
    expect((await tab.evaluate(appMessages)).banners.join(' ')).toMatch(/Reload this tab to keep working; nothing saved is lost/);
    // An edit now cannot be saved: the screen says so, keeps it, and offers an export.
    const row = ((await tab.evaluate(shownWorksheet)).rows as Row[])[0]!;
    await tab.evaluate(sendEdit, { rowId: row.id, key: 'note', value: 'typed after the upgrade elsewhere' });
    await tab.waitForFunction(
      () => document.querySelector('tm-app')?.shadowRoot?.querySelector('.banner.failed[role="alert"]')?.textContent?.includes('Not saved'),
      null,
      { timeout: 5_000 },
    );
    const messages = await tab.evaluate(appMessages);
    expect(messages.save).toMatch(/Not saved/);
    expect(messages.banners.join(' ')).toMatch(/Your entries are still on screen/);
    expect(messages.banners.join(' ')).toMatch(/Export now/);
    expect(((await tab.evaluate(shownWorksheet)).rows as Row[])[0]!.cells['note']?.value).toBe('typed after the upgrade elsewhere');
    figures['newerTab'] = { newerVersionOpenedInMs: Math.round(openedIn) };
    await tab.close();
    await other.close();
  }, 120_000);
});
