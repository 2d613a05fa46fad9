// Tidemark service worker: keeps the app shell in a cache so the app loads and works with the
// network gone after the first visit. The worksheet data itself lives in IndexedDB, not here.
// __CACHE__ and __SHELL__ are filled in by scripts/build.mjs (the cache name carries the bundle hash).
const CACHE = '__CACHE__';
// The build puts the list of shell URLs in place of the string.
const SHELL = /** @type {string[]} */ (/** @type {unknown} */ ('__SHELL__'));
/** This script runs as a service worker (typed for tsconfig.sw.json). */
const sw = /** @type {ServiceWorkerGlobalScope} */ (/** @type {unknown} */ (self));

sw.addEventListener('install', (event) => {
  event.waitUntil(
    caches
      .open(CACHE)
      .then((c) => c.addAll(SHELL))
      .then(() => sw.skipWaiting()),
  );
});

sw.addEventListener('activate', (event) => {
  event.waitUntil(
    caches
      .keys()
      .then((keys) => Promise.all(keys.filter((k) => k.startsWith('tidemark-') && k !== CACHE).map((k) => caches.delete(k))))
      .then(() => sw.clients.claim()),
  );
});

// Cache first for the shell (same origin only); anything else goes to the network untouched.
sw.addEventListener('fetch', (event) => {
  const url = new URL(event.request.url);
  if (event.request.method !== 'GET' || url.origin !== sw.location.origin) return;
  event.respondWith(
    caches.match(event.request, { ignoreSearch: true }).then(
      (hit) =>
        hit ??
        fetch(event.request).catch(() =>
          // Offline: a page load gets the cached shell; with no shell cached, a network error.
          event.request.mode === 'navigate' ? caches.match('./index.html').then((page) => page ?? Response.error()) : Response.error(),
        ),
    ),
  );
});
