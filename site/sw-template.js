// Service worker of the Shakestill site: precaches every file the site ships,
// so that after one visit the page opens and computes with the network gone.
// build_scripts/build_site.py writes dist/site/sw.js from this template: it
// puts the file list and a hash of their contents in place of the two markers,
// so any change to any file makes a new cache name, and activating the new
// worker deletes the old caches whole (no mix of old and new files).

const FILES = [/* @FILES@ */];
const CACHE = "shakestill-" + "@HASH@";
const PREFIX = "shakestill-";
const SCOPE = new URL("./", self.location).pathname;

self.addEventListener("install", (event) => {
  event.waitUntil(
    caches.open(CACHE).then((cache) =>
      // cache: "reload" skips the HTTP cache, so a new version never precaches stale bytes.
      cache.addAll(FILES.map((file) => new Request(file, { cache: "reload" }))),
    ),
  );
});

self.addEventListener("activate", (event) => {
  event.waitUntil(
    (async () => {
      for (const name of await caches.keys()) {
        if (name.startsWith(PREFIX) && name !== CACHE) await caches.delete(name);
      }
      await self.clients.claim();
    })(),
  );
});

// The page may ask a waiting update to take over now (e.g. after the user agrees to reload).
self.addEventListener("message", (event) => {
  if (event.data && event.data.type === "skip-waiting") self.skipWaiting();
});

self.addEventListener("fetch", (event) => {
  const request = event.request;
  const url = new URL(request.url);
  if (request.method !== "GET" || url.origin !== self.location.origin) return;
  if (!url.pathname.startsWith(SCOPE)) return;
  event.respondWith(answer(request, url));
});

async function answer(request, url) {
  const cache = await caches.open(CACHE);
  // Any navigation to the page itself (with a query or a share link) opens the cached page.
  const isPage = request.mode === "navigate" &&
    (url.pathname === SCOPE || url.pathname === SCOPE + "index.html");
  const hit = await cache.match(isPage ? SCOPE + "index.html" : request, { ignoreSearch: true });
  return hit || fetch(request);
}
