// Walls of a job: pick a level, search by tag or unit, open a wall.
import { h, replace } from "../dom.js";
import { statusGroup } from "../rules.js";
import { findingsOf, pointsOf } from "../store.js";

export async function wallsView(root, ctx) {
  const { state, ui } = ctx;
  ctx.setTitle(state.job.name);
  ctx.back("#/", "your jobs");
  const crew = state.me.role === "crew";
  const openStatuses = statusGroup(state.bundle, "open");
  const levels = [...new Set(state.walls.map((w) => w.level))].sort((a, b) => a.localeCompare(b, undefined, { numeric: true }));
  if (ui.level && !levels.includes(ui.level)) ui.level = null;
  const q = ui.search.trim().toLowerCase();
  let walls = state.walls.filter((w) => (!ui.level || w.level === ui.level)
    && (!q || w.tag.toLowerCase().includes(q) || (w.location || "").toLowerCase().includes(q)));
  const rows = [];
  for (const w of walls) {
    const points = pointsOf(state, w.id);
    const findings = findingsOf(state, w.id);
    const open = findings.filter((f) => openStatuses.includes(f.status)).length;
    if (crew && !findings.length) continue;
    const checked = points.filter((p) => p.status !== "unchecked").length;
    const local = findings.some((f) => f.local) || points.some((p) => p.pending);
    const v = crew ? null : state.bundle.verdicts?.[String(w.id)];
    const tone = v ? ` verdict-${v.tone}` : "";
    rows.push(h("li", {},
      h("a", { class: `wall-row${tone}${open ? " has-open" : ""}`, href: `#/j/${state.job.id}/w/${w.id}`, "data-wall": w.tag },
        h("span", { class: "row-title" }, w.tag, local ? h("span", { class: "chip info" }, "not sent") : null),
        h("span", { class: "row-sub" }, [w.location, `level ${w.level}`].filter(Boolean).join(" · ")),
        h("span", { class: "chips" },
          v ? verdictChip(v, local) : null,
          crew ? null : h("span", { class: "chip" }, `${checked}/${points.length} checked`),
          open ? h("span", { class: "chip warn" }, `${open} open`) : null,
          crew ? h("span", { class: "chip" }, `${findings.length} for ${state.me.trade}`) : null))));
  }
  const search = h("input", {
    type: "search", id: "wall-search", value: ui.search, placeholder: "e.g. 3-12 or 304",
    autocomplete: "off", "data-keep-focus": "wall-search", enterkeyhint: "search",
    oninput: (e) => { ui.search = e.target.value; wallsView(root, ctx).then(() => {
      const again = root.querySelector("#wall-search");
      again.focus();
      again.setSelectionRange(again.value.length, again.value.length);
    }); },
  });
  const levelButtons = [null, ...levels].map((lv) => h("button", {
    type: "button", class: "level", "aria-pressed": String(ui.level === lv), "data-level": lv ?? "all",
    onclick: () => { ui.level = lv; wallsView(root, ctx); },
  }, lv === null ? "All levels" : `Level ${lv}`));
  const conflicts = state.conflicts.filter((c) => !c.resolution).length;
  replace(root,
    h("h1", { tabindex: "-1" }, crew ? `Your ${state.me.trade} items` : "Walls"),
    conflicts && state.me.role === "inspector"
      ? h("a", { class: "banner warn", href: `#/j/${state.job.id}/conflicts` },
        `${conflicts} finding${conflicts === 1 ? " was" : "s were"} edited on two devices: choose which version to keep`)
      : null,
    h("div", { class: "levels", role: "group", "aria-label": "Level" }, levelButtons),
    h("label", { for: "wall-search", class: "search-label" }, "Find a wall by tag or unit"),
    search,
    h("p", { class: "count", "aria-live": "polite" }, `${rows.length} wall${rows.length === 1 ? "" : "s"}`),
    rows.length ? h("ul", { class: "rows", "data-wall-list": "" }, rows)
      : h("p", { class: "empty" }, crew ? "Nothing for your trade on these walls." : "No wall matches."));
}

// The wall's verdict as the desktop words it (qa/audit/verdicts.py, in the bundle): "Below target by 10"
// even when every point is checked and no finding is open (fixes not verified yet still cost). Changes
// made on this phone, or being counted on the server, are not in it yet: it is then the last known one.
function verdictChip(v, local) {
  const words = v.state === "below" && v.shortfall ? `${v.word} by ${v.shortfall}` : v.word;
  const known = local || v.recounting || !navigator.onLine;
  return h("span", { class: `chip verdict tone-${v.tone}${known ? " last-known" : ""}`, "data-verdict": v.state,
    title: v.meaning }, known ? `${words} · last known` : words);
}
