// Storage limits, in the production app in Chromium:
// - the app asks the browser for persistent storage and shows the answer (granted or not);
// - when a write fails (storage full, or any other storage error) the user is told at once, the
//   entry stays on screen marked "not saved", an export is offered and contains the unsaved
//   entry, and "Try saving again" stores it once the cause is gone.
// The failure is injected at the IndexedDB API (a put/add that throws QuotaExceededError or
// UnknownError, as MDN lists for IDBObjectStore.put): in our runs Chromium 156's DevTools quota
// override (Storage.overrideQuotaForOrigin) did not make IndexedDB refuse writes.
// Expected behaviour: MDN "Storage quotas and eviction criteria", StorageManager.persist(), and
// QuotaExceededError, summarised in reference/reliability-security-performance.md §1.4-1.5.
import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { buildAndServe, Chromium, serveAgain, waitForApp, writeFigures, type ServedApp } from './harness.js';
import { appMessages, focusCell, readStored, shownWorksheet } from './page-scripts.js';

let app: ServedApp;
let chrome: Chromium;
const servers: ServedApp[] = [];
const figures: Record<string, unknown> = {};

beforeAll(async () => {
  app = await buildAndServe();
  chrome = await Chromium.start();
}, 120_000);

afterAll(async () => {
  writeFigures('storage-limits', figures);
  await chrome?.close();
  for (const s of servers) await s.close();
  await app?.close();
}, 60_000);

async function freshTab(init?: () => void): Promise<Page> {
  const origin = await serveAgain(app);
  servers.push(origin);
  const page = await chrome.context().newPage();
  if (init) await page.addInitScript(init);
  await page.goto(origin.url, { waitUntil: 'load' });
  await waitForApp(page);
  return page;
}

const storageChip = (page: Page) =>
  page.evaluate(() => document.querySelector('tm-app')?.shadowRoot?.querySelector('.storage')?.textContent?.trim() ?? '');

describe('persistent storage', () => {
  it('asks for it and shows what the browser answered', async () => {
    // What this browser really answers (a fresh headless profile usually says no).
    const real = await freshTab(() => {
      const s = navigator.storage;
      const persist = s.persist.bind(s);
      (window as unknown as { __asked: number }).__asked = 0;
      s.persist = () => {
        (window as unknown as { __asked: number }).__asked += 1;
        return persist();
      };
    });
    await real.waitForFunction(() => document.querySelector('tm-app')?.shadowRoot?.querySelector('.storage'));
    const granted = await real.evaluate(() => navigator.storage.persisted());
    expect(await real.evaluate(() => (window as unknown as { __asked: number }).__asked)).toBeGreaterThan(0);
    expect(await storageChip(real)).toBe(granted ? '◆ Storage kept by the browser' : '◇ Storage may be cleared: export backups');
    // A browser that grants it, and one that refuses.
    const yes = await freshTab(() => {
      navigator.storage.persist = () => Promise.resolve(true);
      navigator.storage.persisted = () => Promise.resolve(true);
    });
    await yes.waitForFunction(() => document.querySelector('tm-app')?.shadowRoot?.querySelector('.storage'));
    expect(await storageChip(yes)).toBe('◆ Storage kept by the browser');
    const no = await freshTab(() => {
      navigator.storage.persist = () => Promise.resolve(false);
    });
    await no.waitForFunction(() => document.querySelector('tm-app')?.shadowRoot?.querySelector('.storage'));
    expect(await storageChip(no)).toBe('◇ Storage may be cleared: export backups');
    figures['persistence'] = { thisBrowserGranted: granted };
    for (const p of [real, yes, no]) await p.close();
  }, 120_000);
});

