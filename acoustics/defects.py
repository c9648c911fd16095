"""Defects that are not through-gaps, and gaps in one face, as added transmission areas.

Every function returns a :class:`acoustics.leaks.Leak` whose ``area`` is the
added transmission area per band (m^2) that :func:`acoustics.audit` sums on
top of the intact wall, one mechanism for all defects (DESIGN.md):

    A_added = S_affected (tau_defective - tau_intact)

with both tau from :func:`acoustics.walls.predict` on the same wall spec, the
defective one with the defect built in over the affected area S_affected.

- :func:`one_face_gap` — a gap in one leaf of a cavity wall. The leaf's tau
  becomes tau_leaf + A_gap / S (the composite of the leaf with its opening,
  A_gap = the gap's Leak area computed with the leaf thickness as depth) and
  the double-leaf model is re-run; it is **not** a through-path (method notes
  5.3, check case C20).
- :func:`channel_short_circuit` — resilient channel screwed through into the
  studs over a fraction of the wall: that part becomes a rigid single-stud wall.
- :func:`insulation_defect` — batt missing or compressed over an area.
- :func:`rigid_bridge` — a rigid line (shared blocking, a plate) or point ties
  between the leaves of a decoupled wall: Sharp's bridge terms per unit length
  or per tie (Vigran Eq. 8.22/8.26), A = L tau_M 10^2.3 / f_c,line,
  A = N tau_M 10^4.5 / f_g^2.
- :func:`back_to_back_boxes` — two boxes in the same bay without offset: over
  the box footprint the wall becomes two thin box backs on a small air gap.
- :func:`missing_layer` — a board layer missing on one face over an area.
- :func:`one_face_gap_from_lab` — fallback when the wall type is known only by
  a lab curve (no layers): A_added = A_gap sqrt(tau_wall) (derived: a cavity
  wall with two similar faces, tau_wall ~ tau_1 tau_2 above f0, so one face
  carries sqrt(tau_wall); no published validation — flagged).

References
----------
.. [1] Sealwalk acoustics method notes, Sections 5.3, 7.5 and check case C20.
.. [2] Vigran, T. E. (2008) *Building Acoustics*, Eq. 8.19-8.26.
"""

from __future__ import annotations

from dataclasses import replace
from typing import Any

import numpy as np

from .assembly import Assembly, Cavity, Connection, Leaf
from .bands import sub_band_frequencies
from .constants import C0, RHO0
from .errors import GeometryError
from .leaks import Leak
from .wall_physics import _limp_tau
from .walls import POINTS, _paths, predict

__all__ = [
    "one_face_gap",
    "channel_short_circuit",
    "insulation_defect",
    "rigid_bridge",
    "back_to_back_boxes",
    "missing_layer",
    "one_face_gap_from_lab",
]


def _asm(spec: dict[str, Any] | Assembly) -> Assembly:
    return spec if isinstance(spec, Assembly) else Assembly.from_dict(spec)


def _area(value: float, name: str, limit: float | None = None) -> float:
    v = float(value)
    if not np.isfinite(v) or v <= 0 or (limit is not None and v > limit + 1e-12):
        bound = f" and <= the wall area {limit:g} m^2" if limit is not None else ""
        raise GeometryError(f"{name} must be > 0{bound}, got {value!r}")
    return v


def _two_leaf(asm: Assembly, what: str) -> None:
    if len(asm.leaves) != 2:
        raise GeometryError(f"{what} needs a two-leaf (cavity) wall")


def _replaced(
    intact: Assembly, defective: Assembly, affected: float, kind: str, label: str, flags: tuple[str, ...] = ()
) -> Leak:
    """Leak for an area ``affected`` m^2 rebuilt as ``defective``."""
    d = predict(replace(defective, area=intact.area, perimeter_gap=0.0)).tau
    i = predict(replace(intact, perimeter_gap=0.0)).tau
    return Leak.added(np.maximum(affected * (d - i), 0.0), kind=kind, label=label, flags=flags)


