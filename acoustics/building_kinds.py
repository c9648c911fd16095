"""Defaults by building kind: the flanking elements and junctions around a wall, so nobody must fill them in.

A job carries a building kind; each wall's four junctions (floor, ceiling, two
ends) then default to the construction that kind usually has. A consultant may
replace any junction (:class:`acoustics.field_inputs.Junction`). The table is
small on purpose and says where each value comes from.

========================  ==================================  =====================================
kind                      floor / ceiling (junction)          ends (junction)
========================  ==================================  =====================================
``concrete_masonry``      200 mm concrete slab (rigid cross)  190 mm concrete block (rigid T)
``wood_frame``            joist floor, topping (light data)   stud wall leaf (light data)
``steel_frame``           concrete on steel deck (E.7)        steel-stud wall leaf (light data)
``clt``                   175 mm CLT floor (rigid cross)      100 mm CLT wall (rigid T)
========================  ==================================  =====================================

Notes
-----
Heavy element R (laboratory): Sharp's single-leaf method as given by Bies [1]_:
20 lg(m f) - 47 dB below fc/2; above fc the normal-incidence mass law plus
10 lg(2 eta f / (pi fc)) with the laboratory loss factor eta_int + m'/(485 sqrt f)
[2]_, capped by the limp value; a straight line in lg f between.
fc = c0^2 / (1.8 c_L h) [2]_ (Annex L) with c_L = 3800 m/s for concrete [2]_;
block, deck and CLT values are from memory (engine assumptions, flagged by the
prediction where Annex E leaves its scope). Lightweight elements and junctions:
the published timber-frame data of ISO 12354-1:2017 Annex L.2
(:data:`acoustics.junctions.LIGHT_FRAME_DATA`), used as representative; the
steel-frame kind reuses them (no published steel-frame junction data is held).

References
----------
.. [1] Bies, Hansen & Howard (2017) *Engineering Noise Control* 5th ed., Eq. 7.40-7.44 [TR].
.. [2] ISO 12354-1:2017, Annex C (Formula C.2) and Annex L (element data).
"""

from __future__ import annotations

from collections.abc import Mapping
from functools import cache
from typing import Any

import numpy as np
import numpy.typing as npt

from .bands import exact_centres
from .constants import C0, RHO0
from .field import FieldInputError
from .field_inputs import POSITIONS, Element, Junction, Room, Separating
from .field_prediction import FieldPrediction, predict_field
from .junctions import LIGHT_FRAME_DATA, lab_loss_factor

__all__ = ["BUILDING_KINDS", "heavy_element_r", "default_junctions", "wall_defaults", "predict_wall"]


def heavy_element_r(mass: float, fc: float, eta_int: float) -> npt.NDArray[np.float64]:
    """Laboratory R (dB, 21 bands) of a homogeneous heavy element, Sharp/Bies single leaf (module Notes)."""
    f = exact_centres()
    eta = lab_loss_factor(mass, eta_int, f)
    limp = 20 * np.log10(mass * f) - 47.0

    def above(ff: npt.NDArray[np.float64], ee: npt.NDArray[np.float64]) -> npt.NDArray[np.float64]:
        normal = 20 * np.log10(np.pi * ff * mass / (RHO0 * C0))
        r_above: npt.NDArray[np.float64] = normal + 10 * np.log10(2 * ee * ff / (np.pi * fc))
        return r_above

    r = np.where(f <= fc / 2, limp, np.minimum(above(f, eta), limp))
    mid = (f > fc / 2) & (f < fc)
    lo = 20 * np.log10(mass * fc / 2) - 47.0
    hi = above(np.asarray(fc), lab_loss_factor(mass, eta_int, fc))
    x = np.log10(f / (fc / 2)) / np.log10(2.0)
    out: npt.NDArray[np.float64] = np.where(mid, lo + x * (hi - lo), r)
    return out


def _fc(thickness: float, c_l: float) -> float:
    return C0**2 / (1.8 * c_l * thickness)


# (name, mass kg/m^2, kind, fc Hz, eta_int); lightweight rows name their LIGHT_FRAME_DATA curves.
_SLAB = ("concrete slab 200 mm", 460.0, "heavy", _fc(0.2, 3800.0), 0.005)
_BLOCK = ("concrete block wall 190 mm", 220.0, "heavy", 120.0, 0.01)
_DECK = ("concrete on steel deck", 240.0, "heavy", _fc(0.1, 3800.0), 0.006)
_CLT_FLOOR = ("CLT floor 175 mm", 82.0, "heavy", 150.0, 0.02)
_CLT_WALL = ("CLT wall 100 mm", 47.0, "heavy", 250.0, 0.02)

