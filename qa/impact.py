"""The one adapter between the record and the acoustics engine.

It turns stored SI data (wall type curves and layers, wall size, openings, findings) into the
engine's inputs, runs :func:`acoustics.audit`, and hands plain JSON-ready data to pages, the API
and reports. Audits are cached per wall through Django's cache framework (never in the process):
the key carries a stamp per wall and per wall type, and :mod:`qa.signals` replaces a stamp when
any input of the wall changes (findings, openings, the wall, its wall type).

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
import uuid
from collections.abc import Iterable
from typing import Any

import numpy as np
from django.core.cache import cache

N_BANDS = 21
TL_RANGE = (-20.0, 150.0)  # dB; outside this a value is a typo, not a measurement

#: Bump when the adapter or the engine changes the numbers; old cache entries are then ignored.
ENGINE_VERSION = "a1"
AUDIT_TIMEOUT = 60 * 60 * 24 * 30  # s; stamps make stale entries unreachable long before this
#: One layer of 15.9 mm (5/8 in) gypsum board: default depth of a one-face gap when the wall type
#: has no layers (common practice, no source).
DEFAULT_BOARD_M = 0.0159
#: Airflow resistivity of loose mineral-wool packing, Pa s/m^2 (common practice, no source;
#: acoustics.filled_gap docstring gives 5 000-20 000).
FIBRE_FLOW_RESISTIVITY = 10000.0
#: Surface density of a thin film closing a gap (about 1 mm of sealant), kg/m^2 (acoustics.skin_gap).
SKIN_SURFACE_DENSITY = 1.5

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


class Unmodelled(ValueError):
    """A finding the engine cannot turn into a leak on this wall (the message says why)."""


# --------------------------------------------------------------------------- stored curves
def curve_errors(values: list) -> str | None:
    """Why a stored TL curve is unacceptable, or None. Empty means 'no curve'."""
    if not values:
        return None
    if len(values) != N_BANDS:
        return f"needs {N_BANDS} values (bands 50–5000 Hz, null where not measured), got {len(values)}"
    for i, value in enumerate(values):
        if value is None:
            continue
        if not math.isfinite(value) or not TL_RANGE[0] <= value <= TL_RANGE[1]:
            return f"band {i + 1} value {value} is outside {TL_RANGE[0]:g}..{TL_RANGE[1]:g} dB"
    return None


def tl_array(values: Iterable | None) -> np.ndarray:
    """A stored curve (list with nulls) as a (21,) array in dB, NaN where not measured."""
    vals = list(values or [])
    if not vals:
        return np.full(N_BANDS, np.nan)
    return np.array([np.nan if v is None else v for v in vals], dtype=float)


def rate_curve(tl: list, scheme: str) -> int | None:
    """The single-number rating of a stored curve, or None when a band it needs is missing."""
    import acoustics

    if not tl:
        return None
    try:
        if scheme == "rw":
            return int(acoustics.rw(tl_array(tl)).rw)
        return int(acoustics.stc(tl_array(tl)))
    except acoustics.RatingError:
        return None


def resolve_wall_type_curve(*, tl, tl_source, layers, rating_scheme) -> tuple[list, int | None]:
    """The curve a wall type should store and its design rating.

    A predicted wall type takes its curve from its layers; a lab wall type keeps the entered bands.
    Raises ValueError "field: rule" when the inputs cannot give a curve.
    """
    tl = list(tl or [])
    if tl_source == "predicted":
        if not layers:
            raise ValueError("layers: a predicted wall type needs its layers")
        tl = predict_curve(layers)
    elif not tl:
        raise ValueError("tl: a wall type from a lab report needs its TL curve")
    return tl, rate_curve(tl, rating_scheme or "stc")


def predict_curve(layers: dict) -> list:
    """TL on the 21 bands predicted from a wall type's layers (acoustics.walls)."""
    from acoustics import walls

    try:
        tl, _flags = walls.predict_tl(layers)
    except (ValueError, KeyError, TypeError) as exc:
        raise ValueError(f"layers: {exc}") from None
    return [round(float(v), 2) for v in tl]