def one_face_gap(spec: dict[str, Any] | Assembly, face: int, gap: Leak, *, label: str = "") -> Leak:
    """Gap in one face (leaf) of a cavity wall as an added transmission area.

    Parameters
    ----------
    spec : dict or Assembly
        The intact wall.
    face : {0, 1}
        Leaf holding the gap (0 = face A).
    gap : Leak
        The gap as if it were a through-path of that leaf alone (e.g.
        ``acoustics.leaks.hole(0.05, depth=leaf thickness)``), m^2 per band.

    Returns
    -------
    Leak
        kind "one_face_gap": S (tau_wall(leaf + gap) - tau_wall), m^2.
    """
    asm = _asm(spec)
    if face not in (0, 1):
        raise GeometryError(f"face must be 0 or 1, got {face!r}")
    if len(asm.leaves) == 1:  # a single-leaf wall has no other face: the gap goes through
        return Leak.added(
            gap.area, kind="through_gap", label=label, flags=(*gap.flags, "single_leaf_through")
        )
    f = sub_band_frequencies(POINTS)
    extra = [np.zeros(gap.area.shape), np.zeros(gap.area.shape)]
    extra[face] = gap.area / asm.area
    base = _paths(asm, f)
    hit = _paths(asm, f, (extra[0], extra[1]))
    d_tau = (hit["cavity"] + hit["bridge"] - base["cavity"] - base["bridge"]).mean(axis=-1)
    return Leak.added(
        np.maximum(asm.area * d_tau, 0.0),
        kind="one_face_gap",
        label=label,
        flags=(*gap.flags, "one_face_heuristic"),
    )


def channel_short_circuit(spec: dict[str, Any] | Assembly, fraction: float, *, label: str = "") -> Leak:
    """Resilient channel short-circuited (screws into the studs) over ``fraction`` of the wall (0-1]."""
    asm = _asm(spec)
    c = asm.connection
    if c.channel_leaf is None:
        raise GeometryError("channel_short_circuit needs a wall with a resilient channel")
    if not 0 < float(fraction) <= 1:
        raise GeometryError(f"fraction must be in (0, 1], got {fraction!r}")
    # The shorted face is screwed straight through the channel to the studs: the wall behaves as a
    # single-stud wall of the same depth (common practice; costs 15-20 points when the whole wall is shorted).
    short = replace(asm, connection=Connection(c.type, c.spacing, c.stiffness))
    return _replaced(asm, short, fraction * asm.area, "channel_short_circuit", label)


def insulation_defect(
    spec: dict[str, Any] | Assembly, area: float, *, remaining_thickness: float = 0.0, label: str = ""
) -> Leak:
    """Batt missing (remaining_thickness 0) or compressed to ``remaining_thickness`` m over ``area`` m^2."""
    asm = _asm(spec)
    _two_leaf(asm, "insulation_defect")
    a = _area(area, "area", asm.area)
    cav = asm.gap
    if not 0 <= remaining_thickness < max(cav.absorber_thickness, 1e-9):
        raise GeometryError("remaining_thickness must be >= 0 and below the designed absorber thickness")
    # Compressed fibre keeps its mass: flow resistivity rises in proportion (from memory; common practice).
    sigma = cav.flow_resistivity * cav.absorber_thickness / max(remaining_thickness, 1e-9)
    bad = replace(asm, cavity=Cavity(cav.depth, remaining_thickness, min(sigma, 200000.0)))
    kind = "missing_insulation" if remaining_thickness == 0 else "compressed_insulation"
    return _replaced(asm, bad, a, kind, label)


