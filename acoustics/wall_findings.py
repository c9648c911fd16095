"""Finding specs read into the parts of a wall's model (:mod:`acoustics.wall_model`).

Each finding spec (a mapping in SI units, one per open finding) becomes a :class:`Part`: the power it
passes by itself (``linear``, m^2 per band) and its openings into the cavity (``ports``), which
:mod:`acoustics.wall_model` joins with the openings of other findings on the opposite face. The
models each kind uses are listed in :mod:`acoustics.wall_model`; the fields per kind are in the
contributor guide. Bad input raises :class:`acoustics.GeometryError` naming ``findings[i].field``.

References
----------
.. [1] Sealwalk acoustics method notes, Sections 5.3, 6 and 7.5.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from functools import lru_cache
from typing import TYPE_CHECKING, Any, Literal, overload

import numpy as np
import numpy.typing as npt

from . import defects
from .assembly import Assembly
from .boxes import BoxSpec, box_opening, box_pair
from .cavity_paths import Port, direct_coupling, line_coupling
from .compound_gaps import annular_gap
from .doors import DoorSet, door_leak
from .errors import GeometryError
from .leaks import Leak, filled_gap, hole, open_area, skin_gap, slit

if TYPE_CHECKING:
    from .construction import Construction

#: Board thickness assumed for a one-face gap when the layers are unknown, m (15.9 mm board).
DEFAULT_BOARD = 0.0159

__all__ = ["Part", "read_finding", "FINDING_KINDS", "SPEC_KEYS"]

FINDING_KINDS = (
    "slit",
    "hole",
    "ring",
    "open_area",
    "bridge",
    "missing_insulation",
    "channel_short",
    "missing_layer",
    "boxes",
    "door_seal",
    "added",
)
GAP_KINDS = ("slit", "hole", "ring", "open_area")
#: Keys a finding spec may carry (anything else is refused, so a typo never passes silently).
SPEC_KEYS = frozenset(
    "id kind label face width length diameter area depth count fill edge x fill_in_path sleeve pipe_fill "
    "leak_area oversize pad offset same_bay fill_behind door part state points fraction "
    "remaining_thickness reported_fixed added".split()
)
#: Fibre packed in a gap, Pa s/m^2 (loose mineral wool; common practice, no source).
FIBRE_FLOW_RESISTIVITY = 10000.0
#: Surface density of a thin film closing a gap (about 1 mm of sealant), kg/m^2.
SKIN_SURFACE_DENSITY = 1.5
#: Gap under an unsealed plate or runner on a slab, m (1 mm; common practice, no source: floors and


@dataclass(frozen=True)
class Part:
    """One finding inside the wall's model (see the module notes for L and the ports)."""

    id: str
    kind: str
    label: str
    linear: npt.NDArray[np.float64]
    ports: tuple[Port, ...] = ()
    path: str = ""
    path_kind: str = ""
    flags: tuple[str, ...] = ()
    reported_fixed: bool = False
    edge_width: float = 0.0


# ------------------------------------------------------------------ spec reading
def _f(spec: dict[str, Any], key: str, where: str, default: Any = None, *, positive: bool = True) -> Any:
    v = spec.get(key, default)
    if v is None:
        return None
    try:
        x = float(v)
    except (TypeError, ValueError):
        raise GeometryError(f"{where}.{key} must be a number, got {v!r}") from None
    if not np.isfinite(x) or (x <= 0 if positive else x < 0):
        raise GeometryError(f"{where}.{key} must be {'> 0' if positive else '>= 0'}, got {v!r}")
    return x


def _need(spec: dict[str, Any], key: str, where: str) -> float:
    v = _f(spec, key, where)
    if v is None:
        raise GeometryError(f"{where}.{key} is required for kind {spec.get('kind')!r}")
    return float(v)


