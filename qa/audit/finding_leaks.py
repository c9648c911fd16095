"""One finding as a finding spec of the whole-wall model; a wall's construction and doors for that model.

:func:`finding_spec` turns a recorded finding (SI sizes, fill, face, count, its seal point) into the
mapping :func:`acoustics.wall_model` reads (fields in :mod:`acoustics.wall_findings`);
:class:`WallContext` holds what every finding of one wall shares: the construction (layers, or the
lab curve with the geometry the record knows) and the door sets. :func:`qa.audit.summary.wall_inputs`
uses these to build a wall's model inputs.

Mapping (record -> engine):

- slit, hole, ring, open area -> the same kind; ``face`` a/b/through, ``fill``, ``depth`` as recorded.
  A through gap in a cavity wall is a see-through passage (a straight aperture of full depth, the
  engine's default, flagged "see_through_assumed"), except at a seal point where the gap is one in
  each face with the cavity between (:data:`CAVITY_POINTS`: the head gap at the deck,
  ``fill_in_path``); a ring through a cavity wall is the gap round the pipe in each leaf with the
  fill packed round the pipe and no sleeve (:data:`POINT_DEFAULTS`).
- back-to-back boxes -> ``boxes`` through, leak area = the recorded area of one box, one bay, fill
  behind; an unsealed back-box in one face (seal point "back-box-seal-a|b") -> ``boxes`` in that face.
- door seal points (bottom, head, jambs, leaf fit) on a wall with a door opening of known curve ->
  ``door_seal`` on that door (a :class:`acoustics.DoorSet`); without a door opening they stay slits.
- bridge, missing insulation, channel short, missing layer -> the same kinds (they need the wall
  type's layers; on a lab-curve wall the engine refuses them and the finding is listed as not modelled).
- an edge gap takes its edge (bottom, head, side) from its seal point; ``reported_fixed`` = status
  "fixed" (a crew reported the fix, not yet verified).
- where the finding records its position along the wall (``along_m`` from the end ``along_from``,
  ends named as seen from face A), ``x`` is that distance from the left end seen from face A, so
  openings on opposite faces that face each other are joined by the direct cavity path; without it
  the engine takes them far apart (flag "position_unknown").

References
----------
.. [1] Sealwalk acoustics method notes, Sections 5-7 and 15 (leak, defect and whole-wall models).
"""

from __future__ import annotations

import math

import numpy as np

from ..choices import FindingStatus, GapKind
from .curves import N_BANDS, tl_array

#: Each gap kind's words (Django's ``get_kind_display`` looks them up anew for every finding).
KIND_LABEL = dict(GapKind.choices)

#: One layer of 15.9 mm (5/8 in) gypsum board: face thickness of a lab-curve wall type (common
#: practice, no source; the engine's default too).
DEFAULT_BOARD_M = 0.0159
#: Constructions built as one leaf (no cavity): a gap in one face goes through.
SINGLE_LEAF = ("masonry", "door")
#: Seal points whose through gap is an opening in each face with the cavity between them (the head
#: gap at the deck: boards short of the deck on both faces). Other through gaps (under the track on
#: the slab, open deck flutes over the head, a hole drilled through) stay straight passages.
CAVITY_POINTS = frozenset({"head"})
#: Edge of each perimeter seal point (an edge gap without a seal point is taken as a side edge).
POINT_EDGE = {
    "bottom-perimeter-a": "bottom",
    "bottom-perimeter-b": "bottom",
    "track-to-floor": "bottom",
    "door-bottom": "bottom",
    "threshold": "bottom",
    "head": "head",
    "head-seal": "head",
}
#: Extra engine fields per seal point (the template's defaults for what the inspector cannot see):
#: pipes and ducts through a stud wall without a sleeve, fill packed round them.
POINT_DEFAULTS: dict[str, dict] = {
    "pipe-penetrations": {"sleeve": False, "pipe_fill": "packed"},
    "duct-penetrations": {"sleeve": False, "pipe_fill": "packed"},
}
#: Door seal points -> (part, state) of :func:`acoustics.door_leak`.
DOOR_SEALS = {
    "door-bottom": ("bottom", "undercut"),
    "head-seal": ("head_jamb", "gapped"),
    "jamb-seals": ("head_jamb", "gapped"),
    "leaf-fit": ("head_jamb", "gapped"),
}
#: Unsealed back-box in one face: a box as built, not an open hole.
BOX_POINTS = frozenset({"back-box-seal-a", "back-box-seal-b"})


