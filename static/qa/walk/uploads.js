// Resumable photo upload: open a session, send chunks at the server's offset, finish.
// A cut-off upload asks the server where its copy ends and carries on from there.
import * as db from "./db.js";
import { request, HttpError } from "./net.js";

export const CHUNK = 256 * 1024;
const progress = new Map(); // photo id -> {sent, total, name}
const listeners = new Set();

export function onProgress(fn) {
  listeners.add(fn);
}

function report(photo, sent) {
  progress.set(photo.id, { sent, total: photo.size });
  for (const fn of listeners) fn(progress);
}

export function currentProgress() {
  return progress;
}

async function uploadOne(job, photo) {
  const base = `/api/jobs/${job}/uploads/`;
  const opened = await request("POST", base, {
    json: {
      id: photo.id, finding: photo.finding, wall: photo.finding ? undefined : photo.wall, purpose: photo.purpose,
      total_bytes: photo.size, sha256: photo.sha256, captured_at: photo.captured_at,
    },
  });
  let offset = opened.data.offset;
  report(photo, opened.data.done ? photo.size : offset);
  if (!opened.data.done) {
    while (offset < photo.size) {
      const chunk = photo.blob.slice(offset, offset + CHUNK);
      try {
        const r = await request("PUT", `${base}${photo.id}/?offset=${offset}`, {
          body: chunk, headers: { "Content-Type": "application/octet-stream" },
        });
        offset = r.data.offset;
      } catch (err) {
        if (err instanceof HttpError && err.status === 409 && err.body && Number.isInteger(err.body.expected)) {
          offset = err.body.expected; // the server has more (or less) than we thought: go on from there
        } else {
          throw err;
        }
      }
      await db.put("photos", { ...photo, offset });
      report(photo, offset);
    }
    await request("POST", `${base}${photo.id}/finish/`);
  }
  await db.put("photos", { ...photo, offset: photo.size, state: "done" });
  report(photo, photo.size);
}

/** Upload every waiting photo of the job whose finding the server already has. Returns the count sent. */
export async function uploadAll(job, knownFindings) {
  const waiting = (await db.byJob("photos", job)).filter((p) => p.state !== "done");
  let sent = 0;
  for (const photo of waiting) {
    if (photo.finding && !knownFindings.has(photo.finding)) continue; // its finding is not synced yet
    await uploadOne(job, photo);
    sent += 1;
  }
  progress.clear();
  return sent;
}