@lru_cache(maxsize=4096)
def _gap_leak(
    kind: str,
    fill: str,
    width: float,
    length: float,
    diameter: float,
    area: float,
    depth: float,
    edge: bool,
) -> Leak:
    """A slit, hole, ring or open area as a path of ``depth`` m (memoised: templates repeat geometry)."""
    if kind == "open_area" and fill == "none":
        return open_area(area)
    if kind == "open_area":
        kind, diameter = "hole", float(np.sqrt(4 * area / np.pi))
    if kind == "ring":
        if fill == "fibre":
            return annular_gap(diameter, width, depth, flow_resistivity=FIBRE_FLOW_RESISTIVITY)
        if fill == "skin":
            return skin_gap(width, np.pi * (diameter + width), depth, surface_density=SKIN_SURFACE_DENSITY)
        return annular_gap(diameter, width, depth)
    shape = "slit" if kind == "slit" else "hole"
    w, L = (width, length) if shape == "slit" else (diameter, 1.0)
    if fill == "fibre":
        return filled_gap(w, L, depth, flow_resistivity=FIBRE_FLOW_RESISTIVITY, shape=shape)
    if fill == "skin":
        return skin_gap(w, L, depth, surface_density=SKIN_SURFACE_DENSITY, shape=shape)
    return slit(w, L, depth, edge=edge) if shape == "slit" else hole(w, depth)


def _gap(spec: dict[str, Any], where: str, depth: float) -> Leak:
    kind = spec["kind"]
    fill = spec.get("fill", "none")
    if fill not in ("none", "fibre", "skin"):
        raise GeometryError(f"{where}.fill must be 'none', 'fibre' or 'skin', got {fill!r}")
    # A dimension the kind does not use stays 0.0 and is never read.
    w = L = dia = a = 0.0
    if kind == "slit":
        w, L = _need(spec, "width", where), _need(spec, "length", where)
    elif kind == "hole":
        dia = _need(spec, "diameter", where)
    elif kind == "ring":
        w, dia = _need(spec, "width", where), _need(spec, "diameter", where)
    else:
        given = _f(spec, "area", where)
        a = _need(spec, "width", where) * _need(spec, "length", where) if given is None else given
    edge = spec.get("edge") in ("bottom", "head", "side")
    return _gap_leak(kind, fill, w, L, dia, a, round(float(depth), 6), edge)


@lru_cache(maxsize=512)
def _unit_defect(asm: Assembly, kind: str, face: int, remaining: float) -> npt.NDArray[np.float64]:
    if kind == "missing_insulation":
        return defects.insulation_defect(asm, 1.0, remaining_thickness=remaining).area
    if kind == "channel_short":
        return defects.channel_short_circuit(asm, 1.0).area / asm.area
    return defects.missing_layer(asm, face, 1.0).area


@overload
def _face(spec: dict[str, Any], where: str, allow_through: Literal[False]) -> int: ...
@overload
def _face(spec: dict[str, Any], where: str, allow_through: bool = True) -> int | None: ...
def _face(spec: dict[str, Any], where: str, allow_through: bool = True) -> int | None:
    f = spec.get("face", "through")
    if f in ("a", "A", 0):
        return 0
    if f in ("b", "B", 1):
        return 1
    if f == "through" and allow_through:
        return None
    raise GeometryError(f"{where}.face must be 'a', 'b'{' or through' if allow_through else ''}, got {f!r}")


def read_finding(
    i: int, spec: dict[str, Any], con: Construction, doors: Sequence[DoorSet], area: float
) -> Part:
    where = f"findings[{i}]"
    if not isinstance(spec, dict):
        raise GeometryError(f"{where} must be a mapping with a 'kind'")
    unknown = set(spec) - SPEC_KEYS
    if unknown:
        raise GeometryError(f"{where} has unknown field(s) {sorted(unknown)}")
    kind = spec.get("kind")
    if kind not in FINDING_KINDS:
        raise GeometryError(f"{where}.kind must be one of {FINDING_KINDS}, got {kind!r}")
    count = spec.get("count", 1)
    if isinstance(count, bool) or not isinstance(count, int) or count < 1:
        raise GeometryError(f"{where}.count must be a whole number >= 1, got {count!r}")
    pid = str(spec.get("id", i))
    common = {
        "id": pid,
        "kind": kind,
        "label": str(spec.get("label", "")),
        "reported_fixed": bool(spec.get("reported_fixed", False)),
    }
    x = _f(spec, "x", where, positive=False)
    try:
        if kind in GAP_KINDS:
            return _gap_part(spec, where, con, count, x, common)
        if kind == "boxes":
            return _box_part(spec, where, con, count, x, common)
        if kind == "door_seal":
            return _door_part(spec, where, doors, count, common)
        if kind == "added":
            lk = Leak.added(spec.get("added"), kind="added")
            return Part(linear=lk.area * count, path="added transmission area", path_kind="added", **common)
        return _defect_part(spec, where, con, count, area, common)
    except GeometryError as exc:
        msg = str(exc)
        raise GeometryError(msg if msg.startswith(where) else f"{where}: {msg}") from None