class Unmodelled(ValueError):
    """A finding the engine cannot model on this wall (the message says why)."""


def fill_gaps(tl: np.ndarray) -> tuple[np.ndarray, bool]:
    """A stored curve with missing bands filled from the nearest measured band; True if any was filled."""
    ok = np.isfinite(tl)
    if ok.all() or not ok.any():
        return tl, False
    idx = np.arange(N_BANDS)
    return np.interp(idx, idx[ok], tl[ok]), True


def _assembly_spec(wall_type) -> dict | None:
    """The wall type's layers when the engine accepts them, else None."""
    import acoustics

    if not wall_type.layers:
        return None
    try:
        acoustics.Assembly.from_dict(wall_type.layers)
    except acoustics.AcousticsError:
        return None
    return wall_type.layers


def _lab_construction(wall_type, layers: dict | None) -> tuple[dict, list[str]]:
    """A lab-curve construction: the stored curve, leaves and thickness, the cavity from the layers."""
    tl, filled = fill_gaps(tl_array(wall_type.tl))
    leaves = 1 if wall_type.construction in SINGLE_LEAF else 2
    if layers is not None:
        leaves = len(layers.get("leaves") or ()) or leaves
    spec: dict = {"tl": tl, "leaves": leaves, "thickness": float(wall_type.thickness_m)}
    flags = ["tl_gaps_filled"] if filled else []
    if leaves == 2 and layers is not None:
        cav = layers.get("cavity") or {}
        if cav.get("depth"):
            spec["cavity"] = {"depth": cav["depth"], "absorber": cav.get("absorber") or {}}
        spacing = (layers.get("connection") or {}).get("spacing")
        if spacing:
            spec["stud_spacing"] = spacing
    if leaves == 2 and not (spec.get("cavity") or {}).get("absorber"):
        flags.append("cavity_fill_unknown")
    return spec, flags


class WallContext:
    """What every finding of one wall needs: its size, construction and door sets.

    The construction is the wall type's layers (:class:`acoustics.Assembly`, predicted at this wall's
    size) when its curve is predicted from them; otherwise the stored lab curve, split into two leaves
    for a stud wall (cavity depth and fill from the layers when known), one leaf for masonry or a door.
    """

    def __init__(self, wall, memo: dict | None = None):
        wt = wall.wall_type
        self.wall, self.wall_type = wall, wt
        self.area = float(wall.length_m) * float(wall.height_m)
        self.height = float(wall.height_m)
        self.memo = memo if memo is not None else {}
        key = ("construction", wt.pk, wt.updated_at)
        if key not in self.memo:
            layers = _assembly_spec(wt)
            if layers is not None and wt.tl_source == "predicted":
                self.memo[key] = (layers, [])
            else:
                self.memo[key] = _lab_construction(wt, layers)
        self.construction, self.flags = self.memo[key]
        self.layered = "tl" not in self.construction
        leaves = self.construction.get("leaves")
        self.single_leaf = (len(leaves) if isinstance(leaves, list) else leaves) == 1
        self.raw_tl = tl_array(wt.tl)
        self.door_index: int | None = None


def _edge(f) -> str | None:
    if not f.at_edge:
        return None
    key = f.seal_point.template_key if f.seal_point is not None else ""
    return POINT_EDGE.get(key, "side")


def _point(f) -> str:
    return f.seal_point.template_key if f.seal_point is not None else ""


def position_x(f, wall_length: float) -> float | None:
    """The finding's distance from the left end of the wall seen from face A, m (None if not recorded)."""
    along = getattr(f, "along_m", None)
    if along is None:
        return None
    x = wall_length - along if getattr(f, "along_from", "") == "end" else along
    return min(max(float(x), 0.0), wall_length)


