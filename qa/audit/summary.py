"""The one adapter between the record and the acoustics engine.

It turns stored SI data (wall type curve or layers, wall size, openings and doors, findings) into one
model per wall (:func:`acoustics.wall_model`), audits it (:func:`acoustics.audit_wall`), and hands
plain JSON-ready data to pages, the API and reports. Audits are cached per wall through Django's
cache framework (never in the process): the key carries a stamp per wall and per wall type, and
:mod:`qa.signals` replaces a stamp when any input of the wall changes (findings, openings, the wall,
its wall type).

The audit package is split by feature: :mod:`.curves` (stored TL curves), :mod:`.finding_leaks`
(one finding as an engine finding spec, the wall's construction and doors), :mod:`.cache` (stamps
and invalidation), :mod:`.fix_order` (a summary's fix-first steps), :mod:`.chart` (chart data),
:mod:`.presentation` (texts and page contexts), :mod:`.wall_json` (the audit as the API serves it);
this module builds a wall's model inputs and its audit summary, cached per wall.

Every finding is priced on the whole wall: the as-found wall has every open finding in place at
once; a finding's cost ("alone") is the rating with it removed from the whole model minus the
as-found rating; the fix-first order, ``after`` and ``needed`` are computed on the whole model at
every step, so two findings on opposite faces that only leak together are seen together.

Three views of one wall (finding statuses, :class:`qa.choices.FindingStatus`):

- **walked**: every live finding open (the wall as the inspector found it);
- **as verified** (the headline ``as_found``): only findings the inspector verified count as
  fixed — the conservative state of the wall now;
- **as reported**: findings a crew marked fixed also count as fixed.

Every rating here is a laboratory-type estimate from the recorded defects, not a field test.

References
----------
.. [1] Hopkins, C. (2007) *Sound Insulation*, Eq. 4.92 (composite of wall and openings).
.. [2] Sealwalk acoustics method notes, Sections 5-7, 12 and 15 (leak and defect models, the
   audit, the whole-wall model).
"""

from __future__ import annotations

import hashlib
import re
import time
from collections.abc import Iterable
from typing import Any

import numpy as np
from django.core.cache import cache
from django.db.models import Prefetch, prefetch_related_objects

from ..choices import UNRESOLVED, FindingStatus
from ..models import Finding, Opening, Wall
from .cache import AUDIT_TIMEOUT, ENGINE_VERSION, audit_keys, first_reader
from .finding_leaks import (
    Unmodelled,
    WallContext,
    door_set,
    finding_spec,
    finite,
    is_door_seal,
    opening_row,
)

#: Words for the flags this adapter adds on top of the engine's flag texts.
EXTRA_FLAG_TEXT = {
    "single_leaf_through": "single-leaf wall: a gap in one face goes through",
    "opening_rating_contour": "an opening known only by its rating is drawn as the rating's reference "
    "contour placed at that rating (an approximation of its curve)",
    "opening_unknown": "an opening with no TL curve and no rating is counted as wall",
    "not_modelled": "some findings cannot be modelled on this wall type; their cost is not included",
    "tl_gaps_filled": "bands missing from a lab curve were filled from the nearest measured band for "
    "the model (the ratings use measured bands only)",
    "lab_curve": "wall known only by its lab curve",
    "cavity_fill_unknown": "the wall type's layers do not say what fills the cavity: taken as empty, the "
    "cautious case for openings joined through it; enter the layers to count the fill",
}

RATING_NAMES = {"stc": "STC", "rw": "Rw"}
#: Index of the 500 Hz band in the 21 bands 50-5000 Hz.
I500 = 10
_FINDING_INDEX = re.compile(r"^findings\[(\d+)\][.:]?\s*")


def _engine_version() -> str:
    from acoustics.wall_audit import ENGINE_VERSION as engine

    return engine


