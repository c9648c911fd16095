// Signing out on a phone that walked: changes not yet sent are named first; once everything is sent,
// the walk's data of this user (IndexedDB, cached photos and pages) is cleared so the next person on
// the phone starts empty. Unsent changes are never thrown away: they stay under this user's name,
// out of anyone else's sight, until this user signs in again and sends them.
import { dbName, photoCacheName, userId } from "./account.js";

async function waiting(name) {
  if (indexedDB.databases && !(await indexedDB.databases()).some((d) => d.name === name)) return { ops: 0, photos: 0 };
  const db = await new Promise((resolve, reject) => {
    const req = indexedDB.open(name);
    req.onsuccess = () => resolve(req.result);
    req.onerror = () => reject(req.error);
  });
  const count = (store, keep) => new Promise((resolve) => {
    if (!db.objectStoreNames.contains(store)) return resolve(0);
    const req = db.transaction(store).objectStore(store).getAll();
    req.onsuccess = () => resolve(req.result.filter(keep).length);
    req.onerror = () => resolve(0);
  });
  const ops = await count("outbox", (op) => op.state === "pending");
  const photos = await count("photos", (p) => p.state !== "done");
  db.close();
  return { ops, photos };
}

async function clear(name) {
  await new Promise((resolve) => {
    const req = indexedDB.deleteDatabase(name);
    req.onsuccess = req.onerror = req.onblocked = () => resolve();
  });
  if (window.caches) {
    await caches.delete(photoCacheName());
    for (const key of await caches.keys()) {
      if (key.startsWith("sealwalk-pages-")) await caches.delete(key); // pages shown to this user
    }
  }
}

for (const form of document.querySelectorAll("form[data-sign-out]")) {
  form.addEventListener("submit", async (event) => {
    if (form.dataset.cleared) return;
    event.preventDefault();
    const name = dbName(userId());
    let left = { ops: 0, photos: 0 };
    try {
      left = await waiting(name);
    } catch {
      left = { ops: 0, photos: 0 };
    }
    const note = form.querySelector("[data-sign-out-note]");
    if (left.ops || left.photos) {
      const parts = [];
      if (left.ops) parts.push(`${left.ops} change${left.ops === 1 ? "" : "s"}`);
      if (left.photos) parts.push(`${left.photos} photo${left.photos === 1 ? "" : "s"}`);
      const text = `${parts.join(" and ")} from the walk on this phone ${left.ops + left.photos === 1 ? "is" : "are"} not sent yet.`;
      if (note) note.textContent = `${text} Open the walk and sync before signing out.`;
      if (!window.confirm(`${text}\n\nSign out anyway? They stay on this phone, hidden from anyone else, until you sign in again and send them.`)) return;
    } else {
      await clear(name);
    }
    form.dataset.cleared = "1";
    form.submit();
  });
}
