// One wall, built for a fast walk with one hand: a compact header, seal points grouped by face,
// points already passed or not applicable folded to one line, "pass the rest of this face" after a
// confirmation that lists what it will tick, and a docked "next unchecked" that moves on to the next
// wall when this one is done. Findings sit under their seal point and in the list below.
import { h, replace } from "../dom.js";
import { enqueue, findingsOf, pointsOf } from "../store.js";
import { soon } from "../sync.js";
import { dims } from "../units.js";
import { auditPanel, kindLabel } from "./audit.js";
import { problemNote, problemsFor } from "./problems.js";

const STATUS_TEXT = { unchecked: "Not checked", pass: "Pass", defect: "Defect", na: "Not applicable" };
const FOLDED = new Set(["pass", "na"]);

export function faceText(wall, face) {
  if (face === "a") return wall.face_a_label;
  if (face === "b") return wall.face_b_label;
  return "Through the wall";
}

export function findingRow(state, f) {
  const wall = state.wallsById.get(f.wall);
  return h("li", {},
    h("a", { class: `finding-row state-${f.status}`, href: `#/j/${state.job.id}/f/${f.client_id}`, "data-finding": f.client_id },
      h("span", { class: "row-title" }, kindLabel(state, f.kind)),
      h("span", { class: "row-sub" }, [dims(state, f), faceText(wall, f.face), f.trade].filter(Boolean).join(" · ")),
      f.note ? h("span", { class: "row-note" }, f.note) : null,
      h("span", { class: "chips" },
        h("span", { class: `chip status-${f.status}` }, statusLabel(state, f.status)),
        f.local ? h("span", { class: "chip info" }, "not sent") : null)));
}

export function statusLabel(state, status) {
  const hit = state.choices.finding_status.find(([v]) => v === status);
  return hit ? hit[1] : status;
}

/** The sections of a wall's checklist: face A, through the wall, face B (each with its points). */
export function sections(state, wall) {
  const named = (letter, label) => (!label || label.trim().toLowerCase() === `face ${letter}`.toLowerCase()
    ? `Face ${letter}` : `Face ${letter} · ${label}`);
  const groups = [
    { face: "a", title: named("A", wall.face_a_label), short: "face A", points: [] },
    { face: "through", title: "Through the wall", short: "the through-wall checks", points: [] },
    { face: "b", title: named("B", wall.face_b_label), short: "face B", points: [] },
  ];
  for (const p of pointsOf(state, wall.id)) {
    (groups.find((g) => g.face === p.face) || groups[1]).points.push(p);
  }
  return groups.filter((g) => g.points.length);
}

/** The next wall (in the walls list order, wrapping) that still has an unchecked seal point. */
export function nextWallToWalk(state, wall) {
  const walls = state.walls;
  const at = walls.findIndex((w) => w.id === wall.id);
  for (let i = 1; i < walls.length; i += 1) {
    const w = walls[(at + i) % walls.length];
    if (pointsOf(state, w.id).some((p) => p.status === "unchecked")) return w;
  }
  return null;
}

/** Scroll to the first unchecked point below the top of the screen (wrapping to the first one). */
function jumpToNext(root) {
  const top = (document.querySelector(".walk-top")?.getBoundingClientRect().bottom || 0) + 12;
  const open = [...root.querySelectorAll("[data-points] [data-point][data-status='unchecked']")];
  const target = open.find((el) => el.getBoundingClientRect().top > top + 4) || open[0];
  if (!target) return;
  window.scrollTo({ top: window.scrollY + target.getBoundingClientRect().top - top, behavior: "instant" });
  target.querySelector("[data-act='pass']")?.focus({ preventScroll: true });
  target.classList.add("flash");
  setTimeout(() => target.classList.remove("flash"), 700);
}

function pointDetails(state, p) {
  const caution = p.caution && state.bundle.cautions[p.caution];
  return h("div", { class: "seal-more", id: `more-${p.id}` },
    p.correct ? h("p", {}, h("strong", {}, "Correct: "), p.correct) : null,
    p.usual_defect ? h("p", {}, h("strong", {}, "Usual defect: "), p.usual_defect) : null,
    caution ? h("p", { class: "seal-caution-text" }, h("strong", {}, `⚠ ${caution.title}. `), caution.text) : null);
}

/** The cautions of this wall's seal points, once, near the top: titles at a glance, full text on a tap. */
function cautionsBlock(state, points) {
  const keys = [...new Set(points.map((p) => p.caution).filter((k) => k && state.bundle.cautions[k]))];
  if (!keys.length) return null;
  const list = keys.map((k) => state.bundle.cautions[k]);
  return h("details", { class: "wall-cautions", "data-wall-cautions": keys.length },
    h("summary", {}, h("span", { "aria-hidden": "true" }, "⚠ "), list.map((c) => c.title).join(" · ")),
    h("ul", {}, list.map((c) => h("li", {}, h("strong", {}, `${c.title}. `), c.text))),
    h("p", { class: "hint" }, "Marked ⚠ on the seal points they apply to. Local codes and the authority having jurisdiction govern."));
}

