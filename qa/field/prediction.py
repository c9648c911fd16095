"""The field prediction of a wall: R'w and DnT,w (C, Ctr), ASTC and NNIC as designed, as walked and now.

The wall's curves come from its cached leak audit (:func:`qa.audit.audit_summary`): ``designed_tl``
(the wall type with its openings), the walked view's as-found curve (every recorded finding open) and
the verified view's (only verified fixes count: the wall now). The engine
(:func:`acoustics.building_kinds.predict_wall`, ISO 12354-1 detailed method) takes the designed curve
as the direct path and what the walk's findings add to it as an airborne path of transmission area
S (τ_state − τ_designed) per band, so each path's share shows how much of the sound the findings let
through beside the flanking paths. Rooms, junctions and the building kind come from
:mod:`qa.field.inputs`. Results (with the wall's field tests) are cached through Django's cache,
keyed by the audit's key (its stamps change with any finding, opening, wall or wall type), the job's
building kind and the wall's field stamp (:mod:`qa.field.stamps`: rooms, junctions, field tests).

Notes
-----
Where a state's curve lies below the designed curve in a band (a defect that shifts a resonance can
lower τ there), the findings path is taken as zero in that band (flag ``findings_clipped``): the
prediction is then slightly conservative against the state's curve.

References
----------
.. [1] ISO 12354-1:2017, Clause 4 (detailed method, airborne paths added to the direct path).
.. [2] Sealwalk acoustics method notes, Section 14 (field prediction) and Section 15 (one model per wall).
"""

from __future__ import annotations

import hashlib
import json
import math
from collections.abc import Iterable
from typing import Any

import numpy as np
from django.core.cache import cache

from acoustics.building_kinds import predict_wall
from acoustics.field import FieldInputError
from acoustics.field_inputs import PREDICTION_FLAGS

from ..audit import audits_for_walls
from ..audit.cache import AUDIT_TIMEOUT, FIELD, audit_keys, audit_stamps
from ..models import FieldTest, JunctionOverride, RoomPair
from .inputs import CAUTION, field_target, junctions_of, rooms_of, wall_structure

#: Bump when this adapter changes the numbers; old cache entries are then ignored.
FIELD_VERSION = "f2"
STATES = ("designed", "walked", "now")
FLAG_TEXT = {
    **PREDICTION_FLAGS,
    "findings_clipped": "in some band a state's curve lies above the designed curve; the findings path "
    "is taken as zero there",
}
DESCRIPTOR_NAMES = {"astc": "ASTC", "nnic": "NNIC", "r_prime_w": "R'w", "dnt_w": "DnT,w"}


def wall_curves(summary: dict) -> tuple[np.ndarray | None, str | None]:
    """The (3, 21) curves designed / walked / now of an audit summary, dB, or (None, reason)."""
    if summary.get("error"):
        return None, summary["error"]
    views = summary.get("views") or {}
    rows: list[Any] = [
        summary.get("designed_tl"),
        *((views.get(v) or {}).get("as_found_tl") for v in ("walked", "verified")),
    ]
    if any(r is None for r in rows) or any(x is None for r in rows for x in r):
        return None, "The wall's curve lacks bands (50-5000 Hz): no field prediction can be made."
    return np.asarray(rows, float), None


def state_leaks(curves: np.ndarray, area: float) -> tuple[np.ndarray, bool]:
    """Transmission area of the findings per state, m²: S (τ_state − τ_designed), at least 0."""
    tau = 10.0 ** (-curves / 10.0)
    extra = area * (tau - tau[0])
    clipped = bool(np.any(extra < -1e-12 * area))
    return np.maximum(extra, 0.0), clipped


def _value(d: dict, descriptor: str) -> Any:
    v = d[descriptor]
    return v["value"] if isinstance(v, dict) else v


def _routes(share: dict[str, Any]) -> dict[str, Any]:
    out: dict[str, float] = {}
    for key, v in share.items():
        route = {"Dd": "wall", "leaks": "findings"}.get(key, key.split(".")[0])
        out[route] = out.get(route, 0.0) + (v or 0.0)
    return {k: round(v, 3) for k, v in out.items()}


def predict_pair(
    wall, curves: np.ndarray, rooms, junctions: dict, building_kind: str, pair=None, rules: tuple = ()
) -> dict:
    """The field prediction of one room pair of ``wall`` (uncached), JSON-ready."""
    area = rooms.area if rooms.area is not None else wall.length_m * wall.height_m
    leaks, clipped = state_leaks(curves, area)
    p = predict_wall(
        curves[0][None, :].repeat(3, axis=0),
        wall.length_m,
        wall.height_m,
        rooms.source,
        rooms.receiving,
        building_kind=building_kind,
        area=rooms.area,
        junctions=junctions,
        leaks=leaks,
        **wall_structure(wall),
    )
    target = field_target(wall, pair, rules)
    states = {}
    for i, name in enumerate(STATES):
        d = p.as_dict(i)
        d["share_by_route"] = _routes(d["share"])
        d["margin"] = None if target is None else _value(d, target["descriptor"]) - target["value"]
        states[name] = d
    flags = [*p.flags, *(["findings_clipped"] if clipped else [])]
    return {
        "room_pair": rooms.pair_id,
        "label": rooms.label,
        "rooms": {
            "source_volume_m3": round(rooms.source.volume, 2),
            "receiving_volume_m3": round(rooms.receiving.volume, 2),
            "receiving_t_s": round(float(np.mean(rooms.receiving.t_bands())), 3),
            "area_m2": round(p.area, 3),
            "defaults": list(rooms.defaults),
        },
        "junctions": {pos: {"kind": j.kind, "element": j.flank.name} for pos, j in junctions.items()},
        "target": target,
        "states": states,
        "flags": flags,
        "flag_text": {f: FLAG_TEXT.get(f, f) for f in flags},
    }