#: Building kinds: element and junction kind at each position, and the separating wall's defaults.
BUILDING_KINDS: dict[str, dict[str, Any]] = {
    "concrete_masonry": {
        "floor": (_SLAB, "rigid_cross"),
        "ceiling": (_SLAB, "rigid_cross"),
        "end": (_BLOCK, "rigid_t"),
        "wall": {"mass": 220.0, "kind": "heavy", "fc": 120.0},
    },
    "wood_frame": {
        "floor": (("joist floor with topping", 30.0, "light", "floor", True), "light_continuous"),
        "ceiling": (("joist floor, ceiling side", 30.0, "light", "floor", False), "light_continuous"),
        "end": (("stud wall leaf", 10.0, "light", "leaf", False), "light_continuous"),
        "wall": {"mass": 25.0, "kind": "light", "fc": None},
    },
    "steel_frame": {
        "floor": (_DECK, "light_double_on_heavy"),
        "ceiling": (_DECK, "light_double_on_heavy"),
        "end": (("steel-stud wall leaf", 10.0, "light", "leaf", False), "light_continuous"),
        "wall": {"mass": 25.0, "kind": "light", "fc": None},
    },
    "clt": {
        "floor": (_CLT_FLOOR, "rigid_cross"),
        "ceiling": (_CLT_FLOOR, "rigid_cross"),
        "end": (_CLT_WALL, "rigid_t"),
        "wall": {"mass": 47.0, "kind": "heavy", "fc": 250.0},
    },
}


def _kind(kind: str) -> dict[str, Any]:
    try:
        return BUILDING_KINDS[kind]
    except KeyError:
        raise FieldInputError("building_kind", f"must be one of {sorted(BUILDING_KINDS)}") from None


@cache
def _element(row: tuple[Any, ...]) -> Element:
    if row[2] == "heavy":
        name, mass, _k, fc, eta = row
        return Element(heavy_element_r(mass, fc, eta), mass, "heavy", fc, eta, name=name)
    name, mass, _k, curve, topping = row
    lining = LIGHT_FRAME_DATA["floor_topping_dr"] if topping else 0.0
    return Element(
        LIGHT_FRAME_DATA[f"{curve}_r"],
        mass,
        "light",
        r_star=LIGHT_FRAME_DATA[f"{curve}_r_star"],
        lining=lining,
        name=name,
    )


def wall_defaults(kind: str) -> dict[str, Any]:
    """Default surface density (kg/m^2), kind ("heavy"/"light") and fc (Hz) of the separating wall."""
    return dict(_kind(kind)["wall"])


def default_junctions(kind: str, overrides: Mapping[str, Junction] | None = None) -> tuple[Junction, ...]:
    """The four junctions of a wall in a building of ``kind``; ``overrides`` replaces any by position."""
    table = _kind(kind)
    out = []
    for pos in POSITIONS:
        if overrides and pos in overrides:
            out.append(overrides[pos])
            continue
        row, jkind = table["end" if pos.startswith("end") else pos]
        out.append(Junction(pos, jkind, _element(row)))
    if overrides and set(overrides) - set(POSITIONS):
        raise FieldInputError("junctions", f"positions must be among {POSITIONS}")
    return tuple(out)


def predict_wall(
    r: Any,
    length: float,
    height: float,
    source_room: Room,
    receiving_room: Room,
    *,
    building_kind: str = "wood_frame",
    wall_mass: float | None = None,
    wall_kind: str | None = None,
    wall_fc: float | None = None,
    area: float | None = None,
    junctions: Mapping[str, Junction] | None = None,
    leaks: Any = None,
) -> FieldPrediction:
    """Field prediction of a wall with every junction defaulted from the building kind.

    Parameters
    ----------
    r : array_like, shape (..., 21)
        The wall's direct-path curve(s), dB (designed / as found / now).
    length, height : float
        Wall size, m.
    source_room, receiving_room : Room
    building_kind : str
        A key of :data:`BUILDING_KINDS`.
    wall_mass, wall_kind, wall_fc : optional
        The wall's surface density (kg/m^2), "heavy"/"light" and fc (Hz); default from the kind.
    area : float, optional
        Separating area shared by the rooms, m^2 (default length x height).
    junctions : mapping of position -> Junction, optional
        Junctions a consultant entered; the others default.
    leaks : optional
        Leak transmission areas, as :func:`acoustics.field_prediction.predict_field` takes them.
    """
    d = wall_defaults(building_kind)
    kind = wall_kind or d["kind"]
    fc = wall_fc if wall_fc is not None else (d["fc"] if kind == d["kind"] else None)
    wall = Separating(
        r, length, height, wall_mass if wall_mass is not None else d["mass"], kind, fc, area=area
    )
    return predict_field(
        wall, default_junctions(building_kind, junctions), source_room, receiving_room, leaks=leaks
    )