def _gap_part(
    spec: dict[str, Any], where: str, con: Construction, count: int, x: float | None, common: dict[str, Any]
) -> Part:
    face = _face(spec, where)
    edge = spec.get("edge")
    if edge not in (None, "bottom", "head", "side"):
        raise GeometryError(f"{where}.edge must be 'bottom', 'head', 'side' or absent, got {edge!r}")
    length = float(spec["length"]) if spec["kind"] == "slit" else 0.0
    if con.leaves == 1:
        lk = _gap(spec, where, _f(spec, "depth", where) or con.depth)
        return Part(
            linear=lk.area * count,
            path="straight aperture (single-leaf wall)",
            path_kind="straight",
            flags=(*lk.flags, "single_leaf_through"),
            **common,
        )
    if face is not None:
        lk = _gap(spec, where, _f(spec, "depth", where) or con.boards[face])
        port = Port(face, lk.area * count, x, length * count if edge else length, edge)
        where_txt = f" at the {edge} edge" if edge else ""
        return Part(
            linear=con.face_factor(face) * port.area,
            ports=(port,),
            path=f"one face: leaf {'AB'[face]}{where_txt}, into the cavity",
            path_kind="one_face",
            flags=lk.flags + con.flags,
            edge_width=float(spec.get("width") or 0.0),
            **common,
        )
    geom = con.cavity
    if spec["kind"] == "ring" and not spec.get("sleeve", False):
        pipe_fill = spec.get("pipe_fill", "packed")
        if pipe_fill not in ("packed", "none"):
            raise GeometryError(f"{where}.pipe_fill must be 'packed' or 'none', got {pipe_fill!r}")
        g = geom if pipe_fill == "packed" else geom.with_fill(0.0)
        a = [_gap(spec, where, con.boards[k]).area * count for k in (0, 1)]
        joint = (
            a[0] * a[1] / count * np.maximum(g.reverberant(True) + direct_coupling(g, 0.0), con.leaf_cross())
        )
        lin = con.face_factor(0) * a[0] + con.face_factor(1) * a[1] + joint
        fill = "fill packed round the pipe" if g.filled else "no fill round the pipe"
        return Part(
            linear=lin,
            ports=(Port(0, a[0], x), Port(1, a[1], x)),
            path=f"cavity path A->B round the pipe: ring gap in each leaf, facing, {fill}",
            path_kind="cavity_path",
            flags=("annulus_derived", "cavity_path_derived"),
            **common,
        )
    if spec.get("fill_in_path", False) and spec["kind"] != "ring":
        a = [_gap(spec, where, con.boards[k]).area * count for k in (0, 1)]
        if spec["kind"] == "slit":
            pa, pb = Port(0, a[0], x, length, "through"), Port(1, a[1], x, length, "through")
            xx = geom.reverberant(True) + line_coupling(geom, length, length, length)
        else:
            pa, pb = Port(0, a[0], x), Port(1, a[1], x)
            xx = geom.reverberant(True) + direct_coupling(geom, 0.0)
        lin = (
            con.face_factor(0) * a[0]
            + con.face_factor(1) * a[1]
            + a[0] * a[1] / count * np.maximum(xx, con.leaf_cross())
        )
        fill = "filled" if geom.filled else "empty"
        return Part(
            linear=lin,
            ports=(pa, pb),
            path=f"cavity path A->B: openings facing (0.00 m apart), {fill}",
            path_kind="cavity_path",
            flags=("cavity_path_derived",),
            **common,
        )
    depth = _f(spec, "depth", where) or con.depth
    lk = _gap(spec, where, depth)
    what = "along the sleeve" if spec["kind"] == "ring" else "see-through passage"
    return Part(
        linear=lk.area * count,
        path=f"straight aperture of full depth ({depth:.3f} m), {what}",
        path_kind="straight",
        flags=(*lk.flags, "see_through_assumed") if spec["kind"] != "ring" else lk.flags,
        **common,
    )


