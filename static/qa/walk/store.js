// The walk's view of a job: the last bundle from the server with the device's own operations laid
// over it. Applying an operation here bumps versions exactly as the server will, so a chain of
// offline edits carries matching base versions.
import * as db from "./db.js";
import { uuid } from "./dom.js";

const listeners = new Set();
let seq = 0;

export function onChange(fn) {
  listeners.add(fn);
  return () => listeners.delete(fn);
}

export function changed(detail = {}) {
  for (const fn of listeners) fn(detail);
}

function applyOp(state, op) {
  const p = op.payload;
  if (op.kind === "seal_point.status") {
    const point = state.points.get(p.seal_point);
    if (point) Object.assign(point, { status: p.status, version: point.version + 1, pending: true });
  } else if (op.kind === "finding.create") {
    state.findings.set(p.client_id, {
      ...p, status: "open", version: 1, fix_note: "", photos: [], local: "new", created_by: state.me.username,
    });
    const point = state.points.get(p.seal_point);
    if (point && point.status !== "defect") Object.assign(point, { status: "defect", version: point.version + 1 });
  } else if (op.kind === "conflict.resolve") {
    const conflict = state.conflicts.find((c) => c.id === p.conflict);
    if (conflict) {
      conflict.resolution = p.keep;
      const f = state.findings.get(conflict.finding);
      if (f && p.keep === "device") {
        Object.assign(f, conflict.device_version.changes || {}, { version: f.version + 1, local: "edited" });
        if (conflict.device_version.removed) f.removed = true;
      }
    }
  } else {
    const f = state.findings.get(p.finding);
    if (!f) return;
    f.version += 1;
    f.local = f.local || "edited";
    if (op.kind === "finding.update") Object.assign(f, p.changes);
    if (op.kind === "finding.fix") Object.assign(f, { status: "fixed", fix_note: p.note || f.fix_note });
    if (op.kind === "finding.verify") f.status = "verified";
    if (op.kind === "finding.reopen") f.status = "reopened";
    if (op.kind === "finding.remove") f.removed = true;
  }
}

/** Everything a screen needs for one job, or null when the job was never taken offline. */
export async function load(job) {
  const saved = await db.get("bundles", job);
  if (!saved) return null;
  const b = saved.bundle;
  const state = {
    job: b.job, me: b.me, bundle: b, savedAt: saved.saved_at, choices: b.choices,
    walls: b.walls,
    wallsById: new Map(b.walls.map((w) => [w.id, w])),
    types: new Map(b.wall_types.map((t) => [t.id, t])),
    points: new Map(b.seal_points.map((p) => [p.id, { ...p }])),
    findings: new Map(b.findings.map((f) => [f.client_id, { ...f }])),
    serverFindings: new Set(b.findings.map((f) => f.client_id)),
    conflicts: b.conflicts.map((c) => ({ ...c })),
    audits: b.audits || null,
    ops: [], photos: [], problems: [],
  };
  const ops = (await db.byJob("outbox", job)).sort((a, b2) => a.seq - b2.seq);
  for (const op of ops) {
    const answer = op.result && op.result.status;
    if (answer === "conflict" || answer === "rejected") continue;
    applyOp(state, op);
  }
  state.ops = ops;
  state.pending = ops.filter((op) => op.state === "pending");
  state.photos = await db.byJob("photos", job);
  state.problems = await db.meta(`problems:${job}`, []);
  state.lastSync = await db.meta(`last_sync:${job}`);
  return state;
}

function group(values, key) {
  const out = new Map();
  for (const v of values) {
    if (!out.has(v[key])) out.set(v[key], []);
    out.get(v[key]).push(v);
  }
  return out;
}

// Indexes by wall, built once per load: the wall list of a big job asks for every wall.
export function pointsOf(state, wallId) {
  state.pointsByWall ||= group([...state.points.values()].sort((a, b) => a.position - b.position), "wall");
  return state.pointsByWall.get(wallId) || [];
}

export function findingsOf(state, wallId) {
  state.findingsByWall ||= group([...state.findings.values()].filter((f) => !f.removed), "wall");
  return state.findingsByWall.get(wallId) || [];
}

export function localPhotos(state, findingId) {
  return state.photos.filter((p) => p.finding === findingId);
}

/** Queue one operation; it stays in IndexedDB until the server has answered it. */
export async function enqueue(job, kind, payload, baseVersion = null) {
  seq = Math.max(seq + 1, Date.now() * 1000);
  const op = {
    op_id: uuid(), job, kind, payload, base_version: baseVersion, device_at: new Date().toISOString(),
    seq, state: "pending", result: null,
  };
  await db.put("outbox", op);
  changed({ job, op });
  return op;
}

export async function addPhoto(job, record) {
  await db.put("photos", { ...record, job, state: "waiting", offset: 0 });
  changed({ job, photo: record.id });
}
