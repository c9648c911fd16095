// Jobs on this phone: take a job offline (its bundle and every photo's thumbnail, with progress), get
// the full photos on request (their total size shown first), remove a job and its photos from the phone.
import * as db from "../db.js";
import { h, replace, fmtTime } from "../dom.js";
import { fetchBundle, markSynced } from "../sync.js";
import { cacheFull, cacheThumbs, cachedUrls, fullUrl, purgeJob, usage, MAX_BYTES } from "../photocache.js";
import { changed } from "../store.js";

function hintedJobs() {
  const el = document.getElementById("walk-jobs");
  try {
    return el ? JSON.parse(el.textContent) : [];
  } catch {
    return [];
  }
}

export function kb(bytes) {
  return bytes > 1e6 ? `${(bytes / 1e6).toFixed(1)} MB` : `${Math.max(1, Math.round(bytes / 1e3))} kB`;
}

async function removeJob(id) {
  for (const op of await db.byJob("outbox", id)) await db.del("outbox", op.op_id);
  for (const p of await db.byJob("photos", id)) await db.del("photos", p.id);
  await db.del("bundles", id);
  for (const key of [`problems:${id}`, `last_sync:${id}`]) await db.del("meta", key);
  await purgeJob(id);
}

async function photosRow(id, b, online) {
  const photos = b.bundle.photos || [];
  if (!photos.length) return h("p", { class: "row-sub" }, "No photos in this job yet.");
  const have = await cachedUrls();
  const thumbs = photos.filter((p) => have.has(p.thumbnail_url)).length;
  const missing = photos.filter((p) => !have.has(fullUrl(p)));
  const size = missing.reduce((s, p) => s + (Number(p.bytes) || 0), 0);
  const line = h("p", { class: "row-sub", "data-photo-cache": id },
    `Photos: ${thumbs} of ${photos.length} small copies on this phone`,
    missing.length < photos.length ? `, ${photos.length - missing.length} full size` : "", ".");
  const note = h("p", { class: "field-error", role: "alert" });
  const full = missing.length ? h("button", {
    type: "button", disabled: !online, "data-get-full": id,
    "aria-describedby": `full-size-${id}`,
    onclick: async () => {
      full.disabled = true;
      note.textContent = "";
      const r = await cacheFull(id, missing, (done, total) => { full.textContent = `Getting full photos… ${done} of ${total}`; });
      if (r.failed) note.textContent = `${r.failed} full photo${r.failed === 1 ? "" : "s"} could not be fetched. Try again with better signal.`;
      changed({ job: id });
    },
  }, `Get full photos (${kb(size)})`) : null;
  return h("div", { class: "photo-cache" }, line,
    full ? h("p", { class: "hint", id: `full-size-${id}` },
      `${missing.length} full photo${missing.length === 1 ? "" : "s"}, ${kb(size)} in all. Photos on the phone are capped at ${kb(MAX_BYTES)}; the oldest make room first.`) : null,
    full, note);
}

export async function jobsView(root, ctx) {
  ctx.setTitle("Walk");
  ctx.back(null);
  const saved = new Map((await db.all("bundles")).map((b) => [b.job, b]));
  const jobs = new Map(hintedJobs().map((j) => [j.id, j.name]));
  for (const [id, b] of saved) jobs.set(id, b.bundle.job.name);
  const online = navigator.onLine;
  const items = [];
  for (const [id, name] of jobs.entries()) {
    const b = saved.get(id);
    const status = h("span", { class: "row-sub", "data-bundle-status": id },
      b ? `On this phone · ${kb(b.bytes)} · saved ${fmtTime(b.saved_at)}` : "Not on this phone yet");
    const bar = h("progress", { class: "bundle-progress", hidden: true, "aria-label": `Download of ${name}` });
    const error = h("p", { class: "field-error", role: "alert", "data-job-error": id });
    const take = h("button", {
      type: "button", class: b ? "" : "primary", disabled: !online, "data-take-offline": id,
      onclick: async () => {
        take.disabled = true;
        bar.hidden = false;
        error.textContent = "";
        status.textContent = "Downloading…";
        try {
          const bundle = await fetchBundle(id, (got, total) => {
            if (total) { bar.max = total; bar.value = got; }
            status.textContent = `Downloading… ${kb(got)}${total ? ` of ${kb(total)}` : ""}`;
          });
          await markSynced(id);
          if (bundle.photos && bundle.photos.length) {
            status.textContent = "Getting photos…";
            await cacheThumbs(id, bundle.photos, (done, total) => {
              bar.max = total; bar.value = done;
              status.textContent = `Getting photos… ${done} of ${total}`;
            });
          }
          ctx.go(`#/j/${id}`);
        } catch {
          status.textContent = b ? `On this phone · saved ${fmtTime(b.saved_at)}` : "Not on this phone yet";
          error.textContent = "Download failed. Check the signal and try again.";
          bar.hidden = true;
          take.disabled = false;
        }
      },
    }, b ? "Refresh" : "Take offline");
    const remove = b ? h("button", {
      type: "button", class: "danger", "data-remove-job": id,
      onclick: async () => {
        error.textContent = "";
        const unsent = (await db.byJob("outbox", id)).filter((op) => op.state === "pending").length
          + (await db.byJob("photos", id)).filter((p) => p.state !== "done").length;
        if (unsent) {
          error.textContent = `${unsent} change${unsent === 1 ? "" : "s"} or photo${unsent === 1 ? "" : "s"} not sent yet: sync before removing this job.`;
          return;
        }
        if (!window.confirm(`Remove ${name} and its photos from this phone? The record on the server stays.`)) return;
        await removeJob(id);
        jobsView(root, ctx);
      },
    }, "Remove from phone") : null;
    items.push(h("li", { class: "job-row" },
      h("div", { class: "job-text" }, h("span", { class: "row-title" }, name), status, bar),
      b ? await photosRow(id, b, online) : null,
      h("div", { class: "job-actions" },
        b ? h("a", { class: "button primary", href: `#/j/${id}`, "data-open-job": id }, "Open") : null, take, remove),
      error));
  }
  const used = await usage();
  replace(root,
    h("h1", { tabindex: "-1" }, "Your jobs"),
    h("p", { class: "lede" }, "Take a job offline before you walk: everything you record is kept on this phone and sent when there is signal."),
    items.length ? h("ul", { class: "rows" }, items)
      : h("p", { class: "empty" }, online ? "You are not a member of any job yet." : "No job is on this phone yet. Connect once to take a job offline."),
    used.total ? h("p", { class: "hint", "data-photo-usage": used.total }, `Photos on this phone: ${kb(used.total)} of ${kb(MAX_BYTES)}.`) : null);
}