def flag_texts() -> dict[str, str]:
    """Every flag's words: the engine's leak and wall-model flags, then this adapter's."""
    import acoustics
    from acoustics.wall_model import WALL_FLAG_TEXT

    return {**acoustics.FLAG_TEXT, **WALL_FLAG_TEXT, **EXTRA_FLAG_TEXT}


# --------------------------------------------------------------------------- wall inputs
def _live_findings(wall) -> list:
    cache_ = getattr(wall, "_prefetched_objects_cache", {})
    if "findings" in cache_:
        return [f for f in wall.findings.all() if not f.removed]
    return list(wall.findings.filter(removed=False).select_related("seal_point").order_by("id"))


def _openings(wall) -> list:
    return [o for o in wall.openings.all() if not o.removed]


def wall_inputs(wall, findings=None, *, memo: dict | None = None) -> tuple[dict, dict]:
    """A wall's model inputs: the keyword arguments of :func:`acoustics.wall_model` and what was done.

    Parameters
    ----------
    wall : Wall
        With its wall type (select_related) and, ideally, openings and findings prefetched.
    findings : iterable of Finding, optional
        The findings to model; default: the live findings that still cost the wall as verified
        (open, reopened, fixed but not verified).

    Returns
    -------
    inputs : dict
        ``construction`` (the wall type's layers, or its lab curve with leaves and thickness),
        ``area`` (wall area including openings, m^2), ``height`` (m), ``openings`` ([{area m^2, tl
        dB}]), ``doors`` (door sets, :class:`acoustics.DoorSet` fields), ``findings`` (finding specs,
        :mod:`qa.audit.finding_leaks`), in the order of ``meta["finding_ids"]``.
    meta : dict
        ``finding_ids``, ``unmodelled`` ([{"finding": id, "reason": str}]), ``openings`` rows,
        ``flags``, ``net_area`` (m^2), ``wall_type_tl`` (list, None for missing bands), ``layered``
        (the construction is the wall type's layers), ``kinds`` (the record's kind of each finding).

    Raises
    ------
    ValueError
        "openings: ..." when the doors and windows are larger than the wall.

    Notes
    -----
    A door opening with a known curve becomes a door set (its seals priced by
    :func:`acoustics.door_leak`) when the wall has findings at door seal points; other openings
    enter the designed wall by area (Hopkins 2007, Eq. 4.92). An opening known only by its rating is
    taken as the rating's reference contour placed at that rating (flag "opening_rating_contour").
    A finding the engine refuses (e.g. a missing batt on a wall type known only by its lab curve) is
    listed in ``unmodelled`` with the engine's reason and left out of the model.
    """
    inputs, meta, _model = _inputs_and_model(wall, findings, memo)
    return inputs, meta


