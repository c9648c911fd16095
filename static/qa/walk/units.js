// Sizes as people on site say them: gaps in mm or in, small areas (a back-box, an open flute) in cm² or
// in², areas of a wall region (a missing batt, a missing layer) in m² or ft². The bundle and the sync
// speak the job's units (mm / m², in / ft²); this module converts at the edge of the screen only.
import { fmtNumber } from "./dom.js";

// From the job's area unit to the small one: 1 m² = 10 000 cm² (exact); 1 ft² = 144 in² (exact).
const SMALL = { metric: ["cm²", 1e4], imperial: ["in²", 144] };
// Kinds whose area is a patch of the wall rather than a hole in it.
const REGION_KINDS = new Set(["missing_insulation", "channel_short", "missing_layer"]);

/** The unit a finding's area is typed and shown in: ``{sym, factor}`` (shown = bundle value × factor). */
export function areaUnit(state, kind) {
  const sym = state.job.symbols;
  if (REGION_KINDS.has(kind)) return { sym: sym.area, factor: 1 };
  const [small, factor] = SMALL[state.job.units] || SMALL.metric;
  return { sym: sym.small_area || small, factor };
}

/** A length or area for the screen (``name`` is width, length, diameter, depth or area). */
export function shown(state, kind, name, value) {
  if (value === null || value === undefined || value === "") return null;
  if (name === "area") {
    const u = areaUnit(state, kind);
    return { value: Number(fmtNumber(Number(value) * u.factor, u.factor === 1 ? 3 : 1)), sym: u.sym };
  }
  return { value: Number(fmtNumber(Number(value), 2)), sym: state.job.symbols.gap };
}

export function text(state, kind, name, value) {
  const s = shown(state, kind, name, value);
  return s ? `${s.value} ${s.sym}` : null;
}

/** A typed value back into the job's units for the bundle and the sync. */
export function toJob(state, kind, name, typed) {
  if (name !== "area") return typed;
  const u = areaUnit(state, kind);
  return u.factor === 1 ? typed : typed / u.factor;
}

/** The unit label of an input. */
export function unitOf(state, kind, name) {
  return name === "area" ? areaUnit(state, kind).sym : state.job.symbols.gap;
}

/** One line of a finding's sizes, e.g. "3 mm wide, 2700 mm long" or "12 cm² × 2". */
export function dims(state, f) {
  const t = (name) => text(state, f.kind, name, f[name]);
  return [
    f.width != null ? `${t("width")} wide` : null,
    f.length != null ? `${t("length")} long` : null,
    f.diameter != null ? `⌀ ${t("diameter")}` : null,
    f.area != null ? t("area") : null,
    f.count > 1 ? `× ${f.count}` : null,
  ].filter(Boolean).join(", ");
}