# --------------------------------------------------------------------------- wall inputs
def _assembly(wall_type):
    """The wall type's layered construction as a reference panel, or None for a lab-only type.

    Defect models run on the wall type's own spec (its area, default the 10 m^2 of a laboratory
    opening), not on each wall's size: a defect's added transmission area scales with the defect, and
    sharing one panel per wall type lets alike findings on different walls share one computation.
    The finite-size correction of each wall's actual size is therefore not modelled (it moves the
    added area by a few dB only below about 125 Hz).
    """
    import acoustics

    if not wall_type.layers:
        return None
    try:
        return acoustics.Assembly.from_dict(wall_type.layers)
    except acoustics.AcousticsError:
        return None


class _Context:
    """What every finding of one wall needs: sizes, the layered construction, the lab curve."""

    def __init__(self, wall, memo: dict | None = None):
        wt = wall.wall_type
        self.wall, self.wall_type = wall, wt
        self.area = float(wall.length_m) * float(wall.height_m)
        self.memo = memo if memo is not None else {}
        if ("asm", wt.pk) not in self.memo:
            self.memo[("asm", wt.pk)] = _assembly(wt)
        self.asm = self.memo[("asm", wt.pk)]
        self.key = wt.pk
        one_leaf = self.asm is not None and len(self.asm.leaves) == 1
        self.single_leaf = one_leaf or wt.construction == "masonry"
        self.tl = tl_array(wt.tl)

    def per_m2(self, name: str, make):
        """A defect's added area per m^2 of affected wall (the models are linear in that area)."""
        key = (name, self.key)
        if key not in self.memo:
            self.memo[key] = make()
        return self.memo[key]

    def board(self, face: int) -> float:
        if self.asm is not None and face < len(self.asm.leaves):
            return self.asm.leaves[face].thickness
        return DEFAULT_BOARD_M

    def lab_tl(self) -> tuple[np.ndarray, bool]:
        """The lab curve with missing bands filled from the nearest measured band."""
        tl = self.tl
        ok = np.isfinite(tl)
        if ok.all() or not ok.any():
            return tl, False
        idx = np.arange(N_BANDS)
        return np.interp(idx, idx[ok], tl[ok]), True


def _gap_leak(f, depth: float, memo: dict):
    """A slit, hole, ring or open area as a through-path of ``depth`` m (one of them, count 1).

    ``memo`` (one request's scratch dict) shares the result between findings of the same geometry:
    template defaults make many findings alike, and a hole costs milliseconds to band-average.
    """
    import acoustics

    kind, fill = f.kind, f.fill
    key = (kind, fill, f.width_m, f.length_m, f.diameter_m, f.area_m2, bool(f.at_edge), round(depth, 6))
    if key in memo:
        return key, memo[key]
    extra: tuple[str, ...] = ()
    if kind == "slit":
        shape, width, length = "slit", f.width_m, f.length_m
    elif kind == "ring":
        shape, width, length = "slit", f.width_m, math.pi * (f.diameter_m + f.width_m)
    elif kind == "hole":
        shape, width, length = "hole", f.diameter_m, 1.0
    else:  # open area
        area = f.area_m2 if f.area_m2 else (f.width_m or 0) * (f.length_m or 0)
        if fill == "none":
            memo[key] = acoustics.open_area(area)
            return key, memo[key]
        shape, width, length, extra = "hole", math.sqrt(4 * area / math.pi), 1.0, ("equivalent_hole",)
    if fill == "fibre":
        leak = acoustics.filled_gap(
            width, length, depth, flow_resistivity=FIBRE_FLOW_RESISTIVITY, shape=shape
        )
    elif fill == "skin":
        leak = acoustics.skin_gap(width, length, depth, surface_density=SKIN_SURFACE_DENSITY, shape=shape)
    elif kind == "slit":
        leak = acoustics.slit(width, length, depth, edge=bool(f.at_edge))
    elif kind == "ring":
        leak = acoustics.ring_gap(f.diameter_m, f.width_m, depth)
    else:
        leak = acoustics.hole(width, depth)
    if extra:
        leak = acoustics.Leak(leak.area, leak.kind, "", (*leak.flags, *extra), leak.open_area)
    memo[key] = leak
    return key, leak