def _inputs_and_model(wall, findings=None, memo: dict | None = None) -> tuple[dict, dict, Any]:
    """:func:`wall_inputs` and the model it built (None when no finding is modelled)."""
    import acoustics

    scheme = wall.rating_scheme or "stc"
    if findings is None:
        findings = [f for f in _live_findings(wall) if f.status in UNRESOLVED]
    findings = list(findings)
    ctx = WallContext(wall, memo)
    flags = list(ctx.flags)
    openings, rows, used = [], [], 0.0
    doors: list[dict] = []  # at most one door set: the first door, when a door seal is a finding
    door_seals = any(is_door_seal(f) for f in findings)
    for o in _openings(wall):
        row, tl, oflags = opening_row(o, scheme)
        flags += oflags
        rows.append(row)
        if tl is None:
            continue
        used += o.area_m2
        if door_seals and o.kind == "door" and not doors:
            doors.append(door_set(o, tl))
            row["source"] += ", door set with its seals"
        else:
            openings.append({"area": float(o.area_m2), "tl": [float(v) for v in tl]})
    if used >= ctx.area:
        raise ValueError("openings: the doors and windows are larger than the wall")
    ctx.door_index = 0 if doors else None
    specs, ids, unmodelled = [], [], []
    for f in findings:
        try:
            specs.append(finding_spec(f, ctx))
            ids.append(f.pk)
        except Unmodelled as exc:
            unmodelled.append({"finding": f.pk, "reason": str(exc)})
    inputs = {
        "construction": ctx.construction,
        "area": ctx.area,
        "height": ctx.height,
        "openings": openings,
        "doors": doors,
        "findings": specs,
    }
    # Findings the engine refuses on this wall leave the model one by one, each with its reason.
    model = None
    while specs:
        try:
            model = acoustics.wall_model(**inputs)
            break
        except acoustics.GeometryError as exc:
            m = _FINDING_INDEX.match(str(exc))
            if m is None or int(m.group(1)) >= len(specs):
                raise
            i = int(m.group(1))
            unmodelled.append({"finding": ids[i], "reason": str(exc)[m.end() :] or str(exc)})
            del specs[i], ids[i]
    if unmodelled:
        flags.append("not_modelled")
    kind_of = {f.pk: f.kind for f in findings}
    meta = {
        "finding_ids": ids,
        "unmodelled": unmodelled,
        "openings": rows,
        "flags": list(dict.fromkeys(flags)),
        "net_area": ctx.area - used,
        "wall_type_tl": [finite(float(v)) for v in ctx.raw_tl],
        "layered": ctx.layered,
        "kinds": [kind_of[i] for i in ids],
    }
    return inputs, meta, model


def wall_model_for(wall, findings=None, *, memo: dict | None = None):
    """The wall's whole model (:class:`acoustics.WallModel`) and the meta of :func:`wall_inputs`."""
    import acoustics

    inputs, meta, model = _inputs_and_model(wall, findings, memo)
    return model if model is not None else acoustics.wall_model(**inputs), meta


# --------------------------------------------------------------------------- audit summaries
def _terms(tl, scheme: str) -> dict | None:
    """C and Ctr of an Rw curve (ISO 717-1), None for STC or when bands are missing."""
    import acoustics

    if scheme != "rw":
        return None
    try:
        r = acoustics.rw(np.array([np.nan if v is None else v for v in tl], dtype=float))
    except acoustics.RatingError:
        return None
    return {"c": int(r.c), "ctr": int(r.ctr)}


def _sub_model(model, keep: list[int]):
    """The same wall with only the findings ``keep`` (indices into ``model.parts``) open."""
    import acoustics

    if len(keep) == len(model.parts):
        return model
    pos = {k: j for j, k in enumerate(keep)}
    return acoustics.WallModel(
        construction=model.construction,
        area=model.area,
        base=model.base,
        parts=tuple(model.parts[k] for k in keep),
        cross=model.cross[np.ix_(keep, keep)],
        cross_path={(pos[k], pos[l]): p for (k, l), p in model.cross_path.items() if k in pos and l in pos},
        flags=model.flags,
    )


def _curve(tl, missing: np.ndarray) -> list:
    """A band curve for JSON: None where the wall type's lab curve has no measurement."""
    return [None if (miss or v is None) else v for v, miss in zip(tl, missing, strict=True)]