def _box_part(
    spec: dict[str, Any], where: str, con: Construction, count: int, x: float | None, common: dict[str, Any]
) -> Part:
    box = BoxSpec(
        leak_area=_f(spec, "leak_area", where, 6.45e-4, positive=False),
        oversize=_f(spec, "oversize", where, 0.0, positive=False),
        pad=bool(spec.get("pad", False)),
        offset=_f(spec, "offset", where, 0.0, positive=False),
        same_bay=spec.get("same_bay"),
        fill_behind=spec.get("fill_behind", "cavity"),
    )
    face = _face(spec, where)
    if con.leaves == 1:
        raise GeometryError(
            f"{where}: boxes need a cavity wall; in a single-leaf wall record the gap round the box"
        )
    if face is not None:
        a = box_opening(box, con.boards[face]) * count
        return Part(
            linear=con.face_factor(face) * a,
            ports=(Port(face, a, x),),
            path=f"one face: box in leaf {'AB'[face]}, into the cavity",
            path_kind="one_face",
            flags=con.flags,
            **common,
        )
    pa, pb, joint, text = box_pair(box, con.cavity, (con.boards[0], con.boards[1]), con.leaf_cross())
    a, b = pa.area * count, pb.area * count
    lin = con.face_factor(0) * a + con.face_factor(1) * b + joint * count
    xb = None if x is None else x + box.offset
    return Part(
        linear=lin,
        ports=(Port(0, a, x), Port(1, b, xb)),
        path=text,
        path_kind="cavity_path",
        flags=("cavity_path_derived", *con.flags),
        **common,
    )


def _door_part(
    spec: dict[str, Any], where: str, doors: Sequence[DoorSet], count: int, common: dict[str, Any]
) -> Part:
    k = spec.get("door", 0)
    if isinstance(k, bool) or not isinstance(k, int) or not 0 <= k < len(doors):
        raise GeometryError(f"{where}.door must index one of the wall's {len(doors)} door(s), got {k!r}")
    # Checked (and named in the error) by door_leak.
    part: Any = spec.get("part")
    state: Any = spec.get("state")
    lk = door_leak(doors[k], part, state, width=_f(spec, "width", where), length=_f(spec, "length", where))
    return Part(
        linear=lk.area * count,
        path=f"straight aperture: door {part} {state} (Gomperts slit, Hongisto's door model)",
        path_kind="door_seal",
        flags=lk.flags,
        **common,
    )


def _defect_part(
    spec: dict[str, Any], where: str, con: Construction, count: int, area: float, common: dict[str, Any]
) -> Part:
    kind = spec["kind"]
    asm = con.assembly
    if asm is None or con.leaves != 2:
        raise GeometryError(f"kind {kind!r} needs a two-leaf wall known by its layers")
    if kind == "bridge":
        length = _f(spec, "length", where)
        lk = defects.rigid_bridge(asm, length=length) if length else defects.rigid_bridge(asm, points=count)
        return Part(
            linear=lk.area * (count if length else 1),
            path="structural path: rigid bridge between the leaves",
            path_kind="structural",
            flags=lk.flags,
            **common,
        )
    face = 0
    if kind == "missing_layer":
        face = _face(spec, where, allow_through=False)
    if kind == "channel_short" and "fraction" in spec:
        aff = _need(spec, "fraction", where) * area
    else:
        aff = _need(spec, "area", where) * count
    aff = min(aff, area)
    rem = _f(spec, "remaining_thickness", where, 0.0, positive=False) if kind == "missing_insulation" else 0.0
    unit = _unit_defect(asm, kind, face, rem)
    text = {
        "missing_insulation": "leaf/cavity change: fill missing or compressed over the area",
        "channel_short": "structural path: resilient channel short-circuited over the area",
        "missing_layer": f"leaf change: a board layer missing on leaf {'AB'[face]} over the area",
    }[kind]
    return Part(
        linear=unit * aff,
        path=text,
        path_kind="structural" if kind == "channel_short" else "leaf_change",
        **common,
    )
