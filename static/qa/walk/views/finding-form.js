// The finding form: kind, size in the job's small units (mm and cm², or in and in²), face, where along
// the wall, count, trade, note and photos. A new finding starts from its seal point's template; photos
// are downscaled and kept on the phone. Every error shows beside the field it is about, including the
// server's answer to an earlier try ("Record again" / "Edit again").
import { h, replace, uuid, fmtNumber } from "../dom.js";
import { addPhoto, enqueue } from "../store.js";
import { prepare } from "../photos.js";
import { soon, dismissProblem } from "../sync.js";
import { sizeRule } from "../rules.js";
import { areaUnit, shown, toJob, unitOf } from "../units.js";
import { errorText, FIELD_TEXT } from "./problems.js";
import { positionFields, positionNote } from "./position.js";

const SIZE_TEXT = {
  width: "Gap width", length: "Length", diameter: "Diameter (pipe or hole)", depth: "Depth along the air path",
  area: "Area",
};
const NAMES = ["width", "length", "diameter", "depth", "area"];

function field(id, label, input, hint) {
  return h("div", { class: "field" }, h("label", { for: id }, label), input,
    hint ? h("span", { class: "hint", id: `${id}-hint` }, hint) : null,
    h("span", { class: "field-error", id: `${id}-error`, role: "alert" }));
}

