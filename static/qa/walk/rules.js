// Rules the walk shares with the server. The bundle carries them when the server provides them
// (``size_rules``: kind -> {sizes, required}; ``status_groups``: name -> statuses); the copies below
// are the fallback for an older bundle and must match the server's geometry rules.
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
const GROUPS = { open: ["open", "reopened"], fixed: ["fixed"], verified: ["verified"] };

function table(bundle) {
  return bundle.size_rules || bundle.gap_sizes || (bundle.choices && (bundle.choices.size_rules || bundle.choices.gap_sizes));
}

/** ``{sizes, required}`` for a kind of defect. */
export function sizeRule(bundle, kind) {
  const t = table(bundle);
  const row = t && t[kind];
  if (row && Array.isArray(row.sizes)) return { sizes: row.sizes, required: row.required || [] };
  if (row && Array.isArray(row)) return { sizes: row, required: REQUIRED[kind] || [] };
  return { sizes: SIZES[kind] || ["width", "length", "depth"], required: REQUIRED[kind] || [] };
}

/** The statuses of a group ("open", "fixed", "verified"). */
export function statusGroup(bundle, name) {
  const groups = bundle.status_groups || (bundle.choices && bundle.choices.status_groups);
  return (groups && groups[name]) || GROUPS[name] || [];
}

/** Does the server take where along the wall a defect is? (see the finding form) */
export function hasPosition(bundle) {
  return Boolean(bundle.choices && bundle.choices.height_bands);
}