export async function wallView(root, ctx) {
  const { state, route, ui } = ctx;
  const wall = state.wallsById.get(route.wall);
  if (!wall) return ctx.go(`#/j/${route.job}`);
  const type = state.types.get(wall.wall_type);
  ctx.setTitle(`Wall ${wall.tag}`);
  ctx.back(`#/j/${route.job}`, "walls");
  if (ui.wall !== wall.id) Object.assign(ui, { wall: wall.id, expanded: new Set(), more: new Set(), confirm: null });
  const inspector = state.me.role === "inspector";
  const findings = findingsOf(state, wall.id);
  const all = pointsOf(state, wall.id);
  const rerender = () => wallView(root, ctx);

  const tick = (point, status) => async () => {
    const next = point.status === status ? "unchecked" : status;
    ui.expanded.delete(point.id);
    await enqueue(state.job.id, "seal_point.status", { seal_point: point.id, status: next }, point.version);
    soon(state.job.id);
  };

  const pointItem = (p) => {
    const label = p.label;
    const caution = p.caution && state.bundle.cautions[p.caution];
    const trouble = problemsFor(state, (t) => t.point === p.id);
    const own = findings.filter((f) => f.seal_point === p.id);
    if (FOLDED.has(p.status) && !ui.expanded.has(p.id) && !trouble.length) {
      return h("li", { class: `seal folded status-${p.status}`, "data-point": p.id, "data-status": p.status },
        h("button", { type: "button", class: "fold-line", "data-expand": p.id, "aria-expanded": "false",
          "aria-label": `${label}: ${STATUS_TEXT[p.status]}. Show its buttons`,
          onclick: () => { ui.expanded.add(p.id); rerender(); } },
          h("span", { class: "mark", "aria-hidden": "true" }),
          h("span", { class: "fold-label" }, label),
          h("span", { class: "fold-status" }, STATUS_TEXT[p.status])));
    }
    const more = ui.more.has(p.id);
    return h("li", { class: `seal status-${p.status}`, "data-point": p.id, "data-status": p.status },
      h("button", { type: "button", class: "seal-head", "aria-expanded": String(more), "aria-controls": `more-${p.id}`,
        "data-more": p.id, onclick: () => { (more ? ui.more.delete(p.id) : ui.more.add(p.id)); rerender(); } },
        p.status === "unchecked" ? null : h("span", { class: "mark", "aria-hidden": "true" }),
        h("span", { class: "seal-text" },
          h("span", { class: "seal-label" }, label,
            caution ? h("span", { class: "seal-warn", title: caution.title }, " ⚠", h("span", { class: "visually-hidden" }, ` ${caution.title}`)) : null),
          p.status === "unchecked" ? null : h("span", { class: "seal-sub" }, h("strong", {}, STATUS_TEXT[p.status] || p.status)),
          h("span", { class: "more-sign" }, more ? "less ▴" : "what to check ▾"))),
      more ? pointDetails(state, p) : null,
      own.length ? h("ul", { class: "point-findings" }, own.map((f) => h("li", {},
        h("a", { href: `#/j/${state.job.id}/f/${f.client_id}`, "data-point-finding": f.client_id },
          `${kindLabel(state, f.kind)}${dims(state, f) ? ` · ${dims(state, f)}` : ""}`,
          h("span", { class: `chip status-${f.status}` }, statusLabel(state, f.status)))))) : null,
      trouble.map((pr) => problemNote(state, pr, pr.kind === "finding.create" && inspector
        ? h("a", { class: "button primary", href: `#/j/${state.job.id}/w/${wall.id}/new/${p.id}`, "data-retry": pr.op_id,
          onclick: () => { ui.retry = pr.op_id; } }, "Record again") : null)),
      inspector ? h("div", { class: "seal-actions", role: "group", "aria-label": `${label}: record` },
        h("button", { type: "button", class: "pass", "aria-pressed": String(p.status === "pass"),
          "aria-label": `Pass: ${label}`, "data-act": "pass", onclick: tick(p, "pass") }, "✓"),
        h("button", { type: "button", class: "na", "aria-pressed": String(p.status === "na"),
          "aria-label": `Not applicable: ${label}`, "data-act": "na", onclick: tick(p, "na") }, "N/A"),
        h("a", { class: "button defect", href: `#/j/${state.job.id}/w/${wall.id}/new/${p.id}`,
          "aria-label": `Record a defect: ${label}`, "data-act": "defect" }, own.length ? "+1" : "Defect")) : null);
  };

  const sectionBlock = (g) => {
    const left = g.points.filter((p) => p.status === "unchecked");
    const done = g.points.length - left.length;
    const confirming = ui.confirm === g.face && left.length > 0;
    const passRest = async () => {
      ui.confirm = null;
      for (const p of left) {
        await enqueue(state.job.id, "seal_point.status", { seal_point: p.id, status: "pass" }, p.version);
      }
      soon(state.job.id);
    };
    return h("section", { class: "face-block", "data-face": g.face, "aria-labelledby": `face-${g.face}` },
      h("div", { class: "face-head" },
        h("h2", { id: `face-${g.face}` }, g.title, h("span", { class: "face-count" }, ` ${done}/${g.points.length}`)),
        inspector && left.length && !confirming ? h("button", { type: "button", class: "pass-rest", "data-pass-rest": g.face,
          onclick: () => { ui.confirm = g.face; rerender(); } }, `Pass the rest (${left.length})`) : null),
      confirming ? h("div", { class: "confirm", role: "group", "aria-labelledby": `confirm-${g.face}`, "data-confirm": g.face },
        h("p", { id: `confirm-${g.face}` }, h("strong", {}, `Pass these ${left.length} of ${g.short}?`),
          " Only unchecked points are ticked; the others keep what you recorded."),
        h("ul", { "data-confirm-list": "" }, left.map((p) => h("li", { "data-confirm-point": p.id }, p.label))),
        h("div", { class: "form-actions" },
          h("button", { type: "button", "data-cancel-pass-rest": "", onclick: () => { ui.confirm = null; rerender(); } }, "Cancel"),
          h("button", { type: "button", class: "primary", "data-confirm-pass-rest": g.face, onclick: passRest },
            `Pass ${left.length}`))) : null,
      h("ul", { class: "seals" }, g.points.map(pointItem)));
  };

  const checked = all.filter((p) => p.status !== "unchecked").length;
  const unchecked = all.length - checked;
  const facts = [wall.location, `level ${wall.level}`, type ? type.code : null,
    `${wall.length} × ${wall.height} ${state.job.symbols.size}`].filter(Boolean).join(" · ");
  replace(root,
    h("header", { class: "wall-head" },
      h("h1", { tabindex: "-1" }, `Wall ${wall.tag}`,
        wall.fire_rated ? h("span", { class: "chip warn" }, "fire-rated") : null),
      h("p", { class: "meta" }, facts),
      inspector && all.length ? h("div", { class: "progress-line", "data-progress": `${checked}/${all.length}` },
        h("span", {}, `${checked} of ${all.length} checked`),
        h("progress", { max: all.length, value: checked, "aria-hidden": "true" })) : null),
    cautionsBlock(state, all),
    auditPanel(state, wall, findings),
    inspector ? h("div", { "data-points": "" }, sections(state, wall).map(sectionBlock)) : null,
    h("h2", { class: "findings-h" }, `Findings (${findings.length})`),
    findings.length ? h("ul", { class: "rows", "data-findings": "" }, findings.map((f) => findingRow(state, f)))
      : h("p", { class: "empty" }, inspector ? "No finding on this wall yet." : "Nothing for your trade here."),
    wall.fire_rated ? h("p", { class: "cautions" },
      "Fire-rated wall: acoustical sealant is not a firestop. Penetrations and joints need the listed firestop system; local codes and the authority having jurisdiction govern.") : null);

  // Back from recording a defect: the screen opens at that seal point, not at the top of the wall.
  if (ui.focusPoint) {
    const id = ui.focusPoint;
    ui.focusPoint = null;
    requestAnimationFrame(() => {
      const el = root.querySelector(`[data-point='${id}']`);
      if (el) el.scrollIntoView({ block: "start" });
    });
  }
  if (!inspector) return;
  const nextWall = unchecked ? null : nextWallToWalk(state, wall);
  ctx.dock(unchecked
    ? h("button", { type: "button", class: "next-unchecked primary", "data-next-unchecked": unchecked,
      onclick: () => jumpToNext(root) }, "Next unchecked ↓", h("span", { class: "left" }, `${unchecked} left`))
    : nextWall
      ? h("a", { class: "button next-unchecked primary", href: `#/j/${state.job.id}/w/${nextWall.id}`, "data-next-wall": nextWall.tag },
        "Wall done · next: ", nextWall.tag, " →")
      : h("a", { class: "button next-unchecked", href: `#/j/${state.job.id}`, "data-all-walked": "" }, "Every wall is checked · back to walls"));
}