def compute_field(
    wall, summary: dict, pairs: list, overrides: list, building_kind: str, rules: tuple = ()
) -> dict:
    """The field prediction of ``wall`` for each room pair (one default pair if none), uncached.

    ``rules`` are the job's field targets (:attr:`qa.models.Job.field_targets`)."""
    out: dict[str, Any] = {
        "v": FIELD_VERSION,
        "wall": wall.pk,
        "building_kind": building_kind,
        "caution": CAUTION,
        "error": None,
        "pairs": [],
    }
    curves, reason = wall_curves(summary)
    if curves is None:
        out["error"] = reason
        return out
    try:
        junctions = junctions_of(overrides, building_kind)
        for pair in pairs or [None]:
            out["pairs"].append(
                predict_pair(wall, curves, rooms_of(wall, pair), junctions, building_kind, pair, rules)
            )
    except FieldInputError as exc:
        out["error"] = f"{exc.field}: {exc.rule}"
        out["pairs"] = []
    return out


def headline(result: dict) -> dict | None:
    """The pair that decides the wall: the smallest margin now (the first pair when no target)."""
    pairs = result.get("pairs") or []
    if not pairs:
        return None
    with_margin = [p for p in pairs if p["states"]["now"]["margin"] is not None]
    return min(with_margin, key=lambda p: p["states"]["now"]["margin"]) if with_margin else pairs[0]


def entry_of_test(t) -> dict[str, Any]:
    """A field test as the cached prediction carries it (JSON-ready)."""
    return {
        "id": t.pk,
        "room_pair": t.room_pair_id,
        "tested_on": t.tested_on.isoformat() if hasattr(t.tested_on, "isoformat") else str(t.tested_on),
        "tester": t.tester,
        "standard": t.standard,
        "source": t.source,
        "results": t.results,
        "note": t.note,
    }


def rules_digest(rules: Iterable[dict]) -> str:
    """A short digest of a job's field targets, part of every prediction's cache key."""
    text = json.dumps(list(rules or ()), sort_keys=True, separators=(",", ":"))
    return hashlib.sha256(text.encode()).hexdigest()[:12]


def field_for_walls(walls: Iterable, job, audits: dict[int, dict] | None = None) -> dict[int, dict]:
    """Cached field predictions of ``walls`` of ``job`` (wall types loaded): {wall id: result}.

    The job gives the building kind (default junctions) and the rule set's field targets. ``audits``:
    the walls' audit summaries when the caller has them (perhaps a moment old, see
    :func:`qa.audit.audits_for_walls`); each prediction is then the one of that audit.

    Each result also lists the wall's field tests (``tests``). Warm: cache reads only. Cold walls:
    three queries (rooms, junctions, tests) plus the audits' own, whatever their number.
    """
    walls = list(walls)
    if not walls:
        return {}
    building_kind, rules = job.building_kind, tuple(job.field_targets or ())
    found = audit_stamps(walls, **{FIELD: [w.pk for w in walls]})  # one query for every stamp
    akeys = audit_keys(walls, found)
    if audits is not None:  # the stamps each given audit was computed for
        akeys = {pk: audits[pk].get("key") or key for pk, key in akeys.items()}
    stamps = {w.pk: found.get((FIELD, w.pk), 0) for w in walls}
    base = f"sealwalk:field:{FIELD_VERSION}:{building_kind}:{rules_digest(rules)}"
    keys = {w.pk: f"{base}:{akeys[w.pk]}:{stamps[w.pk]}" for w in walls}
    hit = cache.get_many(list(keys.values()))
    out = {pk: hit[key] for pk, key in keys.items() if key in hit}
    cold = [w for w in walls if w.pk not in out]
    if cold:
        ids = [w.pk for w in cold]
        pairs: dict[int, list] = {i: [] for i in ids}
        for p in RoomPair.objects.filter(wall_id__in=ids).order_by("id"):
            pairs[p.wall_id].append(p)
        overrides: dict[int, list] = {i: [] for i in ids}
        for o in JunctionOverride.objects.filter(wall_id__in=ids).order_by("position"):
            overrides[o.wall_id].append(o)
        tests: dict[int, list] = {i: [] for i in ids}
        for t in FieldTest.objects.filter(wall_id__in=ids, removed=False).order_by("-tested_on", "-id"):
            tests[t.wall_id].append(entry_of_test(t))
        if audits is None:
            audits = audits_for_walls(cold)
        fresh = {}
        for w in cold:
            res = compute_field(w, audits[w.pk], pairs[w.pk], overrides[w.pk], building_kind, rules)
            res["tests"] = tests[w.pk]
            fresh[keys[w.pk]] = out[w.pk] = res
        cache.set_many(fresh, AUDIT_TIMEOUT)
    return out


def field_prediction(wall) -> dict:
    """The cached field prediction of one wall (its job's building kind)."""
    return field_for_walls([wall], wall.job)[wall.pk]


def rounded(value: Any) -> Any:
    """A number for display: integers stay, floats to one decimal, None/NaN as None."""
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return None
    return value if isinstance(value, int) else round(float(value), 1)
