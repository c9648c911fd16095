// One finding: its details and photos, and the steps the user's role allows (fix, verify, reopen, edit, remove).
import { h, replace, uuid } from "../dom.js";
import { addPhoto, enqueue, localPhotos } from "../store.js";
import { prepare } from "../photos.js";
import { soon } from "../sync.js";
import { kindLabel } from "./audit.js";
import { statusLabel } from "./wall.js";

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
  const canFix = (inspector || (me.role === "crew" && me.trade === f.trade)) && ["open", "reopened"].includes(f.status);
  const sym = state.job.symbols;
  ctx.setTitle(kindLabel(state, f.kind));
  ctx.back(`#/j/${route.job}/w/${f.wall}`, `wall ${wall.tag}`);

  const step = (kind, extra = {}) => async () => {
    await enqueue(state.job.id, kind, { finding: f.client_id, ...extra }, f.version);
    soon(state.job.id);
  };
  const facts = [
    ["Wall", `${wall.tag}${point ? ` · ${point.label}` : ""}`],
    ["Where", f.face === "a" ? wall.face_a_label : f.face === "b" ? wall.face_b_label : "Through the wall"],
    f.width != null ? ["Width", `${f.width} ${sym.gap}`] : null,
    f.length != null ? ["Length", `${f.length} ${sym.gap}`] : null,
    f.diameter != null ? ["Diameter", `${f.diameter} ${sym.gap}`] : null,
    f.depth != null ? ["Depth", `${f.depth} ${sym.gap}`] : null,
    f.area != null ? ["Area", `${f.area} ${sym.area}`] : null,
    ["How many", f.count || 1],
    ["Trade", f.trade],
    ["Status", statusLabel(state, f.status)],
    f.fix_note ? ["Fix note", f.fix_note] : null,
  ].filter(Boolean);

  const local = localPhotos(state, f.client_id);
  const serverPhotos = state.bundle.photos.filter((p) => p.finding === f.id && !local.some((l) => l.id === p.id));
  const photos = h("ul", { class: "thumbs", "data-photos": "" },
    local.map((p) => h("li", { "data-photo": p.id, "data-photo-state": p.state },
      h("img", { src: blobUrl(p), alt: `${p.purpose === "fix" ? "Fix" : "Defect"} photo on this phone`, width: 96, height: 96 }),
      h("span", { class: "photo-state" }, p.state === "done" ? "sent" : `waiting · ${Math.round((100 * (p.offset || 0)) / p.size)}%`))),
    serverPhotos.map((p) => h("li", { "data-photo": p.id, "data-photo-state": "server" },
      h("img", { src: p.thumbnail_url, alt: `${p.purpose === "fix" ? "Fix" : "Defect"} photo`, width: 96, height: 96 }))));

  let fixForm = null;
  if (canFix) {
    const note = h("textarea", { id: "fix-note", rows: "2", maxlength: "2000" });
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
      await step("finding.fix", { note: note.value.trim() })();
    });
  }

  replace(root,
    h("h1", { tabindex: "-1" }, kindLabel(state, f.kind)),
    h("p", { class: "chips" }, h("span", { class: `chip status-${f.status}`, "data-finding-status": f.status }, statusLabel(state, f.status)),
      f.local ? h("span", { class: "chip info" }, "not sent yet") : null),
    h("dl", { class: "facts" }, facts.map(([k, v]) => h("div", {}, h("dt", {}, k), h("dd", {}, String(v))))),
    f.note ? h("p", { class: "note" }, f.note) : null,
    h("h2", {}, "Photos"), local.length || serverPhotos.length ? photos : h("p", { class: "empty" }, "No photo yet."),
    fixForm,
    inspector ? h("div", { class: "form-actions wrap" },
      f.status === "fixed" ? h("button", { type: "button", class: "primary", "data-verify": "", onclick: step("finding.verify") }, "Verify fix") : null,
      ["fixed", "verified"].includes(f.status) ? h("button", { type: "button", "data-reopen": "", onclick: step("finding.reopen") }, "Reopen") : null,
      h("a", { class: "button", href: `#/j/${route.job}/f/${f.client_id}/edit`, "data-edit": "" }, "Edit"),
      h("button", { type: "button", class: "danger", "data-remove": "", onclick: async () => {
        if (!window.confirm("Remove this finding? It stays in the record as removed.")) return;
        await step("finding.remove")();
        ctx.go(`#/j/${route.job}/w/${f.wall}`);
      } }, "Remove")) : null);
}
