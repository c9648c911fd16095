"""Stored TL curves of the record: validation, rating and prediction from a wall type's layers.

A curve is stored as a list of 21 values (bands 50-5000 Hz, null where not measured). These helpers
check such a list, rate it, and give a wall type the curve it should store (a lab curve as entered, or
one predicted from its layers by :mod:`acoustics.walls`). Part of the adapter between the record and
the engine (:mod:`qa.audit.summary`).
"""

from __future__ import annotations

import math
from collections.abc import Iterable

import numpy as np

N_BANDS = 21
TL_RANGE = (-20.0, 150.0)  # dB; outside this a value is a typo, not a measurement


def curve_errors(values: list) -> str | None:
    """Why a stored TL curve is unacceptable, or None. Empty means 'no curve'."""
    if not values:
        return None
    if len(values) != N_BANDS:
        return f"needs {N_BANDS} values (bands 50–5000 Hz, null where not measured), got {len(values)}"
    for i, value in enumerate(values):
        if value is None:
            continue
        if not math.isfinite(value) or not TL_RANGE[0] <= value <= TL_RANGE[1]:
            return f"band {i + 1} value {value} is outside {TL_RANGE[0]:g}..{TL_RANGE[1]:g} dB"
    return None


def tl_array(values: Iterable | None) -> np.ndarray:
    """A stored curve (list with nulls) as a (21,) array in dB, NaN where not measured."""
    vals = list(values or [])
    if not vals:
        return np.full(N_BANDS, np.nan)
    return np.array([np.nan if v is None else v for v in vals], dtype=float)


def rate_curve(tl: list, scheme: str) -> int | None:
    """The single-number rating of a stored curve, or None when a band it needs is missing."""
    import acoustics

    if not tl:
        return None
    try:
        if scheme == "rw":
            return int(acoustics.rw(tl_array(tl)).rw)
        return int(acoustics.stc(tl_array(tl)))
    except acoustics.RatingError:
        return None


def resolve_wall_type_curve(*, tl, tl_source, layers, rating_scheme) -> tuple[list, int | None]:
    """The curve a wall type should store and its design rating.

    A predicted wall type takes its curve from its layers; a lab wall type keeps the entered bands.
    Raises ValueError "field: rule" when the inputs cannot give a curve.
    """
    tl = list(tl or [])
    if tl_source == "predicted":
        if not layers:
            raise ValueError("layers: a predicted wall type needs its layers")
        tl = predict_curve(layers)
    elif not tl:
        raise ValueError("tl: a wall type from a lab report needs its TL curve")
    return tl, rate_curve(tl, rating_scheme or "stc")


def predict_curve(layers: dict) -> list:
    """TL on the 21 bands predicted from a wall type's layers (acoustics.walls)."""
    from acoustics import walls

    try:
        tl, _flags = walls.predict_tl(layers)
    except (ValueError, KeyError, TypeError) as exc:
        raise ValueError(f"layers: {exc}") from None
    return [round(float(v), 2) for v in tl]
