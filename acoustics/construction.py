"""The wall itself as the whole-wall model sees it: its curve, each leaf's and the cavity path's
transmission, and the cavity between the leaves — from a layered construction (predicted) or from a
laboratory curve with the few facts the model needs (leaves, board, depth, cavity).

References
----------
.. [1] Sealwalk acoustics method notes, Sections 7.5 and 15.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from functools import lru_cache
from typing import Any

import numpy as np
import numpy.typing as npt

from .assembly import Assembly
from .bands import N_BANDS
from .cavity_paths import CavityGeometry
from .errors import GeometryError
from .walls import predict

Floats = npt.NDArray[np.float64]

#: Board thickness assumed for a leaf of a lab-curve wall when none is given, m (15.9 mm board).
DEFAULT_BOARD = 0.0159

__all__ = ["Construction", "DEFAULT_BOARD"]


@dataclass(frozen=True)
class Construction:
    """The wall itself: its curve, the leaf and cavity-path tau the openings scale, the cavity.

    Attributes
    ----------
    tl : ndarray, shape (21,)
        Designed TL of the wall itself (without openings), dB.
    leaf_tau, cavity_tau : ndarray or None
        Band tau of each leaf alone and of the cavity path (two-leaf walls).
    leaves : int
    boards : tuple of float
        Thickness of each leaf, m.
    depth : float
        Full thickness of the wall (leaf + cavity + leaf), m.
    geometry : CavityGeometry or None
    assembly : Assembly or None
        The layered construction (None: known by its lab curve only).
    flags : tuple of str
    """

    tl: Floats
    leaf_tau: tuple[Floats, ...] | None
    cavity_tau: Floats | None
    leaves: int
    boards: tuple[float, ...]
    depth: float
    geometry: CavityGeometry | None
    assembly: Assembly | None
    single_plate: bool = True
    flags: tuple[str, ...] = ()

    @property
    def cavity(self) -> CavityGeometry:
        """The cavity of a two-leaf wall (a single-leaf wall has none)."""
        if self.geometry is None:
            raise GeometryError("a single-leaf wall has no cavity")
        return self.geometry

    def _two_leaf_tau(self) -> tuple[tuple[Floats, ...], Floats]:
        if self.leaf_tau is None or self.cavity_tau is None:
            raise GeometryError("a single-leaf wall has no leaf or cavity-path tau")
        return self.leaf_tau, self.cavity_tau

    def leaf_cross(self) -> Floats:
        """The leaf model's own cross term per unit area pair, 1/m^2: tau_cav / (tau_1 tau_2 S).

        W = S K (tau_1 + a/S)(tau_2 + b/S) with K = tau_cav / (tau_1 tau_2) holds a b K / S; the joined
        path of two openings is never taken below it (the diffuse-cavity term, counted once).
        """
        leaf_tau, cavity_tau = self._two_leaf_tau()
        return cavity_tau / (leaf_tau[0] * leaf_tau[1] * self.cavity.area)

    def face_factor(self, face: int) -> Floats:
        """d W / d a for an opening of transmission area a in leaf ``face``: tau_cav / tau_leaf."""
        leaf_tau, cavity_tau = self._two_leaf_tau()
        return cavity_tau / leaf_tau[face]


@lru_cache(maxsize=128)
def _predicted(asm: Assembly) -> Construction:
    p = predict(asm)
    leaf_tau = tuple(10 ** (-t / 10) for t in p.leaf_tl)
    if len(asm.leaves) == 1:
        return Construction(
            p.tl, None, None, 1, (asm.leaves[0].thickness,), asm.leaves[0].thickness, None, asm
        )
    geom = CavityGeometry.from_assembly(asm, asm.area, asm.height)
    boards = tuple(lf.thickness for lf in asm.leaves)
    return Construction(
        p.tl,
        leaf_tau,
        10 ** (-p.cavity_tl / 10),
        2,
        boards,
        sum(boards) + geom.depth,
        geom,
        asm,
        asm.connection.type not in ("double_studs", "none"),
    )


def _construction(spec: Any, area: float, height: float) -> Construction:
    if isinstance(spec, Assembly) or (isinstance(spec, dict) and "leaves" in spec and "tl" not in spec):
        asm = spec if isinstance(spec, Assembly) else Assembly.from_dict(spec)
        return _predicted(replace(asm, area=area, height=height))
    if not isinstance(spec, dict) or "tl" not in spec:
        raise GeometryError(
            "construction must be a wall spec with leaves, an Assembly, or {'tl': curve, ...}"
        )
    tl = np.array(spec["tl"], dtype=float)
    if tl.shape != (N_BANDS,) or not np.all(np.isfinite(tl)):
        raise GeometryError(f"construction.tl must be a finite curve over the {N_BANDS} bands, dB")
    leaves = spec.get("leaves", 2)
    if leaves not in (1, 2):
        raise GeometryError("construction.leaves must be 1 or 2 for a lab-curve wall")
    thick = float(spec.get("thickness", 0.124 if leaves == 2 else 0.19))
    if leaves == 1:
        return Construction(tl, None, None, 1, (thick,), thick, None, None, True, ("lab_curve",))
    cav = spec.get("cavity") or {}
    board = float(spec.get("board", DEFAULT_BOARD))
    depth = float(cav.get("depth", max(thick - 2 * board, 0.02)))
    fill = cav.get("absorber") or {}
    bay = spec.get("stud_spacing", 0.406)
    geom = CavityGeometry(
        depth,
        float(fill.get("thickness", 0.0)),
        float(fill.get("flow_resistivity", 10000.0)),
        bay,
        height,
        area,
    )
    tau = 10 ** (-tl / 10)
    half = np.sqrt(tau)
    return Construction(
        tl,
        (half, half),
        tau,
        2,
        (board, board),
        thick,
        geom,
        None,
        bool(spec.get("single_plate", True)),
        ("lab_curve_split",),
    )