def _relabel(leak, kind: str, label: str, count: int = 1):
    import acoustics

    out = acoustics.Leak(leak.area, kind, label, leak.flags, leak.open_area)
    return out.times(count) if count > 1 else out


def finding_leak(f, ctx: _Context):
    """One finding as an :class:`acoustics.Leak` (added transmission area per band, m^2).

    Raises :class:`Unmodelled` when the wall type cannot carry the model (e.g. a missing batt on a
    wall type known only by its lab curve).
    """
    import acoustics

    label = f"{f.get_kind_display()} #{f.pk}"
    count = int(f.count or 1)
    face = {"a": 0, "b": 1}.get(f.face)
    memo = ctx.memo
    try:
        if f.kind in ("slit", "hole", "ring", "open_area"):
            if face is None or ctx.single_leaf:
                depth = f.depth_m or ctx.wall_type.thickness_m
                _key, leak = _gap_leak(f, depth, memo)
                flags = ("single_leaf_through",) if face is not None else ()
                leak = acoustics.Leak(leak.area, leak.kind, label, (*leak.flags, *flags), leak.open_area)
                return _relabel(leak, f.kind, label, count)
            gkey, gap = _gap_leak(f, f.depth_m or ctx.board(face), memo)
            mkey = ("one_face", ctx.key, face, gkey)
            if mkey not in memo:
                if ctx.asm is not None:
                    memo[mkey] = acoustics.one_face_gap(ctx.asm, face, gap)
                else:
                    tl, filled = ctx.lab_tl()
                    if not np.isfinite(tl).all():
                        raise Unmodelled("the wall type has no TL curve")
                    lk = acoustics.one_face_gap_from_lab(tl, gap)
                    if filled:
                        lk = acoustics.Leak(lk.area, lk.kind, "", (*lk.flags, "tl_gaps_filled"))
                    memo[mkey] = lk
            leak = memo[mkey]
            return acoustics.Leak(
                leak.area * count,
                f.kind,
                label,
                leak.flags,
                gap.open_area * count if math.isfinite(gap.open_area) else float("nan"),
            )
        if ctx.asm is None:
            raise Unmodelled("needs the wall type's layers; it is known only by its lab curve")
        if f.kind == "bridge":
            if f.length_m:
                leak = acoustics.rigid_bridge(ctx.asm, length=f.length_m)
            else:
                leak = acoustics.rigid_bridge(ctx.asm, points=count)
            return _relabel(leak, "bridge", label)
        asm = ctx.asm
        if f.kind in ("missing_insulation", "channel_short", "missing_layer"):
            side = 1 if f.face == "b" else 0
            unit = ctx.per_m2(
                f"{f.kind}:{side}",
                {
                    "missing_insulation": lambda: acoustics.insulation_defect(asm, 1.0),
                    "channel_short": lambda: acoustics.Leak.added(
                        acoustics.channel_short_circuit(asm, 1.0).area / asm.area,
                        kind="channel_short_circuit",
                    ),
                    "missing_layer": lambda: acoustics.missing_layer(asm, side, 1.0),
                }[f.kind],
            )
            area = min(float(f.area_m2), ctx.area)
            return acoustics.Leak(unit.area * area, f.kind, label, unit.flags)
        if f.kind == "back_to_back":
            # The lost cavity over the boxes' footprint, plus the recorded box leak through both boxes.
            one = ctx.per_m2("back_to_back", lambda: acoustics.back_to_back_boxes(asm))
            boxes = acoustics.Leak(one.area * count, one.kind, "", one.flags)
            depth = f.depth_m or ctx.wall_type.thickness_m
            parts = [boxes.area]
            flags = list(boxes.flags)
            if f.area_m2:
                hkey = ("b2b-hole", f.area_m2, round(depth, 6))
                if hkey not in memo:
                    memo[hkey] = acoustics.hole(math.sqrt(4 * f.area_m2 / math.pi), depth)
                hole = memo[hkey].times(count)
                parts.append(hole.area)
                flags += [*hole.flags, "equivalent_hole"]
            return acoustics.Leak.added(
                np.sum(parts, axis=0), kind=f.kind, label=label, flags=tuple(dict.fromkeys(flags))
            )
    except acoustics.AcousticsError as exc:  # GeometryError and friends are ValueErrors with a reason
        raise Unmodelled(str(exc)) from None
    raise Unmodelled(f"kind {f.kind!r} has no model")


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

    from .choices import UNRESOLVED

    scheme = wall.rating_scheme or "stc"
    if findings is None:
        findings = [f for f in _live_findings(wall) if f.status in UNRESOLVED]
    ctx = _Context(wall, memo)
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

    from .choices import FindingStatus

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


