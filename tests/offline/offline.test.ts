// The production build works with the network gone after the first visit: build dist, serve it,
// load the app in headless Chromium (its service worker installs and takes control), cut the
// network (the browser context goes offline and the server is shut down), reload, edit a cell
// and see it saved; reload once more, still offline, and the value is still there.
// What "works offline" requires comes from the Service Worker spec (W3C Service Workers:
// a controlled page's fetches go to its worker, which answers from the Cache API) and from
// IndexedDB keeping the data (W3C Indexed Database API 3.0, `complete` = committed).
// Data: the app's own fictional demo worksheet.
import { mkdtempSync, rmSync } from 'node:fs';
import type { Server } from 'node:http';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium, type Browser, type Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { build } from '../../scripts/build.mjs';
import { findChrome } from '../../scripts/find-chrome.mjs';
import { serveDist } from '../../scripts/serve.mjs';

const CHROME_ARGS = [
  '--no-sandbox',
  '--disable-gpu',
  '--disable-dev-shm-usage',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
];

let dir = '';
let server: Server | undefined;
let browser: Browser | undefined;
let url = '';
let requests = 0;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'tidemark-offline-'));
  await build({ quiet: true, outDir: dir });
  const served = await serveDist({ dir: `${dir}/` });
  server = served.server;
  server.on('request', () => {
    requests += 1;
  });
  url = `http://127.0.0.1:${served.port}/`;
  const executablePath = findChrome();
  if (!executablePath) throw new Error('No Chrome or Chromium found (set CHROME_PATH).');
  browser = await chromium.launch({ executablePath, headless: true, args: CHROME_ARGS });
}, 120_000);

afterAll(async () => {
  await browser?.close();
  if (server?.listening) await new Promise<void>((resolve) => server!.close(() => resolve()));
  rmSync(dir, { recursive: true, force: true });
});

/** Waits until the app shows a worksheet with rows in its grid. */
async function appShown(page: Page): Promise<void> {
  await page.waitForFunction(
    () => {
      const app = document.querySelector('tm-app');
      return Boolean(app?.shadowRoot?.querySelector('tm-grid')?.shadowRoot?.querySelector('tbody tr[role="row"] [tabindex="0"]'));
    },
    null,
    { timeout: 60_000 },
  );
}

/** The grid's active cell (its one tab stop): row id, column key and the text it shows. */
function activeCell(page: Page): Promise<{ row: string; col: string; text: string }> {
  return page.evaluate(() => {
    const grid = document.querySelector('tm-app')!.shadowRoot!.querySelector('tm-grid')!.shadowRoot!;
    const cell = grid.querySelector<HTMLElement>('table [tabindex="0"]')!;
    return { row: cell.dataset['row'] ?? '', col: cell.dataset['col'] ?? '', text: cell.querySelector('.v')?.textContent?.trim() ?? '' };
  });
}

function cellText(page: Page, row: string, col: string): Promise<string> {
  return page.evaluate(
    ({ row, col }) => {
      const grid = document.querySelector('tm-app')!.shadowRoot!.querySelector('tm-grid')!.shadowRoot!;
      return grid.querySelector(`[data-row="${row}"][data-col="${col}"] .v`)?.textContent?.trim() ?? '(no cell)';
    },
    { row, col },
  );
}

describe('offline after the first visit', () => {
  it('reloads from the service worker with the network gone, and an edit made offline is saved', async () => {
    const context = await browser!.newContext({ viewport: { width: 1440, height: 900 } });
    const page = await context.newPage();
    // First visit, online: the app loads, seeds the fictional demo and installs its worker.
    await page.goto(url);
    await appShown(page);
    await page.waitForFunction(() => navigator.serviceWorker?.controller !== null, null, { timeout: 60_000 });

    // Cut the network: the browser goes offline and the server stops answering at all.
    await context.setOffline(true);
    await new Promise<void>((resolve) => server!.close(() => resolve()));
    server!.closeAllConnections();
    const before = requests;

    await page.reload();
    await appShown(page);
    expect(await page.evaluate(() => navigator.onLine)).toBe(false);
    expect(await page.evaluate(() => navigator.serviceWorker.controller !== null)).toBe(true);

    // Edit the active cell (the newest row's first measure) with the keyboard and store it.
    const cell = await activeCell(page);
    expect(cell.col).not.toBe('@time');
    const value = cell.text === '71' ? '72' : '71';
    await page.evaluate(() => {
      const grid = document.querySelector('tm-app')!.shadowRoot!.querySelector('tm-grid')!.shadowRoot!;
      grid.querySelector<HTMLElement>('table [tabindex="0"]')!.focus();
    });
    await page.keyboard.type(value);
    await page.keyboard.press('Enter');
    await page.waitForFunction(
      () => /All changes saved/.test(document.querySelector('tm-app')!.shadowRoot!.querySelector('.save')?.textContent ?? ''),
      null,
      { timeout: 30_000 },
    );
    expect(await cellText(page, cell.row, cell.col)).toBe(value);

    // Still offline: reload once more; the edit came back from IndexedDB.
    await page.reload();
    await appShown(page);
    expect(await cellText(page, cell.row, cell.col)).toBe(value);
    // Nothing reached the server after the network was cut.
    expect(requests).toBe(before);
    await context.close();
  }, 180_000);
});
