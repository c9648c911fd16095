// The wall's leak audit from the bundle: designed vs as-found vs target and the fix-first order.
// Offline, or with changes the server has not rated yet, it is the last known audit, marked as such.
import { h } from "../dom.js";

const opened = new Set(); // walls whose audit panel the user opened

export function auditPanel(state, wall, findings) {
  const audit = state.audits && state.audits[String(wall.id)];
  if (!audit) return null;
  const name = audit.rating_name || (wall.rating_scheme || "stc").toUpperCase();
  const included = new Set(audit.includes || []);
  const missing = findings.filter((f) => f.local || !included.has(f.client_id));
  const stale = !navigator.onLine || missing.length > 0;
  const label = (cid) => {
    const f = state.findings.get(cid);
    const row = (audit.rows || []).find((r) => r.finding === cid);
    return (row && row.label) || (f ? kindLabel(state, f.kind) : "finding");
  };
  // The same words as the desktop, from the bundle's vocabulary (qa/audit/verdicts.py): "as found" is
  // every finding open, "current" counts only fixes the inspector verified.
  const words = wordsOf(state);
  const tone = (value) => (value != null && audit.target != null && value < audit.target ? " below" : "");
  const walked = audit.walked ?? audit.as_found;
  const facts = h("dl", { class: "ratings" },
    h("div", {}, h("dt", {}, words.ratings.designed), h("dd", {}, audit.designed ?? "—")),
    h("div", { class: `asfound${tone(walked)}` }, h("dt", {}, words.ratings.as_found), h("dd", {}, walked ?? "—")),
    h("div", { class: `current${tone(audit.as_found)}` }, h("dt", {}, words.ratings.current), h("dd", {}, audit.as_found ?? "—")),
    h("div", {}, h("dt", {}, words.ratings.target), h("dd", {}, audit.target ?? "none")));
  const order = (audit.order || []).map((cid, i) => {
    const alone = (audit.rows || []).find((r) => r.finding === cid)?.gain;
    const after = audit.after ? audit.after[i] : null;
    const before = i === 0 ? audit.as_found : audit.after ? audit.after[i - 1] : null;
    const inOrder = after != null && before != null ? after - before : null;
    return h("li", {}, label(cid),
      inOrder != null ? h("span", { class: "gain" }, ` +${inOrder} ${words.gains.in_order}`) : null,
      alone != null ? h("span", { class: "gain alone" }, ` (+${alone} ${words.gains.alone})`) : null,
      after != null ? h("span", { class: "after" }, ` → ${after}`) : null);
  });
  const open = opened.has(wall.id);
  const summary = audit.error ? `${name} leak audit`
    : `${name} leak audit · ${words.ratings.current.toLowerCase()} ${audit.as_found ?? "—"} · `
      + `${words.ratings.target.toLowerCase()} ${audit.target ?? "none"}`;
  const panel = h("details", { class: `audit${stale ? " stale" : ""}`, open, "data-audit": stale ? "stale" : "current" },
    h("summary", { id: "audit-h" }, summary, stale ? h("span", { class: "chip info" }, "last known") : null),
    stale ? h("p", { class: "stale-note", "data-audit-stale": "" },
      !navigator.onLine ? "Last known audit (out of date while offline)."
        : missing.some((f) => f.local) ? "Last known audit: it does not include changes made on this phone yet."
          : "Last known audit: the newest changes are being counted.") : null,
    audit.error ? h("p", { class: "muted" }, audit.error) : facts,
    audit.shortfall ? h("p", { class: "short" }, `${audit.shortfall} below target as found.`) : null,
    fieldLine(state, wall),
    order.length ? [h("h3", {}, "Fix first"), h("ol", { class: "fix-first" }, order)] : null,
    missing.length ? h("div", { class: "missing", "data-audit-missing": missing.length },
      h("p", {}, `Not in this audit (${missing.length}):`),
      h("ul", {}, missing.map((f) => h("li", {}, kindLabel(state, f.kind), f.note ? ` — ${f.note}` : "")))) : null,
    h("p", { class: "basis" }, "Laboratory-type estimate from the recorded gaps, not a field test."));
  // The screen is redrawn after every tick: keep the panel as the user left it.
  panel.addEventListener("toggle", () => (panel.open ? opened.add(wall.id) : opened.delete(wall.id)));
  return panel;
}

/** The predicted field rating now (flanking and rooms included), its margin and the latest test. */
function fieldLine(state, wall) {
  const f = state.bundle && state.bundle.field && state.bundle.field[String(wall.id)];
  if (!f || f.now == null) return null;
  const margin = f.margin == null ? null
    : h("span", { class: `chip ${f.margin < 0 ? "warn" : "ok"}`, "data-field-margin": f.margin },
      `${f.margin >= 0 ? "+" : ""}${f.margin} vs target ${f.target}${f.target_derived ? " (derived)" : ""}`);
  return h("div", { class: "field-line", "data-field-now": f.now },
    h("p", {}, h("strong", {}, "Field, predicted now: "), `${f.descriptor} ${f.now} `, margin,
      f.measured != null ? h("span", { class: "muted" }, ` · tested ${f.measured}`) : null),
    h("p", { class: "basis" }, state.bundle.field_caution || ""));
}

/** The bundle's words for ratings and gains (with the desktop's defaults for an older bundle). */
function wordsOf(state) {
  const v = (state.bundle && state.bundle.vocabulary) || {};
  const word = (group, key, fallback) => (v[group] && v[group][key] && v[group][key].word) || fallback;
  return {
    ratings: {
      designed: word("ratings", "designed", "Designed"),
      as_found: word("ratings", "as_found", "As found"),
      current: word("ratings", "current", "Current"),
      target: word("ratings", "target", "Target"),
    },
    gains: { in_order: word("gains", "in_order", "in order"), alone: word("gains", "alone", "alone") },
  };
}

export function kindLabel(state, kind) {
  const hit = state.choices.gap_kinds.find(([v]) => v === kind);
  return hit ? hit[1] : kind;
}
