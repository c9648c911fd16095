// Photos of a job kept on the phone for offline use: every thumbnail when the job is taken offline
// (and after each sync), full images on request. One Cache Storage cache shared with the service
// worker, which answers photo URLs from it; a small index in IndexedDB keeps the total under
// MAX_BYTES (oldest out first) and knows which job each photo belongs to, so removing a job purges it.
import { photoCacheName } from "./account.js";
import * as db from "./db.js";

export const CACHE = photoCacheName();
export const MAX_BYTES = 50e6; // a phone's share for photos; the oldest go first past it
const INDEX = "photo-cache";
const PARALLEL = 4;
const running = new Map(); // job -> promise, so two callers share one download

async function readIndex() {
  return db.meta(INDEX, []);
}

/** The full-size image URL of a bundle photo (the bundle may name it; otherwise it sits beside the thumbnail). */
export function fullUrl(photo) {
  return photo.image_url || String(photo.thumbnail_url).replace(/\/thumb$/, "/image");
}

/** The bound in bytes: MAX_BYTES, unless this phone was given another (meta "photo-cache-max"). */
export async function limit() {
  return Number(await db.meta("photo-cache-max", MAX_BYTES)) || MAX_BYTES;
}

async function evict(cache, idx) {
  idx.sort((a, b) => a.at.localeCompare(b.at));
  let total = idx.reduce((s, e) => s + e.bytes, 0);
  const most = await limit();
  while (total > most && idx.length) {
    const old = idx.shift();
    total -= old.bytes;
    await cache.delete(old.url);
  }
  return idx;
}

async function store(job, urls, onProgress) {
  const cache = await caches.open(CACHE);
  const idx = await readIndex();
  const have = new Set(idx.map((e) => e.url));
  const todo = [];
  for (const url of urls) if (!have.has(url) || !(await cache.match(url))) todo.push(url);
  let done = 0;
  const total = todo.length;
  const added = [];
  const again = [];
  const one = async (url) => {
    const resp = await fetch(url, { credentials: "same-origin" });
    if (!resp.ok) throw new Error(String(resp.status));
    const blob = await resp.blob();
    await cache.put(url, new Response(blob, { headers: { "Content-Type": blob.type || "image/jpeg" } }));
    added.push({ url, job, bytes: blob.size, at: new Date().toISOString() });
  };
  const next = async () => {
    for (let url = todo.shift(); url; url = todo.shift()) {
      try {
        await one(url);
        done += 1;
        onProgress(done, total);
      } catch {
        again.push(url);
      }
    }
  };
  await Promise.all(Array.from({ length: PARALLEL }, next));
  // A weak signal drops some of several requests at once: the misses get one more try, one at a time.
  let failed = 0;
  for (const url of again) {
    try {
      await one(url);
      done += 1;
      onProgress(done, total);
    } catch {
      failed += 1;
    }
  }
  const fresh = await readIndex(); // another tab may have written meanwhile
  const byUrl = new Map(fresh.map((e) => [e.url, e]));
  for (const e of added) byUrl.set(e.url, e);
  await db.setMeta(INDEX, await evict(cache, [...byUrl.values()]));
  return { fetched: added.length, failed };
}

/** Cache the thumbnail of every photo in the job's bundle; drop cached photos the bundle no longer has. */
export function cacheThumbs(job, photos, onProgress = () => {}) {
  if (!("caches" in self)) return Promise.resolve({ fetched: 0, failed: 0 });
  if (running.has(job)) return running.get(job);
  const task = (async () => {
    const keep = new Set();
    for (const p of photos) keep.add(p.thumbnail_url).add(fullUrl(p));
    const idx = await readIndex();
    const gone = idx.filter((e) => e.job === job && !keep.has(e.url));
    if (gone.length) {
      const cache = await caches.open(CACHE);
      for (const e of gone) await cache.delete(e.url);
      await db.setMeta(INDEX, idx.filter((e) => !gone.includes(e)));
    }
    return store(job, photos.map((p) => p.thumbnail_url), onProgress);
  })().finally(() => running.delete(job));
  running.set(job, task);
  return task;
}

/** Cache the full images of ``photos`` (asked for by the user after seeing their total size). */
export function cacheFull(job, photos, onProgress = () => {}) {
  return store(job, photos.map(fullUrl), onProgress);
}

/** Bytes cached for one job (or all jobs), split into thumbnails and full images, and how many of each. */
export async function usage(job = null) {
  const out = { thumbs: 0, full: 0, thumbBytes: 0, fullBytes: 0, total: 0 };
  for (const e of await readIndex()) {
    out.total += e.bytes;
    if (job !== null && e.job !== job) continue;
    if (e.url.endsWith("/thumb")) { out.thumbs += 1; out.thumbBytes += e.bytes; } else { out.full += 1; out.fullBytes += e.bytes; }
  }
  return out;
}

/** Which of ``urls`` are on the phone. */
export async function cachedUrls() {
  return new Set((await readIndex()).map((e) => e.url));
}

/** A cached photo as an object URL, or null (the caller shows the thumbnail or says it is not here). */
export async function cachedBlobUrl(url) {
  if (!("caches" in self)) return null;
  const hit = await (await caches.open(CACHE)).match(url);
  return hit ? URL.createObjectURL(await hit.blob()) : null;
}

/** Forget every photo of a job (the job was removed from the phone). */
export async function purgeJob(job) {
  if ("caches" in self) {
    // By address as well as by index: a download still running when the job was removed may have
    // stored a photo the index does not list yet.
    const cache = await caches.open(CACHE);
    const prefix = `/jobs/${job}/photos/`;
    for (const req of await cache.keys()) if (new URL(req.url).pathname.startsWith(prefix)) await cache.delete(req);
  }
  await db.setMeta(INDEX, (await readIndex()).filter((e) => e.job !== job));
}