def fix_steps(summary: dict, view: str = "verified") -> dict[int, dict]:
    """{finding id: {step, buys, after, alone, share, needed}} from a view's fix-first order."""
    v = summary.get("views", {}).get(view)
    if not v:
        return {}
    rows = {r["finding"]: r for r in v["rows"]}
    needed = set(v["needed"] or [])
    out, before = {}, v["as_found"]
    for k, (fid, after) in enumerate(zip(v["order"], v["after"], strict=True), start=1):
        r = rows[fid]
        out[fid] = {
            "step": k,
            "buys": after - before,
            "after": after,
            "alone": r["gain"],
            "share": r["power_share"],
            "open_area": r["open_area_500"],
            "needed": fid in needed,
            "flags": r["flags"],
        }
        before = after
    return out


# --------------------------------------------------------------------------- cache
_STAMP_W = "sealwalk:audit:stamp:w:{}"
_STAMP_T = "sealwalk:audit:stamp:t:{}"


def invalidate_wall(wall_id: int) -> None:
    """Make the cached audit of one wall unreachable (call after any change to its inputs)."""
    cache.set(_STAMP_W.format(wall_id), uuid.uuid4().hex, None)


def invalidate_wall_type(wall_type_id: int) -> None:
    """Make the cached audits of every wall of one wall type unreachable."""
    cache.set(_STAMP_T.format(wall_type_id), uuid.uuid4().hex, None)


def _stamps(keys: list[str]) -> dict[str, str]:
    found = cache.get_many(keys)
    missing = [k for k in keys if k not in found]
    if missing:
        for k in missing:  # add(): a stamp another process set first wins
            cache.add(k, uuid.uuid4().hex, None)
        found.update(cache.get_many(missing))
    return found


def audit_keys(walls: list) -> dict[int, str]:
    """Current cache key of each wall's audit: engine version, wall stamp and wall type stamp."""
    wkeys = [_STAMP_W.format(w.pk) for w in walls]
    tkeys = list(dict.fromkeys(_STAMP_T.format(w.wall_type_id) for w in walls))
    stamps = _stamps(wkeys + tkeys)
    return {
        w.pk: f"sealwalk:audit:{ENGINE_VERSION}:{w.pk}:{stamps.get(_STAMP_W.format(w.pk), '-')}:"
        f"{stamps.get(_STAMP_T.format(w.wall_type_id), '-')}"
        for w in walls
    }


def audits_for_walls(walls: Iterable) -> dict[int, dict]:
    """Cached audit summaries of ``walls`` (each with its wall type loaded): {wall id: summary}.

    Warm: two cache reads, no query. Cold walls: two queries (openings, findings) for all of them.
    """
    from django.db.models import Prefetch

    from .models import Finding, Opening

    walls = list(walls)
    if not walls:
        return {}
    keys = audit_keys(walls)
    hit = cache.get_many(list(keys.values()))
    out = {pk: hit[key] for pk, key in keys.items() if key in hit}
    cold = [w for w in walls if w.pk not in out]
    if cold:
        from django.db.models import prefetch_related_objects

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


def audit_summary(wall) -> dict:
    """The cached leak audit of one wall (JSON-serialisable; see :func:`compute_summary`)."""
    return audits_for_walls([wall])[wall.pk]


def audits_for_job(job) -> dict[int, dict]:
    """{wall id: summary} for every live wall of ``job``: one query for the walls when warm."""
    from .models import Wall

    return audits_for_walls(Wall.objects.live().filter(job=job).select_related("wall_type"))
