// Findings edited on two devices: the inspector picks which version to keep. Nothing was overwritten.
import { h, replace } from "../dom.js";
import { enqueue } from "../store.js";
import { soon } from "../sync.js";
import { kindLabel } from "./audit.js";

function describe(values, sym) {
  return Object.entries(values || {})
    .filter(([k]) => ["kind", "face", "width", "length", "diameter", "depth", "area", "count", "trade", "note"].includes(k))
    .map(([k, v]) => `${k}: ${v ?? "—"}${["width", "length", "diameter", "depth"].includes(k) && v != null ? ` ${sym.gap}` : ""}`);
}

export async function conflictsView(root, ctx) {
  const { state, route } = ctx;
  ctx.setTitle("Conflicts");
  ctx.back(`#/j/${route.job}`, "walls");
  const open = state.conflicts.filter((c) => !c.resolution);
  const sym = state.job.symbols;
  const resolve = (c, keep) => async () => {
    await enqueue(state.job.id, "conflict.resolve", { conflict: c.id, keep }, keep === "device" ? state.findings.get(c.finding)?.version : null);
    soon(state.job.id);
  };
  replace(root,
    h("h1", { tabindex: "-1" }, "Edited on two devices"),
    h("p", { class: "lede" }, "Each finding below was changed on another device after this change was made. Both versions are kept until you choose."),
    open.length ? h("ul", { class: "rows" }, open.map((c) => {
      const f = state.findings.get(c.finding);
      const device = c.device_version.removed ? ["remove the finding"] : describe(c.device_version.changes, sym);
      const server = describe(c.server_version, sym).filter((line) => device.some((d) => d.split(":")[0] === line.split(":")[0]) || c.device_version.removed);
      return h("li", { class: "card conflict", "data-conflict": c.id },
        h("h2", {}, f ? kindLabel(state, f.kind) : "Finding", f ? ` on wall ${state.wallsById.get(f.wall)?.tag ?? ""}` : ""),
        h("div", { class: "versions" },
          h("div", {}, h("h3", {}, `Now on the server (v${c.server_version.version})`), h("ul", {}, server.map((s) => h("li", {}, s)))),
          h("div", {}, h("h3", {}, `Sent by ${c.created_by}`), h("ul", {}, device.map((s) => h("li", {}, s))))),
        h("div", { class: "form-actions wrap" },
          h("button", { type: "button", "data-keep": "server", onclick: resolve(c, "server") }, "Keep server version"),
          h("button", { type: "button", class: "primary", "data-keep": "device", onclick: resolve(c, "device") }, "Use the sent version")));
    })) : h("p", { class: "empty" }, "No conflict to settle."));
}
