// Changes the server did not accept, shown beside the control that made them (a seal point's
// buttons, a finding's steps, the field of the form) rather than only in the sync bar.
import { h } from "../dom.js";
import { dismissProblem } from "../sync.js";

export const FIELD_TEXT = {
  width: "Gap width", length: "Length", diameter: "Diameter", depth: "Depth", area: "Area", count: "How many",
  kind: "Kind of defect", face: "Where", trade: "Trade", note: "Note", status: "Status", base_version: "Version",
  along: "Distance along the wall", along_from: "Measured from", height_band: "Height",
};
const ACTION_TEXT = {
  "seal_point.status": "Your tick", "finding.create": "Your defect record", "finding.update": "Your edit",
  "finding.fix": "Marking it fixed", "finding.verify": "Verifying the fix", "finding.reopen": "Reopening",
  "finding.remove": "Removing it", "conflict.resolve": "Your choice of version",
};

/** "Gap width must be at least 0.1 mm; Note …" from a ``{field: [messages]}`` answer. */
export function errorText(errors) {
  return Object.entries(errors || {}).map(([k, v]) => {
    const name = FIELD_TEXT[k] || (k === "non_field_errors" ? "" : k.replace(/_/g, " "));
    return `${name} ${[].concat(v).join(", ")}`.trim();
  }).join("; ");
}

/** Problems of this job that match ``test(target, problem)``. */
export function problemsFor(state, test) {
  return (state.problems || []).filter((p) => p.target && test(p.target, p));
}

/** One problem as a line beside its control, with what happened and a button to dismiss it. */
export function problemNote(state, problem, extra = null) {
  return h("div", { class: "inline-error", role: "alert", "data-problem": problem.op_id || "" },
    h("p", {}, `${ACTION_TEXT[problem.kind] || "A change"} was not accepted by the server: ${errorText(problem.errors)}.`),
    h("div", { class: "inline-actions" }, extra,
      h("button", { type: "button", "data-dismiss-problem": problem.op_id || "",
        onclick: () => dismissProblem(state.job.id, problem.op_id) }, "OK")));
}
