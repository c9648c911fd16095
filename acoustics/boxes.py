"""Electrical boxes as built: what a box lets into the cavity, and a pair of boxes joined through it.

A box in a face of a cavity wall is not an open hole through the wall. It opens into the cavity
through its own leaks (knock-outs, screw holes, cable entries, the device and cover plate) and through
the gap between the box and the board cut-out. Two boxes on opposite faces are joined through the
cavity (:mod:`acoustics.cavity_paths`): their placement (back to back in one bay, or offset and by how
much), the fill behind them and putty pads or box wraps decide what the pair costs.

What the NRC study of outlet boxes in gypsum board walls reports [1]_ [2]_ (in words): box placement
matters greatly for ordinary leaky metal boxes and hardly at all for airtight ones; cavity absorption
greatly reduces the effect of badly placed boxes, most when it blocks the line of sight between them;
simple retrofits (gaskets, inserts, caulking) work. The parameters below are those levers.

Model (derived in this project):

- box opening: a_box = hole of the box's equivalent leak area (default 1 in^2 = 6.45 cm^2, the
  leaky metal box of the issue's table; "airtight" boxes 0) through the board thickness, plus the
  cut-out gap as a closed loop slit of the box perimeter (:func:`acoustics.compound_gaps.annular_gap` with
  the same perimeter); both reach the cavity;
- a putty pad or box wrap sealed to the board puts a limp mass m_pad over both:
  a -> a tau_pad, tau_pad = 1 / (1 + (omega m_pad / (2 rho0 c0))^2) (normal-incidence mass law;
  m_pad about 5 kg/m^2 for a 3 mm pad, from memory);
- the pair: a_A a_B X with X from :func:`acoustics.cavity_paths.pair_coupling` at the recorded
  offset, in one bay or not, with the cavity's fill, or without fill behind the boxes.

Safety: never work in an energised box; putty pads in fire-rated walls must be the listed product
installed to its listing; the box separation rules of the building code (e.g. 24 in between boxes on
opposite faces of a rated wall, or a listed alternative) govern; the authority having jurisdiction
decides.

References
----------
.. [1] Nightingale, T. R. T., Quirt, J. D. & Sultan, M. A., "Effect of Electrical Outlet Boxes on Sound
   Isolation of Gypsum Board Walls", NRC Construction Technology Update No. 27 (NRC Institute for
   Research in Construction).
.. [2] Nightingale, T. R. T. & Quirt, J. D. (1996), abstract 4aAA4, 132nd meeting of the Acoustical
   Society of America, Honolulu.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache
from typing import Any

import numpy as np
import numpy.typing as npt

from .bands import exact_centres
from .cavity_paths import CavityGeometry, Port, pair_coupling
from .compound_gaps import annular_gap
from .constants import C0, RHO0
from .errors import GeometryError
from .leaks import hole

__all__ = ["BoxSpec", "box_opening", "pad_factor", "BOX_LEAK_AREA", "PAD_SURFACE_DENSITY"]

#: Equivalent leak area of one ordinary metal box with device and cover, m^2 (1 in^2; the value in the
#: issue's table, from memory, no published source).
BOX_LEAK_AREA = 6.45e-4
#: Surface density of a putty pad or box wrap, kg/m^2 (about 3 mm of putty; from memory).
PAD_SURFACE_DENSITY = 5.0
#: Face of a single-gang box, m (2 x 3 in device box, about 57 x 95 mm with its ears; common practice).
BOX_FACE = (0.057, 0.095)


def _num(v: Any, name: str, lo: float = 0.0, allow_zero: bool = True) -> float:
    try:
        x = float(v)
    except (TypeError, ValueError):
        raise GeometryError(f"{name} must be a number, got {v!r}") from None
    if not np.isfinite(x) or x < lo or (not allow_zero and x == 0):
        raise GeometryError(f"{name} must be {'>' if not allow_zero else '>='} {lo:g}, got {v!r}")
    return x


@dataclass(frozen=True)
class BoxSpec:
    """One box (or a pair, one per face) as built.

    Attributes
    ----------
    leak_area : float
        Equivalent leak area of each box into the cavity, m^2 (0 for an airtight box).
    oversize : float
        Gap between box and board cut-out, m (0 = tight).
    pad : bool
        Putty pad or box wrap sealed to the board on each box.
    offset : float
        Distance along the wall between the two boxes of a pair, m (0 = back to back).
    same_bay : bool or None
        Both boxes in one stud bay (None: decided from the offset and the stud spacing).
    fill_behind : str
        "cavity" (the wall's fill, packed behind the boxes), "none" (no fill between the boxes).
    """

    leak_area: float = BOX_LEAK_AREA
    oversize: float = 0.0
    pad: bool = False
    offset: float = 0.0
    same_bay: bool | None = None
    fill_behind: str = "cavity"

    def __post_init__(self) -> None:
        object.__setattr__(self, "leak_area", _num(self.leak_area, "leak_area"))
        object.__setattr__(self, "oversize", _num(self.oversize, "oversize"))
        object.__setattr__(self, "offset", _num(self.offset, "offset"))
        if 0 < self.oversize < 1e-5:
            raise GeometryError(f"oversize must be 0 (tight) or >= 0.01 mm, got {self.oversize!r} m")
        if 0 < self.leak_area < 1e-8:
            raise GeometryError(
                f"leak_area must be 0 (airtight box) or >= 0.01 mm^2, got {self.leak_area!r} m^2"
            )
        if self.fill_behind not in ("cavity", "none"):
            raise GeometryError(f"fill_behind must be 'cavity' or 'none', got {self.fill_behind!r}")


def pad_factor(surface_density: float = PAD_SURFACE_DENSITY) -> npt.NDArray[np.float64]:
    """Normal-incidence mass-law tau of a limp pad per band: 1 / (1 + (omega m / (2 rho0 c0))^2)."""
    w = 2.0 * np.pi * exact_centres()
    return 1.0 / (1.0 + (w * surface_density / (2.0 * RHO0 * C0)) ** 2)


@lru_cache(maxsize=256)
def _opening(leak_area: float, oversize: float, pad: bool, board: float) -> npt.NDArray[np.float64]:
    a = np.zeros(exact_centres().size)
    if leak_area > 0:
        a = a + hole(float(np.sqrt(4.0 * leak_area / np.pi)), board).area
    if oversize > 0:
        perim = 2.0 * (BOX_FACE[0] + BOX_FACE[1]) + 8.0 * oversize
        a = a + annular_gap(perim / np.pi - oversize, oversize, board).area
    if pad:
        a = a * pad_factor()
    a.setflags(write=False)
    return a


def box_opening(box: BoxSpec, board: float) -> npt.NDArray[np.float64]:
    """Transmission area of one box into the cavity, m^2 per band (board = leaf thickness, m)."""
    return _opening(box.leak_area, box.oversize, bool(box.pad), round(float(board), 6))


def box_pair(
    box: BoxSpec,
    geom: CavityGeometry,
    boards: tuple[float, float],
    floor: npt.NDArray[np.float64] | float = 0.0,
) -> tuple[Port, Port, npt.NDArray[np.float64], str]:
    """The two boxes of a pair as ports, their joint coupling area (m^2 per band) and the path text.

    ``floor`` is a lower bound on the coupling X, 1/m^2 (the wall model's own diffuse-cavity term).
    """
    a = Port(0, box_opening(box, boards[0]), x=0.0)
    b = Port(1, box_opening(box, boards[1]), x=box.offset)
    g = geom if box.fill_behind == "cavity" else geom.with_fill(0.0)
    x, _ = pair_coupling(g, a, b, same_bay=box.same_bay)
    same = (
        box.same_bay if box.same_bay is not None else (geom.bay_width is None or box.offset < geom.bay_width)
    )
    fill = "filled" if g.filled else "empty"
    where = "same bay" if same else "different bays"
    text = f"cavity path A->B: boxes {box.offset:.2f} m apart, {where}, {fill}" + (
        ", padded" if box.pad else ""
    )
    return a, b, a.area * b.area * np.maximum(x, floor), text
