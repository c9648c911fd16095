"""One model per wall: the construction, its openings and doors, and every open finding at once.

:func:`wall_model` builds a :class:`WallModel`; :func:`acoustics.wall_audit.audit_wall` prices each
finding on it. The model is the wall's transmitted power per band (m^2, S tau, diffuse field) as a
function of which findings are open (x_k = 1 open, 0 fixed):

    W(x) = W_0 + sum_k L_k x_k + sum_{k<l} M_kl x_k x_l.

- W_0: the intact wall (net area x its predicted or laboratory tau), openings (S_i tau_i) and door
  sets (leaf and designed seals) [1]_.
- L_k: what finding k passes by itself:
  * a gap in one face of a cavity wall degrades that leaf inside the double-leaf model: the cavity
    path scales with the leaf's tau, so an opening of transmission area a adds a tau_cav / tau_leaf
    (the wall's own cavity-path and leaf tau; method notes 5.3 and 7.5 [2]_);
  * a finding with openings in both faces (back-to-back boxes, a pipe through both leaves without
    a sleeve, a through gap whose passage is closed by the fill) adds its own
    aperture-cavity-aperture path a_A a_B X (:mod:`acoustics.cavity_paths`);
  * a true through-path (a see-through gap, a gap in a single-leaf wall, a sleeve, a door seal)
    is a straight aperture of full depth (:mod:`acoustics.leaks`, :mod:`acoustics.doors`);
  * a non-gap defect (bridge, missing batt, shorted channel, missing layer) changes the leaves or
    the structural paths (:mod:`acoustics.defects`).
- M_kl >= 0: what findings k and l pass only together: openings on opposite faces joined through
  the cavity (a_p a_q X_pq), or gaps along one edge of both faces joined under a single plate
  (face gap, the joint under the plate, face gap: :func:`acoustics.compound_gaps.series_slit` over the
  overlap of the two gaps; the plate joint's gap is a wall parameter).

Every term is >= 0, so fixing a finding never lowers the rating, and two findings on opposite
faces damage the wall more together than apart.

Finding spec (mapping; SI units; the adapter passes one per open finding): see :data:`SPEC_KEYS` and
the contributor guide. Bad input raises :class:`acoustics.GeometryError` naming ``findings[i].field``.

References
----------
.. [1] Hopkins, C. (2007) *Sound Insulation*, Eq. 4.92 (composite by energy sum).
.. [2] Sealwalk acoustics method notes, Sections 5.3, 6 and 7.5.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from functools import lru_cache
from typing import Any

import numpy as np
import numpy.typing as npt

from .bands import N_BANDS
from .cavity_paths import Port, pair_coupling
from .compound_gaps import series_slit
from .construction import Construction, _construction
from .doors import DoorSet
from .errors import GeometryError
from .wall_findings import FINDING_KINDS, SPEC_KEYS, Part, _f, read_finding

Floats = npt.NDArray[np.float64]

__all__ = [
    "WallModel",
    "Construction",
    "Part",
    "wall_model",
    "MODEL_VERSION",
    "FINDING_KINDS",
    "SPEC_KEYS",
    "WALL_FLAG_TEXT",
]

#: Version of the whole-wall defect model (part of every audit's engine version).
MODEL_VERSION = "wall-model/1"
#: Gap under an unsealed plate or runner on a slab, m (1 mm; common practice, no source: floors and
#: slabs are not flat, and a plate is rarely bedded in sealant unless the specification asks).
PLATE_GAP = 0.001

WALL_FLAG_TEXT = {
    "cavity_path_derived": "opening-cavity-opening path from an energy balance derived here "
    "(Craik's SEA frame); no published measurement of this wall type checks it",
    "position_unknown": "positions along the wall not recorded: openings on opposite faces taken as "
    "far apart (whole-cavity energy balance only); record positions if they face each other",
    "plate_joint_assumed": "gaps along one edge of both faces taken as joined under the plate "
    "(plate not sealed to the structure)",
    "lab_curve_split": "wall known only by its lab curve: each face taken to carry half its TL in dB, "
    "cavity assumed",
    "single_leaf_through": "single-leaf wall: the gap goes straight through",
    "see_through_assumed": "through gap taken as an open passage (fill cut away or absent in its path)",
}


@dataclass(frozen=True, eq=False)
class WallModel:
    """A wall's whole model: ``base`` (21,), ``parts``, ``cross`` (n, n, 21) symmetric, m^2.

    ``power(x)`` is W(x) of the module notes for an open mask x (n,) of 0/1.
    """

    construction: Construction
    area: float
    base: Floats
    parts: tuple[Part, ...]
    cross: Floats
    cross_path: dict[tuple[int, int], str] = field(default_factory=dict)
    flags: tuple[str, ...] = ()

    @property
    def linear(self) -> Floats:
        return np.array([p.linear for p in self.parts]).reshape(len(self.parts), N_BANDS)

    def power(self, x: npt.ArrayLike | None = None) -> Floats:
        """Transmitted power W(x) per band, m^2 (x: open mask, default all open)."""
        n = len(self.parts)
        mask = np.ones(n) if x is None else np.asarray(x, dtype=np.float64)
        w: Floats = self.base + mask @ self.linear + 0.5 * np.einsum("k,klb,l->b", mask, self.cross, mask)
        return w

    def tl(self, x: npt.ArrayLike | None = None) -> Floats:
        """TL of the wall with the findings of mask x open, dB."""
        return -10.0 * np.log10(self.power(x) / self.area)


# ------------------------------------------------------------------ cross terms
@lru_cache(maxsize=1024)
def _join_leak(wa: float, ta: float, gap: float, plate: float, wb: float, tb: float, length: float) -> Floats:
    return series_slit([(wa, ta), (gap, plate), (wb, tb)], length).area


def _plate_join(p: Port, q: Port, wp: float, wq: float, con: Construction, gap: float) -> Floats | None:
    """Gaps along one edge of both faces joined under a single plate: face gap, plate joint, face gap."""
    if not (
        con.single_plate
        and p.edge in ("bottom", "head", "side")
        and p.edge == q.edge
        and p.length
        and q.length
    ):
        return None
    if p.x is None or q.x is None:
        ov = min(p.length, q.length)
    else:
        ov = max(min(p.x + p.length, q.x + q.length) - max(p.x, q.x), 0.0)
    if ov <= 0 or wp <= 0 or wq <= 0 or gap <= 0:
        return np.zeros(N_BANDS)
    a, b = (p, q) if p.face == 0 else (q, p)
    wa, wb = (wp, wq) if p.face == 0 else (wq, wp)
    return _join_leak(wa, con.boards[0], gap, con.cavity.depth, wb, con.boards[1], round(ov, 6))


def _cross(
    parts: Sequence[Part], con: Construction, gap: float
) -> tuple[Floats, dict[tuple[int, int], str], set[str]]:
    n = len(parts)
    m = np.zeros((n, n, N_BANDS))
    how: dict[tuple[int, int], str] = {}
    flags: set[str] = set()
    if con.leaves != 2:
        return m, how, flags
    floor = con.leaf_cross()  # the same for every pair
    faces = [frozenset(p.face for p in part.ports) for part in parts]
    for k in range(n):
        if not faces[k]:
            continue
        for l in range(k + 1, n):
            if not faces[l] or (len(faces[k] | faces[l]) == 1):
                continue  # no port of one on the other face: nothing joins them (most pairs of a wall)
            total = np.zeros(N_BANDS)
            kinds = []
            for p in parts[k].ports:
                for q in parts[l].ports:
                    if p.face == q.face:
                        continue
                    join = _plate_join(p, q, parts[k].edge_width, parts[l].edge_width, con, gap)
                    if join is not None:
                        total += join
                        kinds.append("under the plate")
                        flags.add("plate_joint_assumed")
                        continue
                    x, kind = pair_coupling(con.cavity, p, q)
                    total += p.area * q.area * np.maximum(x, floor)
                    kinds.append(kind)
                    if kind == "reverberant":
                        flags.add("position_unknown")
            if kinds:
                m[k, l] = m[l, k] = total
                how[(k, l)] = ", ".join(dict.fromkeys(kinds))
    return m, how, flags


def wall_model(
    construction: Any,
    area: float,
    *,
    height: float = 2.7,
    openings: Sequence[dict[str, Any]] = (),
    doors: Sequence[DoorSet | dict[str, Any]] = (),
    findings: Sequence[dict[str, Any]] = (),
    plate_gap: float = PLATE_GAP,
) -> WallModel:
    """Build a wall's whole model.

    Parameters
    ----------
    construction : dict or Assembly
        A layered wall spec (:mod:`acoustics.assembly`), or a lab-curve wall
        ``{"tl": (21,) dB, "leaves": 1 | 2, "thickness": m, "cavity": {...}, "stud_spacing": m}``.
    area : float
        Wall area S (including its openings), m^2.
    height : float
        Wall height, m.
    openings : sequence of mapping
        Windows and other fixed openings: ``{"area": m^2, "tl": (21,) dB}``.
    doors : sequence of DoorSet or mapping
        Door sets (:class:`acoustics.doors.DoorSet`); findings of kind "door_seal" refer to them by index.
    findings : sequence of mapping
        Open findings (module notes; fields in the contributor guide).
    plate_gap : float
        Gap under the plates or runners, m, joining edge gaps of both faces on a single-plate wall
        (default :data:`PLATE_GAP`; 0 = plates sealed to the structure, no join).

    Returns
    -------
    WallModel
    """
    s = _f({"area": area}, "area", "wall")
    h = _f({"height": height}, "height", "wall")
    con = _construction(construction, s, h)
    ds = [d if isinstance(d, DoorSet) else DoorSet.from_dict(d) for d in doors]
    base = np.zeros(N_BANDS)
    used = 0.0
    for j, o in enumerate(openings):
        if not isinstance(o, dict):
            raise GeometryError(f"openings[{j}] must be a mapping with area and tl")
        oa = _f(o, "area", f"openings[{j}]")
        otl = np.array(o.get("tl"), dtype=float)
        if otl.shape != (N_BANDS,) or not np.all(np.isfinite(otl)):
            raise GeometryError(f"openings[{j}].tl must be a finite curve over the {N_BANDS} bands, dB")
        base += oa * 10 ** (-otl / 10)
        used += oa
    for d in ds:
        base += d.area * 10 ** (-d.leaf_tl / 10) + d.design_leak()
        used += d.area
    if used >= s:
        raise GeometryError(
            f"openings and doors ({used:g} m^2) must be smaller than the wall area ({s:g} m^2)"
        )
    base += (s - used) * 10 ** (-con.tl / 10)
    parts = tuple(read_finding(i, f, con, ds, s) for i, f in enumerate(findings))
    ids = [p.id for p in parts]
    if len(set(ids)) != len(ids):
        raise GeometryError("findings[].id must be unique within a wall")
    gap = _f({"plate_gap": plate_gap}, "plate_gap", "wall", positive=False)
    cross, how, flags = _cross(parts, con, gap)
    return WallModel(con, s, base, parts, cross, how, tuple(sorted(flags)) + con.flags)
