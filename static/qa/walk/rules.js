// Rules the walk's forms share with the server. They come in the job's bundle from their one source
// on the server (choices.SIZE_RULES, choices.STATUS_GROUPS); the walk keeps no copy of its own, and the
// server checks every change again when it arrives.

/** ``{sizes, required}`` for a kind of defect; a bundle without the table shows every size, none required. */
export function sizeRule(bundle, kind) {
  const row = bundle && bundle.size_rules && bundle.size_rules[kind];
  if (row) return { sizes: row.sizes, required: row.required };
  return { sizes: ["width", "length", "diameter", "area", "depth"], required: [] };
}

/** The statuses of a group ("open", "fixed", "verified"). */
export function statusGroup(bundle, name) {
  return (bundle && bundle.status_groups && bundle.status_groups[name]) || [];
}

/** Does the server take where along the wall a defect is? (see the finding form) */
export function hasPosition(bundle) {
  return Boolean(bundle && bundle.choices && bundle.choices.height_bands);
}
