// Sync: send the outbox in order, upload waiting photos, refresh the bundle. Runs on app start, on
// reconnect, on demand and after each change; retries with back-off; Background Sync wakes it too.
import * as db from "./db.js";
import { request, HttpError } from "./net.js";
import { changed } from "./store.js";
import { uploadAll } from "./uploads.js";
import { cacheThumbs } from "./photocache.js";

const BATCH = 200;
let running = null;
let retryTimer = null;
let failures = 0;
let current = { job: null };
export const status = { state: "idle", error: "", nextTry: null };

function setStatus(state, error = "") {
  Object.assign(status, { state, error });
  changed({ sync: state });
}

export function watch(job) {
  current.job = job;
}

/** Download (or refresh) the job bundle; reports bytes read through ``onBytes``. */
export async function fetchBundle(job, onBytes = () => {}) {
  const saved = await db.get("bundles", job);
  const headers = { Accept: "application/json", "Cache-Control": "no-cache" };
  if (saved && saved.etag) headers["If-None-Match"] = saved.etag;
  const resp = await fetch(`/api/jobs/${job}/bundle/`, { headers, credentials: "same-origin", cache: "no-store" });
  if (resp.status === 304) return saved.bundle;
  if (!resp.ok) throw new HttpError(resp.status, null);
  const total = Number(resp.headers.get("Content-Length")) || 0;
  const reader = resp.body.getReader();
  const parts = [];
  let got = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    parts.push(value);
    got += value.length;
    onBytes(got, total);
  }
  const text = await new Blob(parts).text();
  const bundle = JSON.parse(text);
  await db.put("bundles", {
    job, bundle, etag: resp.headers.get("ETag"), bytes: got, saved_at: new Date().toISOString(),
  });
  return bundle;
}

/** What an operation was about: a seal point (a tick, a new defect at it) or a finding (by client id). */
export function targetOf(op) {
  const p = op.payload || {};
  if (op.kind === "seal_point.status") return { point: p.seal_point };
  if (op.kind === "finding.create") return { point: p.seal_point, wall: p.wall, finding: p.client_id };
  if (op.kind === "conflict.resolve") return { conflict: p.conflict };
  return { finding: p.finding };
}

/** Forget a problem the user has read (by the operation that caused it). */
export async function dismissProblem(job, opId) {
  const problems = await db.meta(`problems:${job}`, []);
  await db.setMeta(`problems:${job}`, problems.filter((p) => p.op_id !== opId));
  changed({ job });
}

/** Taking a job offline is a sync when nothing waits to be sent: the bar says so. */
export async function markSynced(job) {
  const waiting = (await db.byJob("outbox", job)).some((op) => op.state === "pending");
  if (!waiting) await db.setMeta(`last_sync:${job}`, new Date().toISOString());
}

async function sendOps(job) {
  const pending = (await db.byJob("outbox", job)).filter((op) => op.state === "pending").sort((a, b) => a.seq - b.seq);
  const problems = await db.meta(`problems:${job}`, []);
  for (let i = 0; i < pending.length; i += BATCH) {
    const batch = pending.slice(i, i + BATCH);
    const ops = batch.map(({ op_id, kind, base_version, payload, device_at }) => ({
      op_id, kind, base_version, payload, device_at,
    }));
    const { data } = await request("POST", `/api/jobs/${job}/sync/`, { json: { device_id: await db.deviceId(), ops } });
    const answers = new Map(data.results.map((r) => [r.op_id, r]));
    const updated = batch.map((op) => ({ ...op, state: "done", result: answers.get(op.op_id) || null }));
    for (const op of updated) {
      if (op.result && op.result.status === "rejected") {
        // Kept with what it was about, so the screen can show it beside the control that made it.
        problems.push({
          op_id: op.op_id, kind: op.kind, errors: op.result.errors, payload: op.payload, at: new Date().toISOString(),
          target: targetOf(op),
        });
      }
    }
    await db.putMany("outbox", updated);
  }
  await db.setMeta(`problems:${job}`, problems.slice(-20));
  return pending.length;
}

async function dropConfirmed(job) {
  // The refreshed bundle holds what the server accepted; conflicts and rejections are in it too.
  for (const op of await db.byJob("outbox", job)) {
    if (op.state === "done") await db.del("outbox", op.op_id);
  }
}

async function run(job) {
  setStatus("syncing");
  await sendOps(job);
  let bundle = await fetchBundle(job);
  await dropConfirmed(job);
  const known = new Set(bundle.findings.map((f) => f.client_id));
  changed({ job });
  const sent = await uploadAll(job, known);
  if (sent) bundle = await fetchBundle(job);
  const onServer = new Set(bundle.photos.map((p) => p.id));
  for (const photo of await db.byJob("photos", job)) {
    if (photo.state === "done" && onServer.has(photo.id)) await db.del("photos", photo.id);
  }
  await db.setMeta(`last_sync:${job}`, new Date().toISOString());
  // Thumbnails of photos new since the last sync, for offline use; a failure here is not a failed sync.
  cacheThumbs(job, bundle.photos).catch(() => {});
}

/** Sync one job now (joins a sync already running). Never throws; schedules a retry on failure. */
export function syncNow(job = current.job) {
  if (!job) return Promise.resolve(false);
  if (running) return running;
  if (!navigator.onLine) {
    setStatus("offline");
    return Promise.resolve(false);
  }
  clearTimeout(retryTimer);
  running = run(job)
    .then(() => {
      failures = 0;
      status.nextTry = null;
      setStatus("idle");
      return true;
    })
    .catch((err) => {
      failures += 1;
      const signedOut = err instanceof HttpError && (err.status === 401 || err.status === 403);
      const delay = Math.min(120000, 2000 * 2 ** Math.min(failures, 6)) * (0.75 + Math.random() / 2);
      status.nextTry = Date.now() + delay;
      retryTimer = setTimeout(() => syncNow(job), delay);
      setStatus("failed", signedOut ? "Signed out: sign in again to send your changes." : "Could not reach the server.");
      return false;
    })
    .finally(() => {
      running = null;
      changed({ job });
    });
  return running;
}

let debounce = null;
/** Called after each local change: sync soon when online, and ask for Background Sync. */
export function soon(job) {
  clearTimeout(debounce);
  debounce = setTimeout(() => syncNow(job), 800);
  navigator.serviceWorker?.ready
    .then((reg) => reg.sync && reg.sync.register("walk-outbox"))
    .catch(() => {});
}

export function start() {
  window.addEventListener("online", () => syncNow());
  window.addEventListener("offline", () => setStatus("offline"));
  navigator.serviceWorker?.addEventListener("message", (event) => {
    if (event.data && event.data.type === "sync") syncNow();
  });
  document.addEventListener("visibilitychange", () => {
    if (document.visibilityState === "visible") syncNow();
  });
}
