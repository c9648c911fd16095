// One finding: its details and photos, and the steps the user's role allows (fix, verify, reopen, edit, remove).
import { statusGroup } from "../rules.js";
import { h, replace, uuid } from "../dom.js";
import { addPhoto, enqueue, localPhotos } from "../store.js";
import { prepare } from "../photos.js";
import { soon } from "../sync.js";
import { kindLabel } from "./audit.js";
import { statusLabel } from "./wall.js";
import { text as sizeText } from "../units.js";
import { fullUrl } from "../photocache.js";
import { thumb } from "./viewer.js";
import { positionText } from "./position.js";
import { problemNote, problemsFor } from "./problems.js";

const urls = new Map(); // photo id -> object URL, so re-renders do not leak

function blobUrl(photo) {
  if (!urls.has(photo.id)) urls.set(photo.id, URL.createObjectURL(photo.blob));
  return urls.get(photo.id);
}

export async function findingView(root, ctx) {
  const { state, route } = ctx;
  const f = state.findings.get(route.finding);
  if (!f) return ctx.go(`#/j/${route.job}`);
  const wall = state.wallsById.get(f.wall);
  const point = state.points.get(f.seal_point);
  const me = state.me;
  const inspector = me.role === "inspector";
  const canFix = (inspector || (me.role === "crew" && me.trade === f.trade)) && statusGroup(state.bundle, "open").includes(f.status);
  ctx.setTitle(kindLabel(state, f.kind));
  ctx.back(`#/j/${route.job}/w/${f.wall}`, `wall ${wall.tag}`);

  const step = (kind, extra = {}) => async () => {
    await enqueue(state.job.id, kind, { finding: f.client_id, ...extra }, f.version);
    soon(state.job.id);
  };
  const size = (name) => sizeText(state, f.kind, name, f[name]);
  const facts = [
    ["Wall", `${wall.tag}${point ? ` · ${point.label}` : ""}`],
    ["Where", f.face === "a" ? wall.face_a_label : f.face === "b" ? wall.face_b_label : "Through the wall"],
    positionText(state, wall, f) ? ["Along the wall", positionText(state, wall, f)] : null,
    f.width != null ? ["Width", size("width")] : null,
    f.length != null ? ["Length", size("length")] : null,
    f.diameter != null ? ["Diameter", size("diameter")] : null,
    f.depth != null ? ["Depth", size("depth")] : null,
    f.area != null ? ["Area", size("area")] : null,
    ["How many", f.count || 1],
    ["Trade", f.trade],
    ["Status", statusLabel(state, f.status)],
    f.fix_note ? ["Fix note", f.fix_note] : null,
  ].filter(Boolean);

  // Photos on this phone (not sent yet, or sent and not yet in the bundle) and those from the server,
  // defect photos first; each opens full size in the viewer.
  const local = localPhotos(state, f.client_id);
  const serverPhotos = state.bundle.photos.filter((p) => (p.finding === f.id || p.finding === f.client_id)
    && !local.some((l) => l.id === p.id));
  const list = [
    ...local.map((p) => ({ id: p.id, purpose: p.purpose, src: blobUrl(p), full: blobUrl(p), bytes: p.size, local: true, state: p.state })),
    ...serverPhotos.map((p) => ({ id: p.id, purpose: p.purpose, src: p.thumbnail_url, full: fullUrl(p), bytes: p.bytes, server: p })),
  ].sort((a, b) => (a.purpose === "fix") - (b.purpose === "fix"));
  const photos = h("ul", { class: "thumbs", "data-photos": "" }, list.map((p, i) => thumb(p, list, i,
    p.local ? h("span", { class: "photo-state" }, p.state === "done" ? "sent"
      : `waiting · ${Math.round((100 * (local.find((l) => l.id === p.id).offset || 0)) / (p.bytes || 1))}%`) : null)));
  const trouble = problemsFor(state, (t) => t.finding === f.client_id);
  const troubleOf = (kinds) => trouble.filter((pr) => kinds.includes(pr.kind)).map((pr) => problemNote(state, pr,
    pr.kind === "finding.update" ? h("a", { class: "button primary", href: `#/j/${route.job}/f/${f.client_id}/edit`,
      onclick: () => { ctx.ui.retry = pr.op_id; } }, "Edit again") : null));

  let fixForm = null;
  if (canFix) {
    const drafts = (ctx.ui.drafts ||= {});
    const note = h("textarea", { id: "fix-note", rows: "2", maxlength: "2000", "data-keep-focus": "fix-note",
      oninput: (e) => { drafts[`fix:${f.client_id}`] = e.target.value; } }, drafts[`fix:${f.client_id}`] || "");
    const input = h("input", { id: "fix-photo", type: "file", accept: "image/*", capture: "environment", class: "visually-hidden" });
    const chosen = h("p", { class: "hint", "aria-live": "polite" }, "A photo of the fix helps the inspector check it.");
    let prepared = null;
    input.addEventListener("change", async () => {
      if (!input.files[0]) return;
      chosen.textContent = "Preparing photo…";
      prepared = await prepare(input.files[0]);
      chosen.textContent = `Photo ready (${prepared.width} × ${prepared.height} px).`;
    });
    fixForm = h("form", { class: "card fix-form", "data-fix-form": "" },
      h("h2", {}, "Report the fix"),
      h("label", { for: "fix-note" }, "What was done"), note,
      h("label", { for: "fix-photo", class: "button" }, "📷 Photo of the fix"), input, chosen,
      h("button", { type: "submit", class: "primary", "data-mark-fixed": "" }, "Mark fixed"));
    fixForm.addEventListener("submit", async (event) => {
      event.preventDefault();
      if (prepared) {
        await addPhoto(state.job.id, { id: uuid(), wall: f.wall, finding: f.client_id, purpose: "fix",
          blob: prepared.blob, size: prepared.size, sha256: prepared.sha256, width: prepared.width,
          height: prepared.height, captured_at: prepared.captured_at });
      }
      delete drafts[`fix:${f.client_id}`];
      await step("finding.fix", { note: note.value.trim() })();
    });
  }

  // Reopening says why: the crew reads the note. It is asked for beside the button, and required.
  let reopen = null;
  if (inspector && ["fixed", "verified"].includes(f.status)) {
    const drafts = (ctx.ui.drafts ||= {});
    const key = `reopen:${f.client_id}`;
    const asking = drafts[key] !== undefined;
    const error = h("span", { class: "field-error", id: "reopen-note-error", role: "alert" });
    if (!asking) {
      reopen = h("button", { type: "button", "data-reopen": "", onclick: () => { drafts[key] = ""; findingView(root, ctx); } }, "Reopen");
    } else {
      const note = h("textarea", { id: "reopen-note", rows: "3", maxlength: "2000", required: true, "data-keep-focus": "reopen-note",
        "aria-describedby": "reopen-note-error", oninput: (e) => { drafts[key] = e.target.value; } }, drafts[key]);
      reopen = h("form", { class: "card reopen-form", novalidate: true, "data-reopen-form": "" },
        h("label", { for: "reopen-note" }, "Why reopen? (the crew reads this)"), note, error,
        h("div", { class: "form-actions" },
          h("button", { type: "button", "data-cancel-reopen": "", onclick: () => { delete drafts[key]; findingView(root, ctx); } }, "Cancel"),
          h("button", { type: "submit", class: "primary", "data-confirm-reopen": "" }, "Reopen")));
      reopen.addEventListener("submit", async (event) => {
        event.preventDefault();
        const why = note.value.trim();
        if (!why) {
          error.textContent = "Write what is still wrong: the note is required to reopen.";
          note.setAttribute("aria-invalid", "true");
          note.focus();
          return;
        }
        delete drafts[key];
        await step("finding.reopen", { note: why })();
      });
    }
  }

  replace(root,
    h("h1", { tabindex: "-1" }, kindLabel(state, f.kind)),
    h("p", { class: "chips" }, h("span", { class: `chip status-${f.status}`, "data-finding-status": f.status }, statusLabel(state, f.status)),
      f.local ? h("span", { class: "chip info" }, "not sent yet") : null),
    troubleOf(["finding.create", "conflict.resolve"]),
    h("dl", { class: "facts" }, facts.map(([k, v]) => h("div", {}, h("dt", {}, k), h("dd", {}, String(v))))),
    f.note ? h("p", { class: "note" }, f.note) : null,
    h("h2", {}, "Photos"), list.length ? photos : h("p", { class: "empty" }, "No photo yet."),
    fixForm, troubleOf(["finding.fix"]),
    inspector ? [
      troubleOf(["finding.verify", "finding.reopen", "finding.update", "finding.remove"]),
      reopen && reopen.tagName === "FORM" ? reopen : null,
      h("div", { class: "form-actions wrap" },
        f.status === "fixed" ? h("button", { type: "button", class: "primary", "data-verify": "", onclick: step("finding.verify") }, "Verify fix") : null,
        reopen && reopen.tagName !== "FORM" ? reopen : null,
        h("a", { class: "button", href: `#/j/${route.job}/f/${f.client_id}/edit`, "data-edit": "" }, "Edit"),
        h("button", { type: "button", class: "danger", "data-remove": "", onclick: async () => {
          if (!window.confirm("Remove this finding? It stays in the record as removed.")) return;
          await step("finding.remove")();
          ctx.go(`#/j/${route.job}/w/${f.wall}`);
        } }, "Remove"))] : null);
}
