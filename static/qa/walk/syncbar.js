// The always-visible sync bar: changes and photos waiting, last sync, conflicts, upload progress.
import { h, replace, fmtTime } from "./dom.js";
import { currentProgress, onProgress } from "./uploads.js";
import { errorText } from "./views/problems.js";

let lastCtx = null;

function plural(n, one, many) {
  return `${n} ${n === 1 ? one : many}`;
}

function progressRows() {
  const rows = [...currentProgress().entries()];
  if (!rows.length) return null;
  const total = rows.reduce((s, [, p]) => s + p.total, 0);
  const sent = rows.reduce((s, [, p]) => s + p.sent, 0);
  const pct = total ? Math.round((100 * sent) / total) : 0;
  return h("div", { class: "sync-progress", "data-upload-progress": "" },
    h("label", { class: "sync-progress-label" }, `Sending photos: ${pct}%`,
      h("progress", { max: total, value: sent, "aria-label": "All photos" })),
    rows.slice(0, 3).map(([id, p], i) => h("div", { class: "sync-photo" },
      `Photo ${i + 1}: ${Math.round((100 * p.sent) / (p.total || 1))}%`,
      h("progress", { max: p.total, value: p.sent, "aria-label": `Photo ${i + 1}`, "data-photo-progress": id }))));
}

export function renderSyncBar(bar, ctx) {
  lastCtx = ctx;
  const { state, sync } = ctx;
  const online = navigator.onLine;
  const conn = h("span", { class: `conn ${online ? "on" : "off"}`, "data-conn": online ? "online" : "offline" },
    online ? "Online" : "No signal");
  if (!state) {
    replace(bar, h("div", { class: "sync-line" }, conn, h("span", { class: "sync-note" },
      online ? "Pick a job to take it offline." : "Working offline.")));
    return;
  }
  const changes = state.pending.length;
  const photos = state.photos.filter((p) => p.state !== "done").length;
  const conflicts = state.conflicts.filter((c) => !c.resolution).length;
  const s = sync.status;
  // One line at 360 px: what waits (or "all sent"), when the last sync was, and the button.
  const waits = [changes ? plural(changes, "change", "changes") : null, photos ? plural(photos, "photo", "photos") : null]
    .filter(Boolean).join(" · ");
  const line = h("div", { class: "sync-line" },
    conn,
    h("span", { class: changes || photos ? "count wait" : "count", "data-changes-waiting": changes, "data-photos-waiting": photos },
      waits ? `${waits} waiting` : "All sent"),
    conflicts ? h("a", { class: "count conflict", href: `#/j/${state.job.id}/conflicts`, "data-conflicts": conflicts },
      plural(conflicts, "conflict", "conflicts")) : null,
    h("span", { class: "last", "data-last-sync": state.lastSync || "" },
      state.lastSync ? `synced ${fmtTime(state.lastSync)}` : "not synced"),
    h("button", {
      type: "button", class: "sync-now", "data-sync-now": "", disabled: !online || s.state === "syncing",
      onclick: () => sync.syncNow(state.job.id),
    }, s.state === "syncing" ? "Syncing…" : "Sync"));
  const extra = [];
  if (s.state === "failed") extra.push(h("p", { class: "sync-error", role: "alert" }, s.error, " Trying again soon."));
  if (state.problems.length) {
    extra.push(h("details", { class: "sync-problems" },
      h("summary", {}, plural(state.problems.length, "change was", "changes were"), " not accepted"),
      h("ul", {}, state.problems.map((p) => h("li", {}, `${p.kind}: `, errorText(p.errors)))),
      h("p", {}, "Each one is also shown beside what you changed.")));
  }
  replace(bar, line, progressRows(), extra);
}

onProgress(() => {
  if (lastCtx) renderSyncBar(document.querySelector("[data-syncbar]"), lastCtx);
});
