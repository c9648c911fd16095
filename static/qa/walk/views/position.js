// Where along the wall a defect is: a distance from a named end of the wall and low / middle / high.
// The server takes them as ``along`` (job size units), ``along_from`` ("start" | "end") and
// ``height_band`` ("low" | "middle" | "high") when its bundle lists ``choices.height_bands``; an older
// server gets the same words at the start of the note, so nothing the inspector typed is lost.
import { h, fmtNumber } from "../dom.js";
import { hasPosition } from "../rules.js";

const BANDS = [["low", "Low"], ["middle", "Middle"], ["high", "High"]];

export function endNames(wall) {
  const named = Array.isArray(wall.end_labels) && wall.end_labels.length === 2 ? wall.end_labels : null;
  return named || [`left end (seen from ${wall.face_a_label || "face A"})`, `right end (seen from ${wall.face_a_label || "face A"})`];
}

function bands(state) {
  return (state.choices.height_bands || BANDS);
}

/** "1.2 m from the left end (seen from Unit 201), low", or null when nothing was recorded. */
export function positionText(state, wall, f) {
  const parts = [];
  if (f.along != null && f.along !== "") {
    const end = endNames(wall)[f.along_from === "end" ? 1 : 0];
    parts.push(`${fmtNumber(f.along, 2)} ${state.job.symbols.size} from the ${end}`);
  }
  const band = bands(state).find(([v]) => v === f.height_band);
  if (band) parts.push(band[1].toLowerCase());
  return parts.length ? parts.join(", ") : null;
}

/** The position inputs of the finding form, and a reader that returns the values (or an error). */
export function positionFields(state, wall, start) {
  const [first, second] = endNames(wall);
  const along = h("input", { id: "f-along", name: "along", type: "number", inputmode: "decimal", step: "any", min: "0",
    value: start.along ?? "", "aria-describedby": "f-along-error" });
  const from = h("select", { id: "f-along_from", name: "along_from", "aria-label": "Measured from" },
    h("option", { value: "start", selected: start.along_from !== "end" }, `from the ${first}`),
    h("option", { value: "end", selected: start.along_from === "end" }, `from the ${second}`));
  const band = h("div", { class: "segmented", role: "radiogroup", "aria-label": "Height on the wall" },
    bands(state).map(([v, label]) => h("label", { class: "seg" },
      h("input", { type: "radio", name: "height_band", value: v, checked: start.height_band === v }), h("span", {}, label))));
  const block = h("fieldset", { class: "choice position", "data-position": "" },
    h("legend", {}, `Where along the wall (optional)`),
    h("div", { class: "along" },
      h("label", { for: "f-along" }, `Distance (${state.job.symbols.size})`), along, from),
    h("span", { class: "field-error", id: "f-along-error", role: "alert" }),
    band);
  const read = () => {
    const raw = along.value.trim();
    const checked = band.querySelector("input:checked");
    // Blank, not null, for the two choices: the server keeps "" for "not said".
    const out = { along: null, along_from: "", height_band: checked ? checked.value : "" };
    if (raw !== "") {
      const n = Number(raw);
      if (!(n >= 0)) return { error: ["along", "Distance along the wall must be a number of zero or more."] };
      if (wall.length && n > wall.length) {
        return { error: ["along", `Distance along the wall must be at most the wall's length, ${wall.length} ${state.job.symbols.size}.`] };
      }
      Object.assign(out, { along: n, along_from: from.value });
    }
    return { values: out };
  };
  return { block, read, structured: hasPosition(state.bundle) };
}

/** For a server without the position fields: the same words at the start of the note. */
export function positionNote(state, wall, values, note) {
  const text = positionText(state, wall, values);
  if (!text) return note;
  const line = `At ${text}.`;
  return note.startsWith(line) ? note : `${line}${note ? ` ${note}` : ""}`;
}
