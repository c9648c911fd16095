"""The one adapter between the record and the acoustics engine.

It turns stored SI data (wall type curves and layers, wall size, openings, findings) into the
engine's inputs, runs :func:`acoustics.audit`, and hands plain JSON-ready data to pages, the API
and reports. Audits are cached per wall through Django's cache framework (never in the process):
the key carries a stamp per wall and per wall type, and :mod:`qa.signals` replaces a stamp when
any input of the wall changes (findings, openings, the wall, its wall type).

The audit package is split by feature: :mod:`.curves` (stored TL curves), :mod:`.finding_leaks`
(one finding as an engine leak), :mod:`.cache` (stamps and invalidation), :mod:`.fix_order` (a
summary's fix-first steps), :mod:`.chart` (chart data), :mod:`.presentation` (texts and page
contexts); this module builds a wall's engine inputs and its audit summary, cached per wall.

Three views of one wall (finding statuses, :class:`qa.choices.FindingStatus`):

- **walked**: every live finding open (the wall as the inspector found it);
- **as verified** (the headline ``as_found``): only findings the inspector verified count as
  fixed — the conservative state of the wall now;
- **as reported**: findings a crew marked fixed also count as fixed.

Every rating here is a laboratory-type estimate from the recorded gaps, not a field test.

References
----------
.. [1] Hopkins, C. (2007) *Sound Insulation*, Eq. 4.92 (composite of wall and openings).
.. [2] Sealwalk acoustics method notes, Sections 5-7 and 12 (leak and defect models, the audit).
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from typing import Any

import numpy as np
from django.core.cache import cache
from django.db.models import Prefetch, prefetch_related_objects

from ..choices import UNRESOLVED, FindingStatus
from ..models import Finding, Opening, Wall
from .cache import AUDIT_TIMEOUT, ENGINE_VERSION, audit_keys
from .curves import tl_array
from .finding_leaks import Unmodelled, WallContext, finding_leak

#: Words for the flags this adapter adds on top of :data:`acoustics.FLAG_TEXT`.
EXTRA_FLAG_TEXT = {
    "one_face_heuristic": "one-face gap degrades that face inside the double-leaf model (not a through-path)",
    "one_face_lab_fallback": "one-face gap on a wall type known only by its lab curve: estimated as the gap "
    "times the square root of the wall's transmission (derived, no published "
    "validation)",
    "single_leaf_through": "single-leaf wall: a gap in one face goes through",
    "through_path": "back-to-back boxes: the lost cavity over the box footprint plus the box leak as a "
    "through-path",
    "opening_rating_contour": "an opening known only by its rating is drawn as the rating's reference "
    "contour placed at that rating (an approximation of its curve)",
    "opening_unknown": "an opening with no TL curve and no rating is counted as wall",
    "equivalent_hole": "open area taken as a round hole of the same area",
    "not_modelled": "some findings cannot be modelled on this wall type; their cost is not included",
    "tl_gaps_filled": "bands missing from the lab curve were filled from the nearest measured band for "
    "the one-face estimate",
}

RATING_NAMES = {"stc": "STC", "rw": "Rw"}


# --------------------------------------------------------------------------- wall inputs
def _opening_curves(wall, openings, scheme: str) -> tuple[list, list, list[str], list[dict]]:
    import acoustics

    areas, tls, flags, rows = [], [], [], []
    for o in openings:
        if o.removed:
            continue
        row = {"id": o.pk, "label": str(o), "kind": o.kind, "area": o.area_m2, "rating": o.rating}
        if o.tl:
            tl, row["source"] = tl_array(o.tl), "curve"
        elif o.rating is not None:
            tl, row["source"] = acoustics.contour(scheme, o.rating), "rating contour"
            flags.append("opening_rating_contour")
        else:
            row["source"] = "unknown"
            flags.append("opening_unknown")
            rows.append(row)
            continue
        areas.append(o.area_m2)
        tls.append(tl)
        rows.append(row)
    return areas, tls, flags, rows


def _live_findings(wall) -> list:
    cache_ = getattr(wall, "_prefetched_objects_cache", {})
    if "findings" in cache_:
        return [f for f in wall.findings.all() if not f.removed]
    return list(wall.findings.filter(removed=False).order_by("id"))


def _openings(wall) -> list:
    return [o for o in wall.openings.all() if not o.removed]


def wall_inputs(wall, findings=None, *, memo: dict | None = None):
    """A wall's engine inputs: designed TL, area, leaks and what was done to build them.

    Parameters
    ----------
    wall : Wall
        With its wall type (select_related) and, ideally, openings and findings prefetched.
    findings : iterable of Finding, optional
        The findings to turn into leaks; default: the live findings that still cost the wall as
        verified (open, reopened, fixed but not verified).

    Returns
    -------
    tl : ndarray, shape (21,)
        Designed TL, dB: the wall type curve (NaN where not measured) combined with the openings by
        area, :func:`acoustics.composite`. An opening known only by its rating is taken as the
        rating's reference contour placed at that rating (an approximation: a real door curve is
        rarely that shape; flag "opening_rating_contour").
    area : float
        Wall area including openings, m^2.
    leaks : list of acoustics.Leak
        One per modelled finding, in the order of ``meta["finding_ids"]``; ``count`` is included.
    meta : dict
        ``finding_ids``, ``unmodelled`` ([{"finding": id, "reason": str}]), ``openings`` rows,
        ``flags``, ``net_area`` (m^2), ``wall_type_tl`` (list, None for missing bands).

    Notes
    -----
    Mapping of finding kinds: slit -> :func:`acoustics.slit` (``edge`` for a perimeter gap), hole ->
    :func:`acoustics.hole`, ring -> :func:`acoustics.ring_gap`, open area -> :func:`acoustics.open_area`;
    fill "fibre" -> :func:`acoustics.filled_gap`, "skin" -> :func:`acoustics.skin_gap`; all times
    ``count``. A gap in one face of a cavity wall -> :func:`acoustics.one_face_gap` (layers known) or
    :func:`acoustics.one_face_gap_from_lab`. bridge -> :func:`acoustics.rigid_bridge`, missing
    insulation -> :func:`acoustics.insulation_defect`, channel short ->
    :func:`acoustics.channel_short_circuit`, missing layer -> :func:`acoustics.missing_layer`,
    back-to-back boxes -> :func:`acoustics.back_to_back_boxes`. Unrecorded depth: the wall type
    thickness for a through-path, the board (leaf) thickness for a one-face gap.
    """
    import acoustics

    scheme = wall.rating_scheme or "stc"
    if findings is None:
        findings = [f for f in _live_findings(wall) if f.status in UNRESOLVED]
    ctx = WallContext(wall, memo)
    area = ctx.area
    wall_tl = ctx.tl
    o_areas, o_tls, flags, o_rows = _opening_curves(wall, _openings(wall), scheme)
    net = area - sum(o_areas)
    if net <= 0:
        raise ValueError("openings: the doors and windows are larger than the wall")
    if o_areas:
        tl = acoustics.composite([net, *o_areas], np.vstack([wall_tl, *o_tls]))
    else:
        tl = wall_tl
    leaks, ids, unmodelled = [], [], []
    for f in findings:
        try:
            leaks.append(finding_leak(f, ctx))
            ids.append(f.pk)
        except Unmodelled as exc:
            unmodelled.append({"finding": f.pk, "reason": str(exc)})
    if unmodelled:
        flags.append("not_modelled")
    meta = {
        "finding_ids": ids,
        "unmodelled": unmodelled,
        "openings": o_rows,
        "flags": flags,
        "net_area": net,
        "wall_type_tl": [None if not math.isfinite(v) else float(v) for v in wall_tl],
    }
    return tl, area, leaks, meta


# --------------------------------------------------------------------------- audit summaries
def _terms(tl: np.ndarray, scheme: str) -> dict | None:
    """C and Ctr of an Rw curve (ISO 717-1), None for STC or when bands are missing."""
    import acoustics

    if scheme != "rw":
        return None
    try:
        r = acoustics.rw(tl)
    except acoustics.RatingError:
        return None
    return {"c": int(r.c), "ctr": int(r.ctr)}


def _view(tl, area, leaks, ids, statuses, scheme, target) -> dict:
    import acoustics

    a = acoustics.audit(tl, area, leaks, rating=scheme, target=target).to_dict()
    rows = [
        {
            "finding": ids[i],
            "gain": a["gain"][i],
            "open_area_500": a["open_area_500"][i],
            "power_share": a["power_share"][i],
            "kind": a["kinds"][i],
            "label": a["labels"][i],
            "status": statuses[ids[i]],
            "flags": list(leaks[i].flags),
        }
        for i in range(len(leaks))
    ]
    return {
        "as_found": a["as_found"],
        "terms": _terms(np.array([np.nan if v is None else v for v in a["as_found_tl"]]), scheme),
        "rows": rows,
        "order": [ids[i] for i in a["order"]],
        "after": a["after"],
        "needed": None if a["needed"] is None else [ids[i] for i in a["needed"]],
        "reaches_target": None
        if target is None
        else bool(a["after"][-1] >= target if a["after"] else a["as_found"] >= target),
        "shortfall": None if target is None else max(0, target - a["as_found"]),
        "as_found_tl": a["as_found_tl"],
        "after_tl": a["after_tl"],
        "wall_share": a["wall_share"],
        "flags": a["flags"],
    }


def compute_summary(wall, *, memo: dict | None = None) -> dict:
    """The leak audit of one wall, uncached (see the module docstring for the three views)."""
    import acoustics

    scheme = wall.rating_scheme or "stc"
    target = wall.target_rating
    out: dict[str, Any] = {
        "v": ENGINE_VERSION,
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
        tl, area, leaks, meta = wall_inputs(wall, live, memo=memo)
    except ValueError as exc:
        out["error"] = str(exc)
        return out
    if not np.isfinite(tl).any():
        out["error"] = "The wall type has no TL curve yet, so no rating can be estimated."
        return out
    ids = meta["finding_ids"]
    by_id = dict(zip(ids, leaks, strict=True))
    pick = {
        "walked": ids,
        "reported": [i for i in ids if statuses[i] in (FindingStatus.OPEN, FindingStatus.REOPENED)],
        "verified": [i for i in ids if statuses[i] != FindingStatus.VERIFIED],
    }
    try:
        views = {
            name: _view(tl, area, [by_id[i] for i in sel], sel, statuses, scheme, target)
            for name, sel in pick.items()
        }
        designed = int(acoustics.rate(tl, scheme))
    except acoustics.RatingError as exc:
        out["error"] = f"No rating: {exc}"
        return out
    v = views["verified"]
    flags = list(dict.fromkeys([*meta["flags"], *views["walked"]["flags"]]))
    text = {**acoustics.FLAG_TEXT, **EXTRA_FLAG_TEXT}
    out.update(
        {
            "designed": designed,
            "designed_terms": _terms(tl, scheme),
            "designed_tl": [None if not math.isfinite(x) else float(x) for x in tl],
            "area": area,
            "net_area": meta["net_area"],
            "as_found": v["as_found"],
            "shortfall": v["shortfall"],
            "walked": views["walked"]["as_found"],
            "rows": v["rows"],
            "order": v["order"],
            "after": v["after"],
            "needed": v["needed"],
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
def audits_for_walls(walls: Iterable) -> dict[int, dict]:
    """Cached audit summaries of ``walls`` (each with its wall type loaded): {wall id: summary}.

    Warm: two cache reads, no query. Cold walls: two queries (openings, findings) for all of them.
    """

    walls = list(walls)
    if not walls:
        return {}
    keys = audit_keys(walls)
    hit = cache.get_many(list(keys.values()))
    out = {pk: hit[key] for pk, key in keys.items() if key in hit}
    cold = [w for w in walls if w.pk not in out]
    if cold:
        for w in cold:  # a wall object reused after a change must not keep its old findings
            for name in ("openings", "findings"):
                getattr(w, "_prefetched_objects_cache", {}).pop(name, None)
        prefetch_related_objects(
            cold,
            Prefetch("openings", queryset=Opening.objects.filter(removed=False).order_by("id")),
            Prefetch("findings", queryset=Finding.objects.filter(removed=False).order_by("id")),
        )
        memo: dict = {}
        fresh = {}
        for w in cold:
            fresh[keys[w.pk]] = out[w.pk] = compute_summary(w, memo=memo)
        cache.set_many(fresh, AUDIT_TIMEOUT)
    return out


def audits_for_job(job) -> dict[int, dict]:
    """{wall id: summary} for every live wall of ``job``: one query for the walls when warm."""
    return audits_for_walls(Wall.objects.live().filter(job=job).select_related("wall_type"))


def audit_summary(wall) -> dict:
    """The cached leak audit of one wall (JSON-serialisable; see :func:`compute_summary`)."""
    return audits_for_walls([wall])[wall.pk]
