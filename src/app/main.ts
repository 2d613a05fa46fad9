/**
 * App entry: opens the notebook store, seeds the fictional demo on the very first start, and
 * mounts <tm-app> with the device clock. The only place the app picks the real clock and the real
 * IndexedDB.
 */
import './zod-setup.js';
import { systemClock } from '../sheet/clock.js';
import { openStore, requestPersistence, StoreError } from '../storage/store.js';
import { demoWorksheet } from './demo-scenario.js';
import './tm-app.js';

const SEEDED = 'demoSeeded';


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
    if ((await store.getMeta(SEEDED)) !== true) {
      const demo = demoWorksheet(systemClock.now());
      const created = await store.create(demo);
      if (created.ok || created.reason === 'exists') await store.setMeta(SEEDED, true);
      app.welcome = true;
    }
    app.store = store;
    // Ask the browser to keep the notebook when space runs low (it may say no).
    void requestPersistence();
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
  const tt = (globalThis as { trustedTypes?: { createPolicy(n: string, p: { createScriptURL(u: string): string }): { createScriptURL(u: string): string } } }).trustedTypes;
  const policy = tt?.createPolicy('tidemark-sw', {
    createScriptURL: (u) => {
      if (u !== './sw.js') throw new TypeError(`Refused script URL ${u}`);
      return u;
    },
  });
  const url = policy ? policy.createScriptURL('./sw.js') : './sw.js';
  navigator.serviceWorker.register(url as string, { scope: './' }).catch(() => {
    // Offline use after the first visit needs the worker; the app works online without it.
  });
}

void start();
registerServiceWorker();
