"""Units for input and display. Everything is stored in SI; each job picks metric or imperial.

Four quantities: ``size`` (wall and opening dimensions: m or ft), ``gap`` (gap widths, lengths,
diameters, depths: mm or in), ``area`` (affected wall areas: m² or ft²) and ``small_area`` (open
areas of boxes and gaps: cm² or in²). This module is the one source of these factors and symbols;
the walk receives them in its bundle.
"""

from __future__ import annotations

from typing import overload

from .choices import Units

FOOT = 0.3048  # m, exact (international foot, 1959)
INCH = 0.0254  # m, exact

FACTORS: dict[str, dict[str, float]] = {
    Units.METRIC: {"size": 1.0, "gap": 1e-3, "area": 1.0, "small_area": 1e-4},
    Units.IMPERIAL: {"size": FOOT, "gap": INCH, "area": FOOT**2, "small_area": INCH**2},
}
SYMBOLS: dict[str, dict[str, str]] = {
    Units.METRIC: {"size": "m", "gap": "mm", "area": "m²", "small_area": "cm²"},
    Units.IMPERIAL: {"size": "ft", "gap": "in", "area": "ft²", "small_area": "in²"},
}

#: Which quantity each stored SI field is.
FIELD_QUANTITY = {
    "length_m": "gap",
    "width_m": "gap",
    "diameter_m": "gap",
    "depth_m": "gap",
    "area_m2": "area",
}
#: A finding's stored SI field and its name in the API, the walk and its error messages.
SI_TO_API = {
    "width_m": "width",
    "length_m": "length",
    "diameter_m": "diameter",
    "depth_m": "depth",
    "area_m2": "area",
}
API_TO_SI = {api: si for si, api in SI_TO_API.items()}


def in_job_units(value: float | None, quantity: str, units: str) -> float | None:
    """A stored SI value as the job's units show it, to the precision a tape or a caliper reads
    (six significant digits: sub-millimetre gaps survive, float noise does not)."""
    if value is None:
        return None
    shown = from_si(value, quantity, units)
    return float(f"{shown:.6g}") if shown is not None else None


def table(units: str) -> dict:
    """This job's factors and symbols for the walk: ``{quantity: {"factor": m per unit, "symbol": str}}``."""
    return {q: {"factor": FACTORS[units][q], "symbol": SYMBOLS[units][q]} for q in FACTORS[units]}


def to_si(value: float, quantity: str, units: str) -> float:
    return value * FACTORS[units][quantity]


# A value in gives a value out; only None gives None (so callers holding a float need no None check).
@overload
def from_si(value: float, quantity: str, units: str) -> float: ...
@overload
def from_si(value: None, quantity: str, units: str) -> None: ...
@overload
def from_si(value: float | None, quantity: str, units: str) -> float | None: ...
def from_si(value: float | None, quantity: str, units: str) -> float | None:
    if value is None:
        return None
    return value / FACTORS[units][quantity]


def symbol(quantity: str, units: str) -> str:
    return SYMBOLS[units][quantity]


def fmt(value: float | None, quantity: str, units: str, digits: int | None = None) -> str:
    """Human display, e.g. '6 mm', '0.25 in', '3.05 m'."""
    if value is None:
        return "—"
    shown = from_si(value, quantity, units)
    if digits is None:
        digits = 2 if abs(shown) < 10 else 1 if abs(shown) < 100 else 0
    text = f"{shown:.{digits}f}".rstrip("0").rstrip(".") if digits else f"{shown:.0f}"
    return f"{text} {symbol(quantity, units)}"