def _view(model, keep, ids, statuses, scheme, target, missing, kinds) -> dict:
    import acoustics
    from acoustics.ratings import rating_weights

    sub = _sub_model(model, keep)
    audit = acoustics.audit_wall(sub, rating=scheme, target=target)
    a = audit.to_dict()
    sel = [ids[k] for k in keep]
    in_order, before = {}, audit.as_found
    for k, after in zip(audit.order, audit.after, strict=True):
        in_order[sel[k]] = int(after) - before
        before = int(after)
    rows = [
        {
            "finding": fid,
            "gain": int(audit.gain[j]),
            "alone": int(audit.gain[j]),
            "in_order": in_order[fid],
            "open_area_500": float(sub.parts[j].linear[I500]),
            "power_share": float(audit.power_share[j]),
            "kind": kinds[keep[j]],
            "model_kind": sub.parts[j].kind,
            "label": sub.parts[j].label,
            "status": statuses[fid],
            "path": audit.paths[j],
            "path_kind": audit.path_kinds[j],
            "flags": list(audit.flags[j]),
        }
        for j, fid in enumerate(sel)
    ]
    weights = rating_weights(scheme)
    total = float(sub.power() @ weights)
    as_found_tl = _curve(a["as_found_tl"], missing)
    by_str = {str(fid): fid for fid in sel}
    return {
        "as_found": audit.as_found,
        "if_reported_fixed": audit.if_reported_fixed,
        "terms": _terms(as_found_tl, scheme),
        "rows": rows,
        "order": [sel[k] for k in audit.order],
        "after": [int(v) for v in audit.after],
        "needed": None if audit.needed is None else [sel[k] for k in audit.needed],
        "reaches_target": None
        if target is None
        else bool(audit.after[-1] >= target if len(audit.after) else audit.as_found >= target),
        "shortfall": None if target is None else max(0, target - audit.as_found),
        "designed_tl": _curve(a["designed_tl"], missing),
        "as_found_tl": as_found_tl,
        "after_tl": [_curve(r, missing) for r in a["after_tl"]],
        "wall_share": float(sub.base @ weights) / total if total > 0 else 1.0,
        "interactions": [{**x, "findings": [by_str[i] for i in x["findings"]]} for x in a["interactions"]],
        "flags": list(dict.fromkeys([*audit.model_flags, *(f for fl in audit.flags for f in fl)])),
        "designed": audit.designed,
    }


def compute_summary(wall, *, memo: dict | None = None) -> dict:
    """The leak audit of one wall, uncached (see the module docstring for the three views)."""
    import acoustics

    scheme = wall.rating_scheme or "stc"
    target = wall.target_rating
    out: dict[str, Any] = {
        "v": ENGINE_VERSION,
        "engine_version": _engine_version(),
        "wall": wall.pk,
        "scheme": scheme,
        "rating_name": RATING_NAMES.get(scheme, scheme),
        "target": target,
        "designed": None,
        "as_found": None,
        "shortfall": None,
        "error": None,
    }
    live = _live_findings(wall)
    statuses = {f.pk: f.status for f in live}
    try:
        inputs, meta, model = _inputs_and_model(wall, live, memo)
    except ValueError as exc:
        out["error"] = str(exc)
        return out
    raw = np.array([np.nan if v is None else v for v in meta["wall_type_tl"]], dtype=float)
    missing = np.zeros(raw.size, dtype=bool)
    if not meta["layered"]:
        if not np.isfinite(raw).any():
            out["error"] = "The wall type has no TL curve yet, so no rating can be estimated."
            return out
        try:  # the ratings use measured bands only: a lab curve missing one of them has no rating
            acoustics.rate(raw, scheme)
        except acoustics.RatingError as exc:
            out["error"] = f"No rating: {exc}"
            return out
        missing = ~np.isfinite(raw)
    ids = meta["finding_ids"]
    pick = {
        "walked": list(range(len(ids))),
        "reported": [
            k for k, i in enumerate(ids) if statuses[i] in (FindingStatus.OPEN, FindingStatus.REOPENED)
        ],
        "verified": [k for k, i in enumerate(ids) if statuses[i] != FindingStatus.VERIFIED],
    }
    try:
        if model is None:
            model = acoustics.wall_model(**inputs)
        # Views with the same open findings are the same audit: compute each distinct one once (while
        # nothing is fixed yet — most of a walk — the three views are one).
        done: dict[tuple[int, ...], dict] = {}
        views = {}
        for name, sel in pick.items():
            key = tuple(sel)
            if key not in done:
                done[key] = _view(model, sel, ids, statuses, scheme, target, missing, meta["kinds"])
            views[name] = done[key]
    except (acoustics.RatingError, acoustics.GeometryError) as exc:
        out["error"] = f"No rating: {exc}"
        return out
    v = views["verified"]
    flags = list(dict.fromkeys([*meta["flags"], *views["walked"]["flags"]]))
    text = flag_texts()
    designed = v["designed"]
    out.update(
        {
            "designed": designed,
            "designed_terms": _terms(v["designed_tl"], scheme),
            "designed_tl": v["designed_tl"],
            "area": inputs["area"],
            "net_area": meta["net_area"],
            "as_found": v["as_found"],
            "shortfall": v["shortfall"],
            "walked": views["walked"]["as_found"],
            "rows": v["rows"],
            "order": v["order"],
            "after": v["after"],
            "needed": v["needed"],
            "interactions": v["interactions"],
            "flags": flags,
            "flag_text": {f: text.get(f, f.replace("_", " ")) for f in flags},
            "unmodelled": meta["unmodelled"],
            "openings": meta["openings"],
            "views": views,
            "reported": views["reported"],
            "verified": v,
        }
    )
    return out


