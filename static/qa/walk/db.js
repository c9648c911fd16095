// IndexedDB: job bundles, the outbox of operations, photo blobs waiting to upload, small settings.
import { dbName } from "./account.js";

const NAME = dbName();
const VERSION = 1;
let opening = null;

export function open() {
  if (opening) return opening;
  opening = new Promise((resolve, reject) => {
    const req = indexedDB.open(NAME, VERSION);
    req.onupgradeneeded = () => {
      const db = req.result;
      db.createObjectStore("bundles", { keyPath: "job" });
      const outbox = db.createObjectStore("outbox", { keyPath: "op_id" });
      outbox.createIndex("job", "job");
      const photos = db.createObjectStore("photos", { keyPath: "id" });
      photos.createIndex("job", "job");
      db.createObjectStore("meta", { keyPath: "key" });
    };
    req.onsuccess = () => resolve(req.result);
    req.onerror = () => reject(req.error);
  });
  return opening;
}

function done(req) {
  return new Promise((resolve, reject) => {
    req.onsuccess = () => resolve(req.result);
    req.onerror = () => reject(req.error);
  });
}

async function store(name, mode = "readonly") {
  const db = await open();
  return db.transaction(name, mode).objectStore(name);
}

export async function get(name, key) {
  return done((await store(name)).get(key));
}

export async function put(name, value) {
  const db = await open();
  const tx = db.transaction(name, "readwrite");
  tx.objectStore(name).put(value);
  return new Promise((resolve, reject) => {
    tx.oncomplete = () => resolve(value);
    tx.onerror = () => reject(tx.error);
    tx.onabort = () => reject(tx.error);
  });
}

export async function putMany(name, values) {
  const db = await open();
  const tx = db.transaction(name, "readwrite");
  for (const value of values) tx.objectStore(name).put(value);
  return new Promise((resolve, reject) => {
    tx.oncomplete = () => resolve(values);
    tx.onerror = () => reject(tx.error);
  });
}

export async function del(name, key) {
  const db = await open();
  const tx = db.transaction(name, "readwrite");
  tx.objectStore(name).delete(key);
  return new Promise((resolve, reject) => {
    tx.oncomplete = () => resolve();
    tx.onerror = () => reject(tx.error);
  });
}

export async function byJob(name, job) {
  return done((await store(name)).index("job").getAll(job));
}

export async function all(name) {
  return done((await store(name)).getAll());
}

export async function meta(key, fallback = null) {
  const row = await get("meta", key);
  return row ? row.value : fallback;
}

export async function setMeta(key, value) {
  return put("meta", { key, value });
}

export async function deviceId() {
  let id = await meta("device_id");
  if (!id) {
    id = `walk-${Math.random().toString(36).slice(2, 10)}${Date.now().toString(36)}`;
    await setMeta("device_id", id);
  }
  return id;
}
