"""Inputs of the field prediction: the wall, its junctions and flanking elements, the rooms.

The method is in :mod:`acoustics.field_prediction`; this module holds what a caller (the
record) stores and passes, each validated once, with errors naming the field and the rule
(:class:`acoustics.FieldInputError`, a ``ValueError``). SI units: m, m^2, m^3, kg/m^2, s, Hz, dB;
band values over :data:`acoustics.BANDS`.

References
----------
.. [1] ISO 12354-1:2017, Clause 4 (elements of type A and B, junctions, rooms).
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
import numpy.typing as npt

from . import junctions as jn
from .bands import N_BANDS
from .constants import SABINE_ISO
from .field import FieldInputError

__all__ = ["Element", "Junction", "Separating", "Room", "PREDICTION_FLAGS", "POSITIONS"]

#: Junction positions around a wall; lengths and areas default from the geometry for these.
POSITIONS = ("floor", "ceiling", "end_a", "end_b")
_LIGHT_KINDS = ("light_continuous", "light_interrupted", "data")
_CROSS = ("rigid_cross",)
#: What each flag of a prediction means (shown beside the result).
PREDICTION_FLAGS = {
    "prediction": "predicted by ISO 12354-1 from element and junction data; not a field test (tests follow "
    "ASTM E336 or ISO 16283-1 by qualified testers; local codes and the authority having jurisdiction "
    "govern)",
    "low_bands": "50-80 Hz: room and element modes make the statistical prediction uncertain",
    "perimeter_assumed": "in-situ loss factor of a flanking element: its whole perimeter assumed coupled "
    "like "
    "its junction with the separating wall",
    "no_in_situ_correction": "a heavy element without a critical frequency: laboratory R used as in-situ R",
    "light_data_representative": "lightweight junction: published timber-frame data (ISO 12354-1:2017 "
    "Annex L.2) used as representative, not measured for this junction",
    "interrupted_assumed": "interrupted lightweight junction: engine assumption (no source) of 10 dB more "
    "velocity level difference on the Ff path; give measured Dv,ij,n to replace it",
    "kij_min_applied": "a K_ij below K_ij,min was raised to K_ij,min (ISO 12354-1 Clause 4.3)",
    "annex_e_outside_scope": "Annex E rigid-junction relations applied to elements outside their "
    "homogeneous heavy scope (e.g. CLT); measured junction data would be better",
    "separating_leaf_estimated": "lightweight separating wall: its leaf index for the Fd/Df paths estimated "
    "by the field-incidence mass law of half the wall mass",
}


def _bands(value: Any, name: str, *, lead: bool = False) -> npt.NDArray[np.float64]:
    arr = np.asarray(value, dtype=np.float64)
    if arr.ndim == 0:
        arr = np.full(N_BANDS, float(arr))
    if arr.shape[-1] != N_BANDS or (arr.ndim > 1 and not lead):
        raise FieldInputError(name, f"must be one value per band ({N_BANDS} bands, 50-5000 Hz)")
    if not np.all(np.isfinite(arr)):
        raise FieldInputError(name, "must be finite in every band")
    return arr


def _positive(value: Any, name: str, unit: str, upper: float | None = None) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise FieldInputError(name, f"must be a number in {unit}") from None
    if not np.isfinite(v) or v <= 0 or (upper is not None and v > upper):
        rule = f"must be > 0 {unit}" + (f" and at most {upper:g} {unit}" if upper is not None else "")
        raise FieldInputError(name, rule)
    return v


@dataclass(frozen=True)
class Element:
    """A flanking element (or the structural data of one) as built in one room.

    Attributes
    ----------
    r : array_like, shape (21,)
        Laboratory sound reduction index R, dB (in-situ if ``in_situ``).
    mass : float
        Surface density m', kg/m^2.
    kind : {"heavy", "light"}
        Heavy homogeneous (type A: in-situ correction, K_ij with absorption
        lengths) or lightweight framed (type B: R*, Dv,ij,n).
    fc : float or None
        Critical frequency, Hz (heavy elements: needed for the in-situ correction).
    eta_int : float
        Internal loss factor.
    r_star : array_like or None
        Resonant-only index R* of a lightweight element, dB (default ``r``).
    lining : float or array_like
        Improvement dR of a lining or topping on the room side, dB.
    in_situ : bool
        ``r`` is already an in-situ value.
    eta_situ : array_like or None
        In-situ total loss factor per band, when known (otherwise estimated, Annex C).
    name : str
        Label for reports.
    """

    r: Any
    mass: float
    kind: str = "heavy"
    fc: float | None = None
    eta_int: float = 0.01
    r_star: Any = None
    lining: Any = 0.0
    in_situ: bool = False
    eta_situ: Any = None
    name: str = ""

    def __post_init__(self) -> None:
        label = self.name or "element"
        object.__setattr__(self, "r", _bands(self.r, f"{label}.r"))
        object.__setattr__(self, "mass", _positive(self.mass, f"{label}.mass", "kg/m^2", 5000))
        if self.kind not in ("heavy", "light"):
            raise FieldInputError(f"{label}.kind", "must be 'heavy' or 'light'")
        if self.fc is not None:
            object.__setattr__(self, "fc", _positive(self.fc, f"{label}.fc", "Hz", 1e5))
        if not (0 < float(self.eta_int) < 1):
            raise FieldInputError(f"{label}.eta_int", "must be between 0 and 1")
        star = self.r if self.r_star is None else _bands(self.r_star, f"{label}.r_star")
        object.__setattr__(self, "r_star", star)
        object.__setattr__(self, "lining", _bands(self.lining, f"{label}.lining"))
        if self.eta_situ is not None:
            eta = _bands(self.eta_situ, f"{label}.eta_situ")
            if np.any(eta <= 0) or np.any(eta >= 1):
                raise FieldInputError(f"{label}.eta_situ", "must be between 0 and 1 in every band")
            object.__setattr__(self, "eta_situ", eta)


@dataclass(frozen=True)
class Separating:
    """The separating wall: its direct-path curve(s) and structural data.

    Attributes
    ----------
    r : array_like, shape (..., 21)
        Direct-path index of the wall, dB: one curve or several (designed, as
        found, now), predicted together.
    length, height : float
        Wall length and height, m.
    mass : float
        Surface density of the wall, kg/m^2.
    kind : {"heavy", "light"}
    fc : float or None
        Critical frequency, Hz (heavy wall: in-situ correction of the direct path).
    eta_int : float
    area : float or None
        Separating area S_s shared by the rooms, m^2 (default length x height).
    r_leaf : array_like or None
        Index used for the wall in the Fd and Df paths, dB (default: ``r`` for a
        heavy wall; for a lightweight wall the field mass law of half its mass).
    lining_source, lining_receive : float or array_like
        dR of linings on the wall's source and receiving faces for the Df and Fd paths, dB.
    in_situ : bool
        ``r`` (and ``r_leaf``) are already in-situ values (no correction of the direct path).
    eta_situ : array_like or None
        In-situ total loss factor of a heavy wall per band, when known.
    """

    r: Any
    length: float
    height: float
    mass: float
    kind: str = "light"
    fc: float | None = None
    eta_int: float = 0.01
    area: float | None = None
    r_leaf: Any = None
    lining_source: Any = 0.0
    lining_receive: Any = 0.0
    in_situ: bool = False
    eta_situ: Any = None

    def __post_init__(self) -> None:
        object.__setattr__(self, "r", _bands(self.r, "wall.r", lead=True))
        if self.eta_situ is not None:
            eta = _bands(self.eta_situ, "wall.eta_situ")
            if np.any(eta <= 0) or np.any(eta >= 1):
                raise FieldInputError("wall.eta_situ", "must be between 0 and 1 in every band")
            object.__setattr__(self, "eta_situ", eta)
        object.__setattr__(self, "length", _positive(self.length, "wall.length", "m", 1000))
        object.__setattr__(self, "height", _positive(self.height, "wall.height", "m", 100))
        object.__setattr__(self, "mass", _positive(self.mass, "wall.mass", "kg/m^2", 5000))
        if self.kind not in ("heavy", "light"):
            raise FieldInputError("wall.kind", "must be 'heavy' or 'light'")
        if self.fc is not None:
            object.__setattr__(self, "fc", _positive(self.fc, "wall.fc", "Hz", 1e5))
        area = self.length * self.height if self.area is None else self.area
        object.__setattr__(self, "area", _positive(area, "wall.area", "m^2", 1e5))
        if self.r_leaf is not None:
            object.__setattr__(self, "r_leaf", _bands(self.r_leaf, "wall.r_leaf"))
        object.__setattr__(self, "lining_source", _bands(self.lining_source, "wall.lining_source"))
        object.__setattr__(self, "lining_receive", _bands(self.lining_receive, "wall.lining_receive"))


@dataclass(frozen=True)
class Room:
    """A room on one face of the wall.

    Attributes
    ----------
    volume : float
        V, m^3.
    t : float or array_like or None
        Reverberation time T, s (scalar or per band); default 0.5 s, a furnished room.
    absorption : float or array_like or None
        Equivalent absorption area A, m^2 (instead of ``t``).
    name : str
    """

    volume: float
    t: Any = None
    absorption: Any = None
    name: str = ""

    def __post_init__(self) -> None:
        label = self.name or "room"
        object.__setattr__(self, "volume", _positive(self.volume, f"{label}.volume", "m^3", 1e5))
        if self.t is not None and self.absorption is not None:
            raise FieldInputError(f"{label}.t", "give either a reverberation time or an absorption area")
        if self.absorption is not None:
            a = _bands(self.absorption, f"{label}.absorption")
            if np.any(a <= 0):
                raise FieldInputError(f"{label}.absorption", "must be > 0 m^2 in every band")
            object.__setattr__(self, "absorption", a)
        else:
            t = _bands(0.5 if self.t is None else self.t, f"{label}.t")
            if np.any(t <= 0) or np.any(t > 20):
                raise FieldInputError(f"{label}.t", "must be > 0 s and at most 20 s in every band")
            object.__setattr__(self, "t", t)

    def t_bands(self, sabine: float = SABINE_ISO) -> npt.NDArray[np.float64]:
        """Reverberation time per band, s (from the absorption area when that was given)."""
        # __post_init__ leaves exactly one of t and absorption as a band array.
        t: npt.NDArray[np.float64] = (
            self.t if self.absorption is None else sabine * self.volume / self.absorption
        )
        return t


@dataclass(frozen=True)
class Junction:
    """One junction of the wall with a flanking element (floor, ceiling or an end).

    Attributes
    ----------
    position : str
        "floor", "ceiling", "end_a", "end_b" (lengths and areas default from the
        geometry) or any label with ``length`` and both areas given.
    kind : str
        An Annex E kind (:data:`acoustics.junctions.JUNCTION_KINDS`), or
        "light_continuous" / "light_interrupted" (published timber-frame Dv,ij,n),
        or "data" (``k`` or ``dvn`` given for every path).
    flank : Element
        Flanking element on the source side (F).
    flank_receive : Element or None
        Flanking element on the receiving side (f); default the same construction.
    length : float or None
        Coupling length l_f, m.
    area_source, area_receive : float or None
        Areas S_F and S_f of the flanking element in each room, m^2.
    k : mapping or None
        K_ij per path {"Ff", "Fd", "Df"}, dB (scalar or per band); overrides Annex E.
    dvn : mapping or None
        Dv,ij,n per path, dB; overrides ``k`` (lightweight junction data).
    dnf : array_like or None
        Measured normalized flanking level difference Dn,f of the Ff path (ISO 10848-2), dB.
    dnf_length : float
        Junction length of the Dn,f measurement, m.
    paths : tuple of str
        The flanking paths that exist at this junction (default all three: Ff, Fd, Df).
    """

    position: str
    kind: str
    flank: Element
    flank_receive: Element | None = None
    length: float | None = None
    area_source: float | None = None
    area_receive: float | None = None
    k: Mapping[str, Any] | None = None
    dvn: Mapping[str, Any] | None = None
    dnf: Any = None
    dnf_length: float = 4.5
    paths: tuple[str, ...] = ("Ff", "Fd", "Df")

    def __post_init__(self) -> None:
        where = f"junction[{self.position}]"
        if not set(self.paths) <= {"Ff", "Fd", "Df"}:
            raise FieldInputError(f"{where}.paths", "may list only Ff, Fd and Df")
        if self.kind not in jn.JUNCTION_KINDS + _LIGHT_KINDS:
            raise FieldInputError(f"{where}.kind", f"must be one of {jn.JUNCTION_KINDS + _LIGHT_KINDS}")
        if not isinstance(self.flank, Element):
            raise FieldInputError(f"{where}.flank", "must be an Element")
        if self.flank_receive is None:
            object.__setattr__(self, "flank_receive", self.flank)
        if self.position not in POSITIONS and None in (self.length, self.area_source, self.area_receive):
            raise FieldInputError(
                f"{where}.length", "length and both areas are needed off the four positions"
            )
        for key in ("length", "area_source", "area_receive"):
            val = getattr(self, key)
            if val is not None:
                object.__setattr__(self, key, _positive(val, f"{where}.{key}", "m or m^2", 1e5))
        for key in ("k", "dvn"):
            table = getattr(self, key)
            if table is not None:
                bad = set(table) - {"Ff", "Fd", "Df"}
                if bad:
                    raise FieldInputError(f"{where}.{key}", f"paths must be Ff, Fd or Df, got {sorted(bad)}")
                object.__setattr__(self, key, {p: _bands(v, f"{where}.{key}.{p}") for p, v in table.items()})
        given = {**(self.k or {}), **(self.dvn or {})}
        if self.kind == "data" and not all(
            p in given or (p == "Ff" and self.dnf is not None) for p in self.paths
        ):
            raise FieldInputError(f"{where}.k", "kind 'data' needs k or dvn for each of its paths")
        if self.dnf is not None:
            object.__setattr__(self, "dnf", _bands(self.dnf, f"{where}.dnf"))
            object.__setattr__(
                self, "dnf_length", _positive(self.dnf_length, f"{where}.dnf_length", "m", 100)
            )
