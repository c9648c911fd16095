// Sealwalk service worker. One version constant; the app shell is precached from the hashed static
// URLs named in the walk's shell page; pages are network-first with an offline fallback.
const BUILD = "walk-2026-3";
// A deploy may register the worker as /sw.js?build=<id>; the id joins the version so caches follow it.
const BUILD_ID = new URL(self.location.href).searchParams.get("build");
const VERSION = BUILD_ID ? `${BUILD}+${BUILD_ID}` : BUILD;
const PREFIX = "sealwalk-";
const SHELL_CACHE = `${PREFIX}shell-${VERSION}`;
const PAGES_CACHE = `${PREFIX}pages-${VERSION}`;
// Kept across versions: photos do not change. The walk fills and bounds it (photocache.js); this
// worker only reads it, so nothing lands there without the walk's size bookkeeping.
// One per signed-in user (account.js), so the prefix is what this worker knows.
const PHOTOS_PREFIX = `${PREFIX}photos-`;
const SHELL_URL = "/walk/";

async function precache() {
  const cache = await caches.open(SHELL_CACHE);
  const resp = await fetch(SHELL_URL, { cache: "reload", credentials: "same-origin" });
  if (!resp.ok || resp.redirected) throw new Error(`shell page answered ${resp.status}`);
  const html = await resp.clone().text();
  const urls = new Set();
  for (const m of html.matchAll(/(?:href|src)="(\/static\/[^"]+)"/g)) urls.add(m[1]);
  urls.add("/manifest.webmanifest");
  await cache.addAll([...urls].map((u) => new Request(u, { cache: "reload" })));
  await cache.put(SHELL_URL, resp);
}

self.addEventListener("install", (event) => {
  event.waitUntil(precache());
  // No skipWaiting here: a new version waits until the user accepts it (see "skip-waiting").
});

self.addEventListener("activate", (event) => {
  event.waitUntil((async () => {
    const keep = new Set([SHELL_CACHE, PAGES_CACHE]);
    for (const name of await caches.keys()) {
      if (name.startsWith(PREFIX) && !keep.has(name) && !name.startsWith(PHOTOS_PREFIX)) await caches.delete(name);
    }
    await self.clients.claim();
    for (const client of await self.clients.matchAll({ type: "window" })) {
      client.postMessage({ type: "ready", version: VERSION });
    }
  })());
});

self.addEventListener("message", (event) => {
  if (event.data && event.data.type === "skip-waiting") self.skipWaiting();
  if (event.data && event.data.type === "version") event.source?.postMessage({ type: "version", version: VERSION });
});

async function networkFirstPage(request) {
  const cache = await caches.open(PAGES_CACHE);
  try {
    const resp = await fetch(request);
    if (resp.ok && !resp.redirected && resp.type === "basic") {
      const url = new URL(request.url);
      if (url.pathname === SHELL_URL) await (await caches.open(SHELL_CACHE)).put(SHELL_URL, resp.clone());
      else await cache.put(request, resp.clone());
    }
    return resp;
  } catch (err) {
    const url = new URL(request.url);
    const shell = await caches.open(SHELL_CACHE);
    const hit = (url.pathname === SHELL_URL && (await shell.match(SHELL_URL))) || (await cache.match(request));
    // Offline fallback: the walk itself, which works from IndexedDB.
    return hit || (await shell.match(SHELL_URL)) || Response.error();
  }
}

async function cacheFirst(request, cacheName) {
  const cache = await caches.open(cacheName);
  const hit = await cache.match(request);
  if (hit) return hit;
  const resp = await fetch(request);
  if (resp.ok && resp.type === "basic") await cache.put(request, resp.clone());
  return resp;
}

async function cachedPhoto(request) {
  for (const name of await caches.keys()) {
    if (!name.startsWith(PHOTOS_PREFIX)) continue;
    const hit = await (await caches.open(name)).match(request.url);
    if (hit) return hit;
  }
  return fetch(request);
}

self.addEventListener("fetch", (event) => {
  const { request } = event;
  if (request.method !== "GET") return;
  const url = new URL(request.url);
  if (url.origin !== self.location.origin) return;
  if (request.mode === "navigate") {
    event.respondWith(networkFirstPage(request));
  } else if (url.pathname.startsWith("/static/") || url.pathname === "/manifest.webmanifest") {
    event.respondWith(cacheFirst(request, SHELL_CACHE));
  } else if (/^\/jobs\/\d+\/photos\/[0-9a-f-]+\/(thumb|image)$/.test(url.pathname)) {
    event.respondWith(cachedPhoto(request));
  }
  // /api/ is never cached here: the walk keeps its data in IndexedDB.
});

self.addEventListener("sync", (event) => {
  if (event.tag !== "walk-outbox") return;
  event.waitUntil((async () => {
    for (const client of await self.clients.matchAll({ type: "window" })) client.postMessage({ type: "sync" });
  })());
});
