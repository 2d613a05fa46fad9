// Tidemark service worker: keeps the app shell in a cache so the app loads and works with the
// network gone after the first visit. The worksheet data itself lives in IndexedDB, not here.
// __CACHE__ and __SHELL__ are filled in by scripts/build.mjs (the cache name carries the bundle hash).
const CACHE = '__CACHE__';
const SHELL = '__SHELL__';

self.addEventListener('install', (event) => {
  event.waitUntil(caches.open(CACHE).then((c) => c.addAll(SHELL)).then(() => self.skipWaiting()));
});

self.addEventListener('activate', (event) => {
  event.waitUntil(
    caches
      .keys()
      .then((keys) => Promise.all(keys.filter((k) => k.startsWith('tidemark-') && k !== CACHE).map((k) => caches.delete(k))))
      .then(() => self.clients.claim()),
  );
});

// Cache first for the shell (same origin only); anything else goes to the network untouched.
self.addEventListener('fetch', (event) => {
  const url = new URL(event.request.url);
  if (event.request.method !== 'GET' || url.origin !== self.location.origin) return;
  event.respondWith(
    caches.match(event.request, { ignoreSearch: true }).then(
      (hit) =>
        hit ??
        fetch(event.request).catch(() =>
          event.request.mode === 'navigate' ? caches.match('./index.html') : Response.error(),
        ),
    ),
  );
});