export async function findingFormView(root, ctx) {
  const { state, route, ui } = ctx;
  const editing = route.name === "edit" ? state.findings.get(route.finding) : null;
  const point = editing ? state.points.get(editing.seal_point) : state.points.get(route.point);
  const wall = state.wallsById.get(editing ? editing.wall : route.wall);
  if (!wall) return ctx.go(`#/j/${route.job}`);
  // A try the server refused: start from what was sent, and show its errors beside the fields.
  const retry = ui.retry ? (state.problems || []).find((p) => p.op_id === ui.retry) : null;
  ui.retry = null;
  let start = editing || { ...(point ? point.prefill : { kind: "slit", face: "through", count: 1, trade: "drywall" }) };
  if (retry && retry.kind === "finding.create") start = { ...start, ...retry.payload };
  if (retry && retry.kind === "finding.update" && editing) start = { ...editing, ...retry.payload.changes };
  const back = editing ? `#/j/${route.job}/f/${editing.client_id}` : `#/j/${route.job}/w/${wall.id}`;
  ctx.setTitle(editing ? "Edit finding" : "New finding");
  ctx.back(back, editing ? "the finding" : `wall ${wall.tag}`);

  const kind = h("select", { id: "f-kind", name: "kind" },
    state.choices.gap_kinds.map(([v, label]) => h("option", { value: v, selected: v === start.kind }, label)));
  const sizes = {};
  const initial = {}; // what the form showed first, in screen units: unchanged text keeps the exact stored value
  for (const name of NAMES) {
    const s = shown(state, start.kind, name, start[name]);
    initial[name] = s ? String(s.value) : "";
    sizes[name] = h("div", { class: "field size", "data-size": name },
      h("label", { for: `f-${name}` }, SIZE_TEXT[name], " (", h("span", { "data-unit": name }, unitOf(state, start.kind, name)), ")"),
      h("input", { id: `f-${name}`, name, type: "number", inputmode: "decimal", step: "any", min: "0",
        value: initial[name], "aria-describedby": `f-${name}-error` }),
      h("span", { class: "field-error", id: `f-${name}-error`, role: "alert" }));
  }
  const faces = [["through", "Through the wall"], ["a", `Face A only (${wall.face_a_label})`], ["b", `Face B only (${wall.face_b_label})`]];
  const face = h("fieldset", { class: "choice" }, h("legend", {}, "Which face"),
    faces.map(([v, label]) => h("label", { class: "radio" },
      h("input", { type: "radio", name: "face", value: v, checked: v === (start.face || "through") }), label)));
  const position = positionFields(state, wall, start);
  const count = h("input", { id: "f-count", name: "count", type: "number", inputmode: "numeric", min: "1", max: "500",
    step: "1", value: start.count || 1, "aria-describedby": "f-count-error" });
  const trade = h("select", { id: "f-trade", name: "trade" },
    state.choices.trades.map(([v, label]) => h("option", { value: v, selected: v === start.trade }, label)));
  const note = h("textarea", { id: "f-note", name: "note", rows: "3", maxlength: "2000" }, start.note || "");
  const camera = h("input", { id: "f-camera", type: "file", accept: "image/*", capture: "environment", class: "visually-hidden", "data-photo-input": "camera" });
  const gallery = h("input", { id: "f-gallery", type: "file", accept: "image/*", multiple: true, class: "visually-hidden", "data-photo-input": "gallery" });
  const previews = h("ul", { class: "thumbs", "aria-label": "Photos to attach" });
  const photoStatus = h("p", { class: "hint", "aria-live": "polite" });
  const saveError = h("p", { class: "field-error", id: "f-save-error", role: "alert" });
  const pending = [];

  const addFiles = async (files) => {
    for (const file of files) {
      photoStatus.textContent = "Preparing photo…";
      try {
        const prepared = await prepare(file);
        pending.push(prepared);
        const url = URL.createObjectURL(prepared.blob);
        previews.append(h("li", {}, h("img", { src: url, alt: `Defect photo ${pending.length} to attach`, width: 96, height: 96 }),
          h("span", { class: "photo-label defect" }, "Defect")));
        photoStatus.textContent = `${pending.length} photo${pending.length === 1 ? "" : "s"} ready (${prepared.width} × ${prepared.height} px)`;
      } catch {
        photoStatus.textContent = "That file could not be read as a photo.";
      }
    }
  };
  camera.addEventListener("change", () => addFiles([...camera.files]));
  gallery.addEventListener("change", () => addFiles([...gallery.files]));

  let shownKind = kind.value;
  const showSizes = () => {
    const rule = sizeRule(state.bundle, kind.value);
    for (const [name, el] of Object.entries(sizes)) el.hidden = !rule.sizes.includes(name);
    // An area typed for one kind keeps its meaning when the kind changes to one counted in other units.
    const before = areaUnit(state, shownKind);
    const after = areaUnit(state, kind.value);
    const input = sizes.area.querySelector("input");
    if (before.factor !== after.factor && input.value.trim() !== "" && Number(input.value) > 0) {
      input.value = fmtNumber((Number(input.value) * after.factor) / before.factor, 4);
    }
    sizes.area.querySelector("[data-unit]").textContent = after.sym;
    shownKind = kind.value;
  };
  kind.addEventListener("change", showSizes);
  showSizes();

  const form = h("form", { class: "finding-form", novalidate: true, "data-finding-form": "" },
    h("h1", { tabindex: "-1" }, editing ? "Edit finding" : "New finding"),
    h("p", { class: "meta" }, `Wall ${wall.tag}`, point ? ` · ${point.label}` : ""),
    point && point.usual_defect && !editing ? h("p", { class: "hint" }, `Usual defect: ${point.usual_defect}`) : null,
    field("f-kind", "Kind of defect", kind),
    Object.values(sizes),
    face,
    position.block,
    field("f-count", "How many", count),
    field("f-trade", "Trade to fix it", trade),
    field("f-note", "Note", note),
    h("div", { class: "photo-buttons" },
      h("label", { for: "f-camera", class: "button" }, "📷 Take photo"), camera,
      h("label", { for: "f-gallery", class: "button" }, "Choose from gallery"), gallery),
    photoStatus, previews,
    saveError,
    h("div", { class: "form-actions" },
      h("a", { class: "button", href: back, onclick: () => { if (!editing && point) ui.focusPoint = point.id; } }, "Cancel"),
      h("button", { type: "submit", class: "primary", "data-save": "" }, editing ? "Save changes" : "Save finding")));

  const showError = (name, message) => {
    const el = document.getElementById(`f-${name}-error`);
    const target = el || saveError;
    target.textContent = message;
    const input = document.getElementById(`f-${name}`);
    if (input) input.setAttribute("aria-invalid", "true");
    (input || target).scrollIntoView({ block: "center" });
    input?.focus({ preventScroll: true });
  };

  if (retry) {
    // The server's answer, beside each field it names; the rest beside the save button.
    const rest = {};
    for (const [name, messages] of Object.entries(retry.errors || {})) {
      const el = form.querySelector(`#f-${name}-error`);
      const text = `${FIELD_TEXT[name] || name} ${[].concat(messages).join(", ")}.`;
      if (el) el.textContent = `Not accepted by the server: ${text}`;
      else rest[name] = messages;
    }
    if (Object.keys(rest).length) saveError.textContent = `Not accepted by the server: ${errorText(rest)}.`;
  }

  form.addEventListener("submit", async (event) => {
    event.preventDefault();
    for (const el of form.querySelectorAll(".field-error")) el.textContent = "";
    for (const el of form.querySelectorAll("[aria-invalid]")) el.removeAttribute("aria-invalid");
    const rule = sizeRule(state.bundle, kind.value);
    const data = { kind: kind.value, face: form.querySelector("input[name=face]:checked").value,
      count: Number(count.value || 1), trade: trade.value, note: note.value.trim() };
    let bad = null;
    for (const name of NAMES) {
      const raw = sizes[name].querySelector("input").value.trim();
      if (!rule.sizes.includes(name)) {
        data[name] = null;
      } else if (raw === "") {
        data[name] = null;
        if (rule.required.includes(name)) bad = bad || [name, `${SIZE_TEXT[name]} is needed for this kind of defect.`];
      } else if (!(Number(raw) > 0)) {
        bad = bad || [name, `${SIZE_TEXT[name]} must be a number greater than zero (${unitOf(state, data.kind, name)}).`];
      } else if (editing && raw === initial[name] && data.kind === editing.kind) {
        data[name] = editing[name]; // untouched: keep the stored value, not its rounded display
      } else {
        data[name] = toJob(state, data.kind, name, Number(raw));
      }
    }
    if (!Number.isInteger(data.count) || data.count < 1 || data.count > 500) {
      bad = bad || ["count", "How many must be a whole number from 1 to 500."];
    }
    const where = position.read();
    if (where.error) bad = bad || where.error;
    if (bad) {
      showError(bad[0], bad[1]);
      return;
    }
    if (position.structured) Object.assign(data, where.values);
    else data.note = positionNote(state, wall, where.values, data.note);
    if (retry) await dismissProblem(state.job.id, retry.op_id);
    let cid;
    if (editing) {
      cid = editing.client_id;
      const changes = {};
      for (const [k, v] of Object.entries(data)) if (editing[k] !== v && !(editing[k] == null && v == null)) changes[k] = v;
      if (Object.keys(changes).length) await enqueue(state.job.id, "finding.update", { finding: cid, changes }, editing.version);
    } else {
      cid = uuid();
      await enqueue(state.job.id, "finding.create", {
        client_id: cid, wall: wall.id, seal_point: point ? point.id : null, ...data, at_edge: Boolean(start.at_edge),
        device_time: new Date().toISOString(),
      });
    }
    for (const p of pending) {
      await addPhoto(state.job.id, { id: uuid(), wall: wall.id, finding: cid, purpose: "defect", blob: p.blob,
        size: p.size, sha256: p.sha256, width: p.width, height: p.height, captured_at: p.captured_at });
    }
    soon(state.job.id);
    if (!editing && point) ui.focusPoint = point.id;
    ctx.go(editing ? `#/j/${state.job.id}/f/${cid}` : `#/j/${state.job.id}/w/${wall.id}`);
  });
  replace(root, form);
}