def finding_spec(f, ctx: WallContext) -> dict:
    """One finding as a finding spec of :func:`acoustics.wall_model` (SI; see the module notes).

    Raises :class:`Unmodelled` when the record cannot say what the engine needs (an open area with
    no size).
    """
    point = _point(f)
    spec: dict = {
        "id": str(f.pk),
        "kind": f.kind,
        "label": f"{KIND_LABEL.get(f.kind, f.kind)} #{f.pk}",
        "count": int(f.count or 1),
        "reported_fixed": f.status == FindingStatus.FIXED,
    }
    x = position_x(f, float(ctx.wall.length_m))
    if x is not None:
        spec["x"] = x
    if point in DOOR_SEALS and ctx.door_index is not None:
        part, state = DOOR_SEALS[point]
        spec.update(kind="door_seal", door=ctx.door_index, part=part, state=state)
        if f.width_m:
            spec["width"] = f.width_m
        if part == "head_jamb":
            spec["length"] = f.length_m or 0.3
        return spec
    if f.kind == GapKind.BACK_TO_BACK or point in BOX_POINTS:
        spec.update(kind="boxes", face=f.face if f.kind != GapKind.BACK_TO_BACK else "through")
        if f.area_m2 is not None:
            spec["leak_area"] = f.area_m2
        return spec
    if f.kind in (GapKind.SLIT, GapKind.HOLE, GapKind.RING, GapKind.OPEN_AREA):
        spec["face"] = f.face
        spec["fill"] = f.fill
        for name, value in (
            ("width", f.width_m),
            ("length", f.length_m),
            ("diameter", f.diameter_m),
            ("depth", f.depth_m),
        ):
            if value:
                spec[name] = value
        if f.kind == GapKind.OPEN_AREA:
            area = f.area_m2 or (f.width_m or 0) * (f.length_m or 0)
            if not area:
                raise Unmodelled("an open area needs its area (or width and length)")
            spec["area"] = area
            spec.pop("width", None), spec.pop("length", None)
        edge = _edge(f)
        if edge:
            spec["edge"] = edge
        if f.face == "through" and not ctx.single_leaf:
            if f.kind == GapKind.RING:
                spec.update(POINT_DEFAULTS.get(point, {"sleeve": False, "pipe_fill": "packed"}))
            elif point in CAVITY_POINTS:
                spec["fill_in_path"] = True
            if spec.get("fill_in_path") or (f.kind == GapKind.RING and not spec.get("sleeve")):
                spec.pop("depth", None)  # each face's opening is as deep as its board
        return spec
    if f.kind == GapKind.BRIDGE:
        if f.length_m:
            spec["length"] = f.length_m
        return spec
    if f.kind in (GapKind.MISSING_INSULATION, GapKind.CHANNEL_SHORT, GapKind.MISSING_LAYER):
        if not f.area_m2:
            raise Unmodelled(f"a {f.get_kind_display().lower()} needs its affected area")
        spec["area"] = min(float(f.area_m2), ctx.area)
        if f.kind == GapKind.MISSING_LAYER:
            spec["face"] = "b" if f.face == "b" else "a"
        return spec
    raise Unmodelled(f"kind {f.kind!r} has no model")


def opening_row(o, scheme: str) -> tuple[dict, np.ndarray | None, list[str]]:
    """An opening's row for pages, its curve (filled where bands are missing) and flags."""
    import acoustics

    row = {"id": o.pk, "label": str(o), "kind": o.kind, "area": o.area_m2, "rating": o.rating}
    flags: list[str] = []
    if o.tl:
        tl, row["source"] = tl_array(o.tl), "curve"
        if not np.isfinite(tl).any():
            row["source"] = "unknown"
            return row, None, ["opening_unknown"]
        tl, filled = fill_gaps(tl)
        if filled:
            flags.append("tl_gaps_filled")
    elif o.rating is not None:
        tl, row["source"] = fill_gaps(acoustics.contour(scheme, o.rating))[0], "rating contour"
        flags.append("opening_rating_contour")
    else:
        row["source"] = "unknown"
        return row, None, ["opening_unknown"]
    return row, tl, flags


def door_set(o, tl: np.ndarray) -> dict:
    """A door opening as a door set of the engine (leaf curve with its seals working, 45 mm leaf)."""
    return {
        "width": float(o.width_m),
        "height": float(o.height_m),
        "leaf_tl": [float(v) for v in tl],
        "label": str(o),
    }


def is_door_seal(f) -> bool:
    return _point(f) in DOOR_SEALS


def finite(v: float) -> float | None:
    return v if math.isfinite(v) else None