# --------------------------------------------------------------------------- cached lookups
#: Longest a recount may hold its lock (s); past it another reader recounts.
RECOUNT_LOCK_S = 60
#: Walls one reader recounts at most when their last audits are past ``max_age`` (the rest wait their turn).
RECOUNT_AT_ONCE = 8


#: What a verdict needs of an audit (:func:`qa.audit.verdicts.verdict`): the headline a list reads.
HEADLINE_KEYS = (
    "v", "engine_version", "wall", "scheme", "rating_name", "target", "designed", "as_found", "walked",
    "shortfall", "error", "flags", "key", "computed",
)  # fmt: skip


def _latest_key(wall_id: int) -> str:
    """Cache key of the headline of the last audit computed for a wall, whatever its stamps."""
    return f"sealwalk:audit-latest:{ENGINE_VERSION}:{wall_id}"


def headline(summary: dict) -> dict:
    """The few numbers of an audit a verdict needs, with ``key`` and ``computed`` (a few hundred bytes
    where the whole audit of a wall with hundreds of findings is a hundred kilobytes)."""
    out = {k: summary[k] for k in HEADLINE_KEYS if k in summary}
    reported = summary.get("reported")
    if reported is not None:
        out["reported"] = {"as_found": reported.get("as_found")}
    return out