def rigid_bridge(
    spec: dict[str, Any] | Assembly, *, length: float = 0.0, points: int = 0, label: str = ""
) -> Leak:
    """Rigid line bridge of ``length`` m and/or ``points`` rigid ties between the two leaves.

    Notes
    -----
    Line: A = L tau_M 10^2.3 / f_c,line; point: A = N tau_M 10^4.5 / f_g^2 (Sharp's bridge terms,
    Vigran Eq. 8.22 and 8.26, rewritten per unit length / per tie), tau_M the field mass law of m1 + m2.
    """
    asm = _asm(spec)
    _two_leaf(asm, "rigid_bridge")
    if length < 0 or points < 0 or (length == 0 and points == 0):
        raise GeometryError("rigid_bridge needs length > 0 m or points >= 1")
    a, b = asm.leaves
    f = sub_band_frequencies(POINTS)
    tau_m = _limp_tau(f, a.m + b.m, asm.area, C0, RHO0).mean(axis=-1)
    fcl = ((a.m * np.sqrt(b.fc) + b.m * np.sqrt(a.fc)) / (a.m + b.m)) ** 2
    fg = (a.m * b.fc + b.m * a.fc) / (a.m + b.m)
    added = length * tau_m * 10**2.3 / fcl + points * tau_m * 10**4.5 / fg**2
    return Leak.added(added, kind="bridge", label=label)


def back_to_back_boxes(
    spec: dict[str, Any] | Assembly,
    *,
    box_area: float = 0.0065,
    count: int = 1,
    box_mass: float = 6.0,
    separation: float = 0.02,
    label: str = "",
) -> Leak:
    """Back-to-back boxes without offset: over the box footprint the wall is two box backs on a thin gap.

    Parameters
    ----------
    box_area : float
        Footprint of one box, m^2 (default 0.0065, a 2 x 4 in single-gang box).
    box_mass : float
        Surface density of box back plus device and cover, kg/m^2 (about 1 mm steel, from memory).
    separation : float
        Air gap between the two box backs, m.

    Notes
    -----
    Gaps around the boxes are separate findings (through-path leaks); this models the lost cavity.
    """
    asm = _asm(spec)
    _two_leaf(asm, "back_to_back_boxes")
    if int(count) != count or count < 1:
        raise GeometryError(f"count must be a whole number >= 1, got {count!r}")
    _area(box_area, "box_area", asm.area)
    from .materials import get_material

    steel = get_material("steel_1", 0.001 * box_mass / 7.6) if box_mass > 0 else None
    if steel is None or separation <= 0:
        raise GeometryError("box_mass and separation must be > 0")
    box = replace(
        asm, leaves=(Leaf((steel,)), Leaf((steel,))), cavity=Cavity(separation), connection=Connection("none")
    )
    return _replaced(asm, box, box_area * count, "back_to_back_boxes", label, ("through_path",))


def missing_layer(spec: dict[str, Any] | Assembly, face: int, area: float, *, label: str = "") -> Leak:
    """One board layer missing (the outermost of ``face``) over ``area`` m^2."""
    asm = _asm(spec)
    if face not in range(len(asm.leaves)):
        raise GeometryError(f"face must be 0..{len(asm.leaves) - 1}, got {face!r}")
    leaf = asm.leaves[face]
    if len(leaf.layers) < 2:
        raise GeometryError(
            "missing_layer needs a face with two or more layers (one layer missing is a hole)"
        )
    leaves = list(asm.leaves)
    leaves[face] = replace(leaf, layers=leaf.layers[:-1])
    return _replaced(
        asm, replace(asm, leaves=tuple(leaves)), _area(area, "area", asm.area), "missing_layer", label
    )


def one_face_gap_from_lab(tl: Any, gap: Leak, *, label: str = "") -> Leak:
    """One-face gap on a wall type known only by its lab curve (fallback; see module notes).

    A_added = A_gap sqrt(tau_wall): the open face's leaf is assumed to carry half the wall's TL (two
    similar faces). For a single-leaf wall use the gap as a through-path instead.
    """
    tl = np.asarray(tl, float)
    if tl.shape != gap.area.shape or not np.all(np.isfinite(tl)):
        raise GeometryError("tl must be a finite (21,) curve over BANDS")
    return Leak.added(
        gap.area * np.sqrt(10 ** (-tl / 10)),
        kind="one_face_gap",
        label=label,
        flags=(*gap.flags, "one_face_lab_fallback"),
    )
