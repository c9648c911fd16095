// The finding form: kind, size in the job's units, face, count, trade, note and photos.
// A new finding starts from its seal point's template; photos are downscaled and kept on the phone.
import { h, replace, uuid } from "../dom.js";
import { addPhoto, enqueue } from "../store.js";
import { prepare } from "../photos.js";
import { soon } from "../sync.js";

// Which sizes each kind of defect needs (mirrors the server's geometry rules).
const SIZES = {
  slit: ["width", "length", "depth"],
  hole: ["diameter", "depth"],
  ring: ["width", "diameter", "depth"],
  open_area: ["area", "depth"],
  back_to_back: ["area", "depth"],
  bridge: ["length"],
  missing_insulation: ["area"],
  channel_short: ["area"],
  missing_layer: ["area"],
};
const REQUIRED = {
  slit: ["width", "length"], hole: ["diameter"], ring: ["width", "diameter"], open_area: ["area"],
  back_to_back: ["area"], bridge: [], missing_insulation: ["area"], channel_short: ["area"], missing_layer: ["area"],
};
const SIZE_TEXT = {
  width: "Gap width", length: "Length", diameter: "Diameter (pipe or hole)", depth: "Depth along the air path",
  area: "Area",
};

function field(id, label, input, hint) {
  return h("div", { class: "field" }, h("label", { for: id }, label), input,
    hint ? h("span", { class: "hint", id: `${id}-hint` }, hint) : null,
    h("span", { class: "field-error", id: `${id}-error`, role: "alert" }));
}

export async function findingFormView(root, ctx) {
  const { state, route } = ctx;
  const editing = route.name === "edit" ? state.findings.get(route.finding) : null;
  const point = editing ? state.points.get(editing.seal_point) : state.points.get(route.point);
  const wall = state.wallsById.get(editing ? editing.wall : route.wall);
  if (!wall) return ctx.go(`#/j/${route.job}`);
  const start = editing || { ...(point ? point.prefill : { kind: "slit", face: "through", count: 1, trade: "drywall" }) };
  const sym = state.job.symbols;
  ctx.setTitle(editing ? "Edit finding" : "New finding");
  ctx.back(editing ? `#/j/${route.job}/f/${editing.client_id}` : `#/j/${route.job}/w/${wall.id}`, editing ? "the finding" : `wall ${wall.tag}`);

  const kind = h("select", { id: "f-kind", name: "kind" },
    state.choices.gap_kinds.map(([v, label]) => h("option", { value: v, selected: v === start.kind }, label)));
  const sizes = {};
  for (const name of ["width", "length", "diameter", "depth", "area"]) {
    const unit = name === "area" ? sym.area : sym.gap;
    sizes[name] = h("div", { class: "field size", "data-size": name },
      h("label", { for: `f-${name}` }, `${SIZE_TEXT[name]} (${unit})`),
      h("input", { id: `f-${name}`, name, type: "number", inputmode: "decimal", step: "any", min: "0",
        value: start[name] ?? "", "aria-describedby": `f-${name}-error` }),
      h("span", { class: "field-error", id: `f-${name}-error`, role: "alert" }));
  }
  const faces = [["through", "Through the wall"], ["a", `Face A only (${wall.face_a_label})`], ["b", `Face B only (${wall.face_b_label})`]];
  const face = h("fieldset", { class: "choice" }, h("legend", {}, "Where"),
    faces.map(([v, label]) => h("label", { class: "radio" },
      h("input", { type: "radio", name: "face", value: v, checked: v === (start.face || "through") }), label)));
  const count = h("input", { id: "f-count", name: "count", type: "number", inputmode: "numeric", min: "1", max: "500",
    step: "1", value: start.count || 1 });
  const trade = h("select", { id: "f-trade", name: "trade" },
    state.choices.trades.map(([v, label]) => h("option", { value: v, selected: v === start.trade }, label)));
  const note = h("textarea", { id: "f-note", name: "note", rows: "3", maxlength: "2000" }, start.note || "");
  const camera = h("input", { id: "f-camera", type: "file", accept: "image/*", capture: "environment", class: "visually-hidden", "data-photo-input": "camera" });
  const gallery = h("input", { id: "f-gallery", type: "file", accept: "image/*", multiple: true, class: "visually-hidden", "data-photo-input": "gallery" });
  const previews = h("ul", { class: "thumbs", "aria-label": "Photos to attach" });
  const photoStatus = h("p", { class: "hint", "aria-live": "polite" });
  const pending = [];

  const addFiles = async (files) => {
    for (const file of files) {
      photoStatus.textContent = "Preparing photo…";
      try {
        const prepared = await prepare(file);
        pending.push(prepared);
        const url = URL.createObjectURL(prepared.blob);
        previews.append(h("li", {}, h("img", { src: url, alt: `Photo ${pending.length} to attach`, width: 96, height: 96 })));
        photoStatus.textContent = `${pending.length} photo${pending.length === 1 ? "" : "s"} ready (${prepared.width} × ${prepared.height} px)`;
      } catch {
        photoStatus.textContent = "That file could not be read as a photo.";
      }
    }
  };
  camera.addEventListener("change", () => addFiles([...camera.files]));
  gallery.addEventListener("change", () => addFiles([...gallery.files]));

  const showSizes = () => {
    for (const [name, el] of Object.entries(sizes)) el.hidden = !SIZES[kind.value].includes(name);
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
    field("f-count", "How many", count),
    field("f-trade", "Trade to fix it", trade),
    field("f-note", "Note", note),
    h("div", { class: "photo-buttons" },
      h("label", { for: "f-camera", class: "button" }, "📷 Take photo"), camera,
      h("label", { for: "f-gallery", class: "button" }, "Choose from gallery"), gallery),
    photoStatus, previews,
    h("div", { class: "form-actions" },
      h("a", { class: "button", href: ctx.route.name === "edit" ? `#/j/${route.job}/f/${editing.client_id}` : `#/j/${route.job}/w/${wall.id}` }, "Cancel"),
      h("button", { type: "submit", class: "primary", "data-save": "" }, editing ? "Save changes" : "Save finding")));

  form.addEventListener("submit", async (event) => {
    event.preventDefault();
    for (const el of form.querySelectorAll(".field-error")) el.textContent = "";
    const data = { kind: kind.value, face: form.querySelector("input[name=face]:checked").value,
      count: Number(count.value || 1), trade: trade.value, note: note.value.trim() };
    let bad = null;
    for (const name of SIZES[data.kind]) {
      const raw = sizes[name].querySelector("input").value.trim();
      if (raw === "") {
        data[name] = null;
        if (REQUIRED[data.kind].includes(name)) bad = bad || [name, "is needed for this kind of defect"];
      } else if (!(Number(raw) > 0)) {
        bad = bad || [name, "must be a number greater than zero"];
      } else {
        data[name] = Number(raw);
      }
    }
    for (const name of Object.keys(sizes)) if (!SIZES[data.kind].includes(name)) data[name] = null;
    if (!Number.isInteger(data.count) || data.count < 1 || data.count > 500) bad = bad || ["count", "must be a whole number from 1 to 500"];
    if (bad) {
      const el = document.getElementById(`f-${bad[0]}-error`);
      if (el) el.textContent = `${SIZE_TEXT[bad[0]] || "How many"} ${bad[1]}.`;
      document.getElementById(`f-${bad[0]}`)?.focus();
      return;
    }
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
    ctx.go(editing ? `#/j/${state.job.id}/f/${cid}` : `#/j/${state.job.id}/w/${wall.id}`);
  });
  replace(root, form);
}
