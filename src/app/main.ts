/**
 * App entry: opens the notebook store, asks for the passphrase when the notebook is locked, seeds
 * the fictional demo on the very first start, and mounts <tm-app> with the device clock. The only
 * place the app picks the real clock and the real IndexedDB.
 */
import './zod-setup.js';
import { systemClock } from '../sheet/clock.js';
import { DEFAULT_IDLE_MINUTES, IdleTimer, storedLock, type LockRecord } from '../storage/lock.js';
import { openStore, requestPersistence, StoreError, type Store } from '../storage/store.js';
import { demoWorksheet } from './demo-scenario.js';
import './tm-app.js';
import type { TmApp } from './tm-app.js';
import './tm-lock.js';

const SEEDED = 'demoSeeded';

/** Shows the lock screen over the app until the right passphrase is given. */
function lockScreen(
  app: TmApp,
  record: LockRecord,
  onUnlock: (e: HTMLElementEventMap['tm-unlocked']) => void,
  unsavedKept = false,
): Promise<void> {
  return new Promise((resolve) => {
    const screen = document.createElement('tm-lock');
    screen.mode = 'unlock';
    screen.record = record;
    screen.unsavedKept = unsavedKept;
    app.hidden = true;
    app.inert = true;
    screen.addEventListener('tm-unlocked', (e) => {
      onUnlock(e);
      screen.remove();
      app.hidden = false;
      app.inert = false;
      resolve();
    });
    document.body.prepend(screen);
  });
}

/**
 * The lock settings in the app's rail, the idle lock and the notice to other tabs. Locking when
 * everything is saved reloads the page, so nothing of the notebook stays in memory; with entries
 * still unsaved the screen is covered instead and the key kept, so those entries can still be
 * saved (nothing typed is ever dropped to lock).
 */
function wireLock(app: TmApp, store: Store, initial: LockRecord | undefined): void {
  let record = initial;
  const settings = document.createElement('tm-lock');
  settings.mode = 'settings';
  settings.slot = 'rail-end';
  settings.store = store;
  settings.record = record;
  app.append(settings);
  const channel = typeof BroadcastChannel === 'function' ? new BroadcastChannel(`${store.name}-lock`) : undefined;
  let locking = false;
  const lockNow = async (): Promise<void> => {
    if (locking || !record) return;
    locking = true;
    for (let waited = 0; app.hasUnsavedWork() && waited < 3000; waited += 100) await new Promise((r) => setTimeout(r, 100));
    if (!app.hasUnsavedWork()) {
      store.setCodec(undefined);
      location.reload();
      return;
    }
    await lockScreen(app, record, () => undefined, true);
    locking = false;
    idle.activity();
  };
  const idle = new IdleTimer(systemClock, (record?.idleMinutes ?? DEFAULT_IDLE_MINUTES) * 60_000, () => void lockNow());
  for (const type of ['keydown', 'pointerdown', 'wheel', 'touchstart']) {
    document.addEventListener(type, () => idle.activity(), { capture: true, passive: true });
  }
  setInterval(() => {
    if (record) idle.check();
  }, 5_000);
  settings.addEventListener('tm-lock-changed', (e) => {
    record = e.record;
    idle.idleMs = (record?.idleMinutes ?? DEFAULT_IDLE_MINUTES) * 60_000;
    idle.activity();
    channel?.postMessage('changed');
  });
  settings.addEventListener('tm-lock-now', () => void lockNow());
  // Another tab switched the lock on or off: this tab's key (or lack of one) is no longer right.
  channel?.addEventListener('message', () => {
    if (!app.hasUnsavedWork()) location.reload();
    else app.showBlocked('The notebook lock was changed in another tab. Export anything not yet saved, then reload this tab.');
  });
}

async function start(): Promise<void> {
  const app = document.createElement('tm-app');
  app.clock = systemClock;
  document.body.append(app);
  try {
    const store = await openStore({
      onBlocked: () =>
        app.showBlocked('Tidemark is open in another tab with an older version. Close or reload the other tabs to continue.'),
      onVersionChange: () =>
        app.showBlocked('A newer Tidemark opened in another tab. Reload this tab to keep working; nothing saved is lost.'),
      onClosed: () => app.showBlocked('The browser closed the notebook storage. Reload the page; export a backup if it happens again.'),
    });
    const lock = await storedLock(store);
    if (lock === 'damaged') {
      app.showBlocked('The lock settings of this notebook are damaged, so its worksheets cannot be opened here. Nothing was changed.');
      return;
    }
    if (lock) await lockScreen(app, lock, (e) => store.setCodec(e.codec));
    if (!lock && (await store.getMeta(SEEDED)) !== true) {
      const demo = demoWorksheet(systemClock.now());
      const created = await store.create(demo);
      if (created.ok || created.reason === 'exists') await store.setMeta(SEEDED, true);
      app.welcome = true;
    }
    app.store = store;
    wireLock(app, store, lock);
    // Ask the browser to keep the notebook when space runs low (it may say no), and show the answer.
    void requestPersistence().then((state) => (app.persistence = state));
  } catch (e) {
    const text = e instanceof StoreError ? e.message : String(e);
    app.showBlocked(`The notebook could not be opened: ${text}`);
  }
}

/**
 * Registers the service worker of the production build (served as assets/app.js next to sw.js),
 * through a Trusted Types policy that allows only that one script URL.
 */
function registerServiceWorker(): void {
  if (!('serviceWorker' in navigator) || !new URL(import.meta.url).pathname.endsWith('/assets/app.js')) return;
  const tt = (
    globalThis as {
      trustedTypes?: { createPolicy(n: string, p: { createScriptURL(u: string): string }): { createScriptURL(u: string): string } };
    }
  ).trustedTypes;
  const policy = tt?.createPolicy('tidemark-sw', {
    createScriptURL: (u) => {
      if (u !== './sw.js') throw new TypeError(`Refused script URL ${u}`);
      return u;
    },
  });
  const url = policy ? policy.createScriptURL('./sw.js') : './sw.js';
  navigator.serviceWorker.register(url, { scope: './' }).catch(() => {
    // Offline use after the first visit needs the worker; the app works online without it.
  });
}

void start();
registerServiceWorker();
