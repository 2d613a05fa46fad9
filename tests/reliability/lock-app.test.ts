// The notebook lock in the production app in Chromium (the cryptography itself is checked against
// OpenSSL and RFC 7914 in lock.test.ts): switched on from the rail, the stored notebook holds no
// readable worksheet text; a reload shows the lock screen; a wrong passphrase gets a clear message
// and changes nothing stored; the right one opens the notebook and edits stay sealed; the app
// locks itself after the chosen idle time (fake clock) and on "Lock now"; another open tab locks
// too; switching the lock off writes everything back in clear.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { buildAndServe, Chromium, serveAgain, waitForApp, writeFigures, type ServedApp } from './harness.js';
import { focusCell, shownWorksheet } from './page-scripts.js';
import { WRONG_PASSPHRASE_MESSAGE } from '../../src/storage/lock.js';

let app: ServedApp;
let chrome: Chromium;
let origin: ServedApp;
const PASS = 'blue heron tide marker';
const figures: Record<string, unknown> = {};

beforeAll(async () => {
  app = await buildAndServe();
  origin = await serveAgain(app);
  chrome = await Chromium.start();
}, 120_000);

afterAll(async () => {
  writeFigures('lock-app', figures);
  await chrome?.close();
  await origin?.close();
  await app?.close();
}, 60_000);

/** Everything stored in the notebook database, as text (bytes of sealed parts spelled out). */
function dump(): Promise<string> {
  return new Promise((resolve, reject) => {
    const r = indexedDB.open('tidemark');
    r.onerror = () => reject(r.error ?? new Error('IndexedDB open failed'));
    r.onsuccess = () => {
      const db = r.result;
      const names = [...db.objectStoreNames];
      const tx = db.transaction(names, 'readonly');
      const out: Record<string, unknown> = {};
      for (const n of names) {
        const q: IDBRequest<unknown[]> = tx.objectStore(n).getAll();
        q.onsuccess = () => (out[n] = q.result);
      }
      tx.oncomplete = () => {
        db.close();
        const bytes = (v: ArrayBuffer | Uint8Array) =>
          Array.from(new Uint8Array(v instanceof ArrayBuffer ? v : v.buffer))
            .map((b) => String.fromCharCode(b))
            .join('');
        resolve(JSON.stringify(out, (_k, v: unknown) => (v instanceof ArrayBuffer || v instanceof Uint8Array ? bytes(v) : v)));
      };
    };
  });
}

const lockScreenShown = (page: Page) =>
  page.waitForFunction(
    () => document.querySelector('tm-lock[mode="unlock"]')?.shadowRoot?.textContent?.includes('This notebook is locked'),
    null,
    { timeout: 30_000 },
  );

async function unlockWith(page: Page, pass: string): Promise<void> {
  await page.locator('tm-lock[mode="unlock"] #pass').fill(pass);
  await page.getByRole('button', { name: 'Unlock' }).click();
}

const DEMO_TEXTS = ['DEMO bay 4', 'piperacillin-tazobactam', 'Norepinephrine started peripherally'];