describe('a write that fails', () => {
  for (const failure of ['QuotaExceededError', 'UnknownError'] as const) {
    it(`(${failure}) is shown at once, stays on screen, is in the export offered, and is saved on retry`, async () => {
      const page = await freshTab(() => {
        const w = window as unknown as { __fail?: string };
        for (const method of ['put', 'add'] as const) {
          // eslint-disable-next-line @typescript-eslint/unbound-method -- called below with .apply on the real store
          const original = IDBObjectStore.prototype[method];
          IDBObjectStore.prototype[method] = function (this: IDBObjectStore, ...args: Parameters<IDBObjectStore['put']>) {
            // Only the worksheet writes fail (settings such as the last open worksheet still work).
            if (w.__fail && this.name !== 'meta') throw new DOMException('Injected storage failure.', w.__fail);
            return original.apply(this, args);
          } as IDBObjectStore['put'];
        }
      });
      const rows = (await page.evaluate(shownWorksheet)).rows as { id: string; cells: Record<string, { value: unknown }> }[];
      const row = rows[rows.length - 1]!;
      await page.evaluate((f) => ((window as unknown as { __fail?: string }).__fail = f), failure);
      // Typed with the keyboard into the MAP cell.
      expect(await page.evaluate(focusCell, { rowId: row.id, key: 'map' })).toBe(true);
      await page.keyboard.type('61');
      const typedAt = Date.now();
      await page.keyboard.press('Enter');
      await page.waitForFunction(() => document.querySelector('tm-app')?.shadowRoot?.querySelector('.banner.failed[role="alert"]'), null, {
        timeout: 5_000,
      });
      const toldAfterMs = Date.now() - typedAt;
      const messages = await page.evaluate(appMessages);
      expect(messages.save).toBe('✕ Not saved');
      const banner = messages.banners.find((b) => b.startsWith('Not saved.'))!;
      expect(banner).toMatch(
        failure === 'QuotaExceededError'
          ? /Device storage is full: this change was not saved\./
          : /The change was not saved \(UnknownError/,
      );
      expect(banner).toMatch(/Your entries are still on screen, marked “not saved”\. Export a backup now/);
      // The value is on screen, marked.
      const cell = await page.evaluate((id) => {
        const grid = document.querySelector('tm-app')!.shadowRoot!.querySelector('tm-grid') as unknown as HTMLElement & {
          pending: ReadonlyMap<string, string>;
        };
        const el = grid.shadowRoot!.querySelector(`[data-row="${id}"][data-col="map"]`);
        return { text: el?.textContent?.replace(/\s+/g, ' ').trim(), pending: grid.pending.get(`${id}:map`) };
      }, row.id);
      expect(cell.pending).toBe('failed');
      expect(cell.text).toMatch(/^61\b.*not saved/);
      // A second entry while storage is failing waits on screen too.
      expect(await page.evaluate(focusCell, { rowId: row.id, key: 'hr' })).toBe(true);
      await page.keyboard.type('131');
      await page.keyboard.press('Enter');
      await page.waitForFunction(
        (id) =>
          (
            document.querySelector('tm-app')!.shadowRoot!.querySelector('tm-grid') as unknown as { pending: ReadonlyMap<string, string> }
          ).pending.get(`${id}:hr`) === 'failed',
        row.id,
      );
      // The export offered holds both unsaved entries.
      await page.getByRole('button', { name: 'Export now' }).click();
      const download = page.waitForEvent('download');
      await page.getByRole('button', { name: 'Backup this worksheet' }).click();
      const file = `${app.scratch}/unsaved-${failure}.json`;
      await (await download).saveAs(file);
      const backup = JSON.parse(readFileSync(file, 'utf8')) as {
        worksheets: { rows: { id: string; cells: Record<string, { value: unknown }> }[] }[];
      };
      const exported = backup.worksheets[0]!.rows.find((r) => r.id === row.id)!;
      expect(exported.cells['map']?.value).toBe(61);
      expect(exported.cells['hr']?.value).toBe(131);
      // Nothing of it was stored.
      const stored = await page.evaluate(readStored);
      expect(stored.record.rows.find((r) => r.id === row.id)?.cells['map']?.value).toBe(row.cells['map']?.value);
      // The cause goes away; "Try saving again" stores both, in order.
      await page.evaluate(() => ((window as unknown as { __fail?: string }).__fail = undefined));
      await page.getByRole('button', { name: 'Try saving again' }).click();
      await page.waitForFunction(
        () => document.querySelector('tm-app')?.shadowRoot?.querySelector('.save')?.textContent?.includes('All changes saved'),
        null,
        { timeout: 10_000 },
      );
      await page.reload({ waitUntil: 'load' });
      await waitForApp(page);
      const after = await page.evaluate(readStored);
      const kept = after.record.rows.find((r) => r.id === row.id)!;
      expect(kept.cells['map']?.value).toBe(61);
      expect(kept.cells['hr']?.value).toBe(131);
      figures[failure] = { toldAfterMs, entriesKeptOnScreen: 2, exportHeldUnsaved: true, savedOnRetry: true };
      await page.close();
    }, 120_000);
  }
});
