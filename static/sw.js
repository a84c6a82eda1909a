// slipwise service worker: the page opens with no network.
//
// One VERSION; an explicit precache list; install waits until every file is cached; activate
// deletes the caches of older versions (the outbox lives in IndexedDB and is never touched here).
// API calls always go to the network; nothing with a status >= 400 is ever cached.

const VERSION = "1.0.32"; // raise with every change to a precached file
const CACHE = `slipwise-page-${VERSION}`;
const PRECACHE = [
  "/",
  "/css/slipwise.css",
  "/js/app.js",
  "/js/api.js",
  "/js/curve.js",
  "/js/dom.js",
  "/js/fields.js",
  "/js/fieldrules.js",
  "/js/history.js",
  "/fields.json",
  "/js/outbox.js",
  "/js/provisional.js",
  "/js/result.js",
  "/js/router.js",
  "/js/sending.js",
  "/js/sheet.js",
  "/js/shell.js",
  "/js/supervisor.js",
  "/js/technician.js",
  "/js/verdict.js",
  "/manifest.webmanifest",
  "/icons/slipwise.svg",
  "/icons/slipwise-192.png",
  "/icons/slipwise-512.png",
];
// Shipped but deliberately not precached: screens that need the network anyway (registering a motor,
// the supervisor's day log and site view);
// the page says so offline. (tests/test_page_files.py reads both lists.)
const NETWORK_ONLY = ["/js/register.js", "/js/sites.js", "/js/daylog.js"];

self.addEventListener("install", (event) => {
  event.waitUntil((async () => {
    const cache = await caches.open(CACHE);
    await cache.addAll(PRECACHE.map((url) => new Request(url, { cache: "reload" })));
    await self.skipWaiting();
  })());
});

self.addEventListener("activate", (event) => {
  event.waitUntil((async () => {
    const names = await caches.keys();
    await Promise.all(names.filter((n) => n.startsWith("slipwise-page-") && n !== CACHE).map((n) => caches.delete(n)));
    await self.clients.claim();
  })());
});

function cacheable(response) {
  return response && response.ok && response.status < 400 && response.type === "basic";
}

self.addEventListener("fetch", (event) => {
  const req = event.request;
  if (req.method !== "GET") return;
  const url = new URL(req.url);
  if (url.origin !== self.location.origin || url.pathname.startsWith("/api/")) return; // network only
  if (req.mode === "navigate") {
    // the page itself, from this version's cache (so page and modules always match)
    event.respondWith((async () => {
      const cache = await caches.open(CACHE);
      const cached = await cache.match("/");
      return cached || fetch(req);
    })());
    return;
  }
  event.respondWith((async () => {
    const cache = await caches.open(CACHE);
    const hit = await cache.match(req, { ignoreSearch: true });
    if (hit) return hit;
    const resp = await fetch(req);
    if (cacheable(resp)) await cache.put(req, resp.clone());
    return resp;
  })());
});

// Background Sync: the network is back; ask the open page to send its outbox (it holds the session).
self.addEventListener("sync", (event) => {
  if (event.tag !== "slipwise-outbox") return;
  event.waitUntil((async () => {
    const pages = await self.clients.matchAll({ type: "window" });
    for (const p of pages) p.postMessage({ type: "replay" });
  })());
});