describe('the notebook lock in the app', () => {
  it('seals the notebook, refuses a wrong passphrase without changing anything, and locks on idle and on request', async () => {
    const page = await chrome.context().newPage();
    await page.clock.install();
    await page.goto(origin.url, { waitUntil: 'load' });
    await waitForApp(page);
    const other = await chrome.context().newPage();
    await other.goto(origin.url, { waitUntil: 'load' });
    await waitForApp(other);
    const plain = await page.evaluate(dump);
    for (const t of DEMO_TEXTS) expect(plain).toContain(t);

    // Switch it on from the rail: passphrase twice, lock after 2 minutes.
    await page.locator('tm-lock #new-pass').fill(PASS);
    await page.locator('tm-lock #new-pass-2').fill(PASS);
    await page.locator('tm-lock #idle').selectOption('2');
    const started = Date.now();
    await page.getByRole('button', { name: 'Switch the lock on' }).click();
    await page.waitForFunction(() => document.querySelector('tm-lock')?.shadowRoot?.textContent?.includes('The lock is on'), null, {
      timeout: 30_000,
    });
    figures['switchOnMs'] = Date.now() - started;
    const sealed = await page.evaluate(dump);
    for (const t of DEMO_TEXTS) expect(sealed, `"${t}" readable at rest`).not.toContain(t);
    // The other tab was told and now shows the lock screen.
    await lockScreenShown(other);
    await other.close();

    // A reload: the lock screen, the app hidden.
    await page.reload({ waitUntil: 'load' });
    await lockScreenShown(page);
    expect(await page.evaluate(() => document.querySelector('tm-app')?.hidden)).toBe(true);
    // Wrong passphrases: the same clear message each time, nothing stored changes.
    for (const wrong of ['blue heron tide markers', 'Blue heron tide marker', 'x']) {
      await unlockWith(page, wrong);
      await page.waitForFunction(
        (m) => document.querySelector('tm-lock[mode="unlock"]')?.shadowRoot?.querySelector('[role="alert"]')?.textContent?.includes(m),
        WRONG_PASSPHRASE_MESSAGE,
        { timeout: 30_000 },
      );
    }
    expect(await page.evaluate(dump)).toBe(sealed);
    // The right one opens the notebook; an edit typed now is stored sealed.
    await unlockWith(page, PASS);
    await waitForApp(page);
    const row = ((await page.evaluate(shownWorksheet)).rows as { id: string }[])[0]!;
    expect(await page.evaluate(focusCell, { rowId: row.id, key: 'note' })).toBe(true);
    await page.keyboard.type('family updated at bedside');
    await page.keyboard.press('Enter');
    await page.waitForFunction(() =>
      document.querySelector('tm-app')?.shadowRoot?.querySelector('.save')?.textContent?.includes('All changes saved'),
    );
    const afterEdit = await page.evaluate(dump);
    expect(afterEdit).not.toContain('family updated at bedside');
    expect(afterEdit).not.toBe(sealed);

    // Two minutes without use (fake clock): the app locks itself.
    await page.clock.fastForward('02:10');
    await lockScreenShown(page);
    await unlockWith(page, PASS);
    await waitForApp(page);
    expect(
      ((await page.evaluate(shownWorksheet)).rows as { id: string; cells: Record<string, { value: unknown }> }[])[0]!.cells['note']?.value,
    ).toBe('family updated at bedside');
    // Use keeps it open: activity every minute for five minutes (no lock, so no reload either).
    let navigations = 0;
    page.on('framenavigated', (f) => {
      if (f === page.mainFrame()) navigations += 1;
    });
    for (let i = 0; i < 5; i++) {
      await page.clock.fastForward('01:00');
      await page.mouse.move(10 + i, 10);
      await page.mouse.down();
      await page.mouse.up();
    }
    await page.waitForTimeout(1500);
    expect(navigations).toBe(0);
    expect(await page.evaluate(() => document.querySelector('tm-lock[mode="unlock"]'))).toBeNull();
    // "Lock now".
    await page.getByRole('button', { name: 'Lock now' }).click();
    await lockScreenShown(page);
    await unlockWith(page, PASS);
    await waitForApp(page);

    // Switching it off needs the passphrase, then writes everything back in clear.
    await page.getByRole('button', { name: 'Switch the lock off…' }).click();
    await page.locator('tm-lock #off-pass').fill('not it at all');
    await page.getByRole('button', { name: 'Switch the lock off', exact: true }).click();
    await page.waitForFunction((m) => document.querySelector('tm-lock')?.shadowRoot?.textContent?.includes(m), WRONG_PASSPHRASE_MESSAGE, {
      timeout: 30_000,
    });
    expect(await page.evaluate(dump)).not.toContain('family updated at bedside');
    await page.locator('tm-lock #off-pass').fill(PASS);
    await page.getByRole('button', { name: 'Switch the lock off', exact: true }).click();
    await page.waitForFunction(() => document.querySelector('tm-lock')?.shadowRoot?.textContent?.includes('The lock is off'), null, {
      timeout: 30_000,
    });
    const clear = await page.evaluate(dump);
    for (const t of [...DEMO_TEXTS, 'family updated at bedside']) expect(clear).toContain(t);
    await page.reload({ waitUntil: 'load' });
    await waitForApp(page);
    figures['wrongPassphrasesRefused'] = 4;
    figures['idleLock'] = 'locked after 2 min without use (fake clock); stayed open with use';
    await page.close();
  }, 240_000);
});