def audits_for_walls(walls: Iterable, *, max_age: float = 0, whole: bool = True) -> dict[int, dict]:
    """Cached audit summaries of ``walls`` (each with its wall type loaded): {wall id: summary}.

    Warm: one cache read (two with ``max_age`` and ``whole``), no query. Cold walls: two queries
    (openings, findings) for all of them.

    ``max_age`` (seconds; lists that many people poll, never a page that decides anything): a wall
    whose inputs changed since its last audit may be answered with that audit when it is at most
    this old, marked ``"recounting": True``. While a wall is being recorded fast (a sync every moment),
    its audit is then worked out at most once per ``max_age`` instead of once per reader; one reader
    recounts at most :data:`RECOUNT_AT_ONCE` such walls, the oldest first, and while it does, the others
    answer with the older audits, marked the same way.

    ``whole`` False (with ``max_age``): the :func:`headline` of each audit is enough (a list of
    verdicts) — the whole audits are then not read at all.
    Every summary carries ``key`` (the stamps it was computed for) and ``computed`` (epoch seconds).
    """
    walls = list(walls)
    if not walls:
        return {}
    keys = audit_keys(walls)
    if max_age <= 0:  # the current audits, counted now where missing
        hit = cache.get_many(list(keys.values()))
        out = {pk: hit[key] for pk, key in keys.items() if key in hit}
        _recount([w for w in walls if w.pk not in out], keys, out, time.time())
        return out
    # Each wall's latest headline says which audit it is (its stamps) and how old: small reads decide.
    heads = cache.get_many([_latest_key(pk) for pk in keys])
    last = {pk: heads[_latest_key(pk)] for pk in keys if _latest_key(pk) in heads}
    now = time.time()
    chosen: dict[int, bool] = {}  # wall id -> answered with its last audit (marked recounting)
    stale: dict[int, dict] = {}  # older than max_age: answered only while another reader recounts
    for pk, head in last.items():
        age = now - head.get("computed", 0)
        if head.get("key") == keys[pk]:
            chosen[pk] = False
        elif 0 <= age <= max_age:
            chosen[pk] = True
        elif 0 <= age <= max_age + RECOUNT_LOCK_S:
            stale[pk] = head
    if len(stale) > RECOUNT_AT_ONCE:
        # A reader recounts the oldest few and answers the rest with their last audits, marked: the
        # recount of a busy job is spread over the next readers instead of stalling one of them.
        oldest = sorted(stale, key=lambda pk: (stale[pk].get("computed", 0), pk))
        for pk in oldest[RECOUNT_AT_ONCE:]:
            stale.pop(pk)
            chosen[pk] = True
    lock = None
    if stale:  # one reader recounts a set of walls at a time
        cold_ids = sorted(pk for pk in keys if pk not in chosen)
        ids = ",".join(str(pk) for pk in cold_ids)
        lock = "sealwalk:audit-recount:" + hashlib.sha256(ids.encode()).hexdigest()[:24]
    with first_reader(lock, RECOUNT_LOCK_S) as mine:
        if not mine:  # another reader is recounting them: the last audits, marked
            chosen.update(dict.fromkeys(stale, True))
        out = _answer(chosen, last, whole)
        _recount([w for w in walls if w.pk not in out], keys, out, now)
    return out


def _answer(chosen: dict[int, bool], last: dict[int, dict], whole: bool) -> dict[int, dict]:
    """The chosen walls' audits (headlines, or the whole audits their headlines name), marked."""
    if whole:
        found = cache.get_many([last[pk]["key"] for pk in chosen])
        got = {pk: found[last[pk]["key"]] for pk in chosen if last[pk]["key"] in found}
    else:
        got = {pk: last[pk] for pk in chosen}
    # A whole audit no longer in the cache leaves its wall to the recount.
    return {pk: {**audit, "recounting": True} if chosen[pk] else audit for pk, audit in got.items()}


def _recount(cold: list, keys: dict[int, str], out: dict[int, dict], now: float) -> None:
    """Compute the audits of ``cold`` walls into ``out`` and the cache (whole, and the headline)."""
    if cold:
        for w in cold:  # a wall object reused after a change must not keep its old findings
            for name in ("openings", "findings"):
                getattr(w, "_prefetched_objects_cache", {}).pop(name, None)
        prefetch_related_objects(
            cold,
            Prefetch("openings", queryset=Opening.objects.filter(removed=False).order_by("id")),
            Prefetch(
                "findings",
                queryset=Finding.objects.filter(removed=False).select_related("seal_point").order_by("id"),
            ),
        )
        memo: dict = {}
        fresh = {}
        for w in cold:
            summary = compute_summary(w, memo=memo)
            summary.update(key=keys[w.pk], computed=now)
            fresh[keys[w.pk]] = out[w.pk] = summary
            fresh[_latest_key(w.pk)] = headline(summary)
        cache.set_many(fresh, AUDIT_TIMEOUT)


def audits_for_job(job) -> dict[int, dict]:
    """{wall id: summary} for every live wall of ``job``: one query for the walls when warm."""
    return audits_for_walls(Wall.objects.live().filter(job=job).select_related("wall_type"))


def audit_summary(wall) -> dict:
    """The cached leak audit of one wall (JSON-serialisable; see :func:`compute_summary`)."""
    return audits_for_walls([wall])[wall.pk]
