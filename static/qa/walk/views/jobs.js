// Jobs on this phone, and taking a job offline (download its bundle with progress).
import * as db from "../db.js";
import { h, replace, fmtTime } from "../dom.js";
import { fetchBundle } from "../sync.js";

function hintedJobs() {
  const el = document.getElementById("walk-jobs");
  try {
    return el ? JSON.parse(el.textContent) : [];
  } catch {
    return [];
  }
}

function kb(bytes) {
  return bytes > 1e6 ? `${(bytes / 1e6).toFixed(1)} MB` : `${Math.max(1, Math.round(bytes / 1e3))} kB`;
}

export async function jobsView(root, ctx) {
  ctx.setTitle("Walk");
  ctx.back(null);
  const saved = new Map((await db.all("bundles")).map((b) => [b.job, b]));
  const jobs = new Map(hintedJobs().map((j) => [j.id, j.name]));
  for (const [id, b] of saved) jobs.set(id, b.bundle.job.name);
  const online = navigator.onLine;
  const items = [...jobs.entries()].map(([id, name]) => {
    const b = saved.get(id);
    const status = h("span", { class: "row-sub", "data-bundle-status": id },
      b ? `On this phone · ${kb(b.bytes)} · saved ${fmtTime(b.saved_at)}` : "Not on this phone yet");
    const bar = h("progress", { class: "bundle-progress", hidden: true, "aria-label": `Download of ${name}` });
    const take = h("button", {
      type: "button", class: b ? "" : "primary", disabled: !online, "data-take-offline": id,
      onclick: async () => {
        take.disabled = true;
        bar.hidden = false;
        status.textContent = "Downloading…";
        try {
          await fetchBundle(id, (got, total) => {
            if (total) { bar.max = total; bar.value = got; }
            status.textContent = `Downloading… ${kb(got)}${total ? ` of ${kb(total)}` : ""}`;
          });
          ctx.go(`#/j/${id}`);
        } catch {
          status.textContent = "Download failed. Check the signal and try again.";
          take.disabled = false;
        }
      },
    }, b ? "Refresh" : "Take offline");
    return h("li", { class: "job-row" },
      h("div", { class: "job-text" }, h("span", { class: "row-title" }, name), status, bar),
      h("div", { class: "job-actions" },
        b ? h("a", { class: "button primary", href: `#/j/${id}`, "data-open-job": id }, "Open") : null, take));
  });
  replace(root,
    h("h1", { tabindex: "-1" }, "Your jobs"),
    h("p", { class: "lede" }, "Take a job offline before you walk: everything you record is kept on this phone and sent when there is signal."),
    items.length ? h("ul", { class: "rows" }, items)
      : h("p", { class: "empty" }, online ? "You are not a member of any job yet." : "No job is on this phone yet. Connect once to take a job offline."));
}
