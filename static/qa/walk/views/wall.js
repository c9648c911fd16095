// One wall: seal points with one-tap pass / not applicable / defect, its findings, its audit.
import { h, replace } from "../dom.js";
import { enqueue, findingsOf, pointsOf } from "../store.js";
import { soon } from "../sync.js";
import { auditPanel, kindLabel } from "./audit.js";

const STATUS_TEXT = { unchecked: "Not checked", pass: "Pass", defect: "Defect", na: "Not applicable" };

function faceText(wall, face) {
  if (face === "a") return wall.face_a_label;
  if (face === "b") return wall.face_b_label;
  return "Through the wall";
}

export function findingRow(state, f) {
  const wall = state.wallsById.get(f.wall);
  const sym = state.job.symbols;
  const dims = [
    f.width != null ? `${f.width} ${sym.gap} wide` : null,
    f.length != null ? `${f.length} ${sym.gap} long` : null,
    f.diameter != null ? `⌀ ${f.diameter} ${sym.gap}` : null,
    f.area != null ? `${f.area} ${sym.area}` : null,
    f.count > 1 ? `× ${f.count}` : null,
  ].filter(Boolean).join(", ");
  return h("li", {},
    h("a", { class: `finding-row state-${f.status}`, href: `#/j/${state.job.id}/f/${f.client_id}`, "data-finding": f.client_id },
      h("span", { class: "row-title" }, kindLabel(state, f.kind)),
      h("span", { class: "row-sub" }, [dims, faceText(wall, f.face), f.trade].filter(Boolean).join(" · ")),
      f.note ? h("span", { class: "row-note" }, f.note) : null,
      h("span", { class: "chips" },
        h("span", { class: `chip status-${f.status}` }, statusLabel(state, f.status)),
        f.local ? h("span", { class: "chip info" }, "not sent") : null)));
}

export function statusLabel(state, status) {
  const hit = state.choices.finding_status.find(([v]) => v === status);
  return hit ? hit[1] : status;
}

export async function wallView(root, ctx) {
  const { state, route } = ctx;
  const wall = state.wallsById.get(route.wall);
  if (!wall) return ctx.go(`#/j/${route.job}`);
  const type = state.types.get(wall.wall_type);
  ctx.setTitle(`Wall ${wall.tag}`);
  ctx.back(`#/j/${route.job}`, "walls");
  const inspector = state.me.role === "inspector";
  const findings = findingsOf(state, wall.id);

  const tick = (point, status) => async () => {
    const next = point.status === status ? "unchecked" : status;
    await enqueue(state.job.id, "seal_point.status", { seal_point: point.id, status: next }, point.version);
    soon(state.job.id);
  };
  const points = pointsOf(state, wall.id).map((p) => {
    const caution = p.caution && state.bundle.cautions[p.caution];
    const label = `${p.label}`;
    return h("li", { class: `seal status-${p.status}`, "data-point": p.id, "data-status": p.status },
      h("div", { class: "seal-head" },
        h("span", { class: "mark", "aria-hidden": "true" }),
        h("div", { class: "seal-text" },
          h("span", { class: "seal-label" }, label),
          h("span", { class: "seal-sub" }, `${faceText(wall, p.face)} · ${p.trade} · `,
            h("strong", {}, STATUS_TEXT[p.status] || p.status)),
          p.correct ? h("span", { class: "seal-correct" }, p.correct) : null,
          caution ? h("span", { class: "seal-caution" }, `⚠ ${caution.title}`) : null)),
      inspector ? h("div", { class: "seal-actions", role: "group", "aria-label": `${label}: record` },
        h("button", { type: "button", class: "pass", "aria-pressed": String(p.status === "pass"),
          "aria-label": `Pass: ${label}`, "data-act": "pass", onclick: tick(p, "pass") }, "✓ Pass"),
        h("button", { type: "button", class: "na", "aria-pressed": String(p.status === "na"),
          "aria-label": `Not applicable: ${label}`, "data-act": "na", onclick: tick(p, "na") }, "N/A"),
        h("a", { class: "button defect", href: `#/j/${state.job.id}/w/${wall.id}/new/${p.id}`,
          "aria-label": `Record a defect: ${label}`, "data-act": "defect" }, "+ Defect")) : null);
  });

  const checked = pointsOf(state, wall.id).filter((p) => p.status !== "unchecked").length;
  replace(root,
    h("h1", { tabindex: "-1" }, `Wall ${wall.tag}`),
    h("p", { class: "meta" }, [wall.location, `level ${wall.level}`, type ? `${type.code} ${type.name}` : null,
      `${wall.length} × ${wall.height} ${state.job.symbols.size}`].filter(Boolean).join(" · ")),
    h("p", { class: "faces" }, h("span", { class: "chip" }, `A: ${wall.face_a_label}`), " ",
      h("span", { class: "chip" }, `B: ${wall.face_b_label}`),
      wall.fire_rated ? h("span", { class: "chip warn" }, "fire-rated") : null),
    auditPanel(state, wall, findings),
    h("h2", {}, `Findings (${findings.length})`),
    findings.length ? h("ul", { class: "rows", "data-findings": "" }, findings.map((f) => findingRow(state, f)))
      : h("p", { class: "empty" }, inspector ? "No finding on this wall yet." : "Nothing for your trade here."),
    inspector ? [
      h("h2", {}, `Seal points (${checked}/${points.length} checked)`),
      h("ul", { class: "seals", "data-points": "" }, points),
    ] : null,
    wall.fire_rated ? h("p", { class: "cautions" },
      "Fire-rated wall: acoustical sealant is not a firestop. Penetrations and joints need the listed firestop system; local codes and the authority having jurisdiction govern.") : null);
}
