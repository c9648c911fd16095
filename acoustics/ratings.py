"""Single-number ratings of band spectra: STC, Rw with C and Ctr, OITC.

Every function takes an array whose last axis runs over :data:`acoustics.BANDS`
(21 one-third-octave bands, 50-5000 Hz) and rates all leading axes in one
vectorised pass; a 1-D spectrum gives plain Python numbers. Each rating reads
only its own bands, so a spectrum measured 100-3150 Hz (NaN elsewhere) still
rates Rw; a rated band that is NaN raises :class:`~acoustics.RatingError`
naming the band.

Notes
-----
Both contour ratings are solved in closed form rather than by stepping the
contour one decibel at a time. With u_i = X_i - c_i (band value minus the
contour shape), sorted so that u_(1) <= ... <= u_(16), and P_j the sum of the
j smallest, the deficiency sum of the contour placed at s is

    f(s) = sum_i max(0, s - u_i) = max_j (j s - P_j)        (j = 0 ... 16),

because only the bands below s are deficient and they are the smallest ones.
f(s) <= L (L = 32 dB) therefore holds exactly when s <= (L + P_j) / j for
every j, so the largest admissible whole-decibel shift is

    s* = floor(min_j (L + P_j) / j),

capped for STC at min(u) + 8 (ASTM E413 single-deficiency rule). ISO 717-1
values are first reduced to 0.1 dB and the sum is taken in integer tenths, so
an unfavourable sum of exactly 32.0 dB is allowed: s* = floor(min_j (320 +
P_j) / (10 j)) dB, or floor(min_j (320 + P_j) / j) tenths for the 0.1 dB
variant. P_j and the limit are small integers in float64 and the quotient of
two integers with a denominator of at most 160 is either exact or at least
1/160 away from the next integer, so the floor needs no tolerance. There is
no floor on the rating itself: a wall with open gaps may rate below 15 or
below zero. :mod:`acoustics._reference` implements the same rules as the
standards word them (shift the contour 1 dB at a time); the tests hold the
two equal on every curve.

References
----------
.. [1] ASTM E413-22, *Classification for Rating Sound Insulation*: reference
   contour, 32 dB deficiency-sum and 8 dB single-deficiency rules, value read
   at 500 Hz.
.. [2] ISO 717-1:2020, *Rating of sound insulation in buildings and of building
   elements - Part 1: Airborne sound insulation*, Clause 4.4 (Table 3,
   shifting rule), Clause 4.5 Formulas (1)-(2) and Table 4 (C, Ctr), Annex B
   Table B.1 (enlarged ranges).
.. [3] ISO 12999-1:2020, Annex B: rating in 0.1 dB steps for uncertainty.
.. [4] ASTM E1332-22, *Classification for Rating Outdoor-Indoor Sound
   Attenuation*, Table 1 reference spectrum (values from memory, checked: their
   A-weighted sum is 100.12 dB against the 100.13 dB constant).
"""

from __future__ import annotations

from collections.abc import Callable, Iterator
from typing import Any, NamedTuple

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .bands import BANDS, N_BANDS
from .errors import RatingError
from .spectra import (
    _OITC,
    _OITC_TOTAL,
    _OITC_W,
    _RW,
    _RW_SHAPE,
    _SPEC1_100_3150,
    _SPECTRA,
    _STC,
    _STC_SHAPE,
    _TERMS,
)

__all__ = [
    "RwResult",
    "RATINGS",
    "stc",
    "rw",
    "oitc",
    "rate",
    "contour",
    "round_half_up",
    "rating_weights",
    "check_finite",
]

Floats = NDArray[np.float64]

#: Names accepted by :func:`rate` and :func:`acoustics.audit`.
RATINGS = ("stc", "rw", "oitc")

# Round half up: floor(x + 0.5 + 1e-7), see round_half_up for the nudge.
_HALF = 0.5 + 1e-7
# Curves rated per block. A block's temporaries (a few (rows, 21) float arrays) stay near a megabyte, so
# rating a million curves needs little memory beyond the input; larger blocks are no faster.
_BLOCK = 8192
# Values beyond +-1e6 dB are not transmission losses: refused like NaN, naming the band.
_LIMIT_DB = 1e6

_E413 = "ASTM E413 range 125-4000 Hz"
_ISO717 = "ISO 717-1 range 100-3150 Hz"
#: Rated band range of each rating label, quoted in error messages.
RANGE_TEXT = {
    "STC": _E413,
    "NIC": _E413,
    "NNIC": _E413,
    "ASTC": _E413,
    "Rw": _ISO717,
    "R'w": _ISO717,
    "DnT,w": _ISO717,
    "Dn,w": _ISO717,
    "OITC": "ASTM E1332 range 80-4000 Hz",
}

# Contour shapes in the units the searches run in: whole dB (E413) and integer tenths (ISO 717-1).
_RW_TENTHS = 10.0 * _RW_SHAPE
_J16 = np.arange(1.0, 17.0)  # j = 1 ... 16: number of deficient bands
# ISO 717-1 spectrum weights 10^(L_ij / 10) (zero where spectrum j has no band), and which bands each uses.
_SPEC_USED = np.isfinite(_SPECTRA)  # (21, 8): C, Ctr, then the six enlarged-range terms
_SPEC_W = np.where(_SPEC_USED, 10.0 ** (np.nan_to_num(_SPECTRA) / 10.0), 0.0)
_NEG_LN10_10 = -np.log(10.0) / 10.0  # 10^(-x/10) = exp(x * _NEG_LN10_10), exp being the faster ufunc


class RwResult(NamedTuple):
    """ISO 717-1 weighted index with its spectrum adaptation terms, dB.

    ``rw``, ``c`` and ``ctr`` need the 100-3150 Hz bands. The enlarged-range
    terms need their own bands and are ``None`` (1-D input) or NaN (batch)
    where a band of their range was not measured. Integer rating: ints; with
    ``decimal=True``: values in 0.1 dB steps.
    """

    rw: Any
    c: Any
    ctr: Any
    c50_3150: Any
    c50_5000: Any
    c100_5000: Any
    ctr50_3150: Any
    ctr50_5000: Any
    ctr100_5000: Any


def round_half_up(x: ArrayLike, decimals: int = 0) -> Floats:
    """Round ties upwards: floor(x + 0.5) at ``decimals`` places (numpy's own rounding goes half to even).

    Half up rather than half away from zero (the method notes' common-practice
    suggestion) so that a uniform shift of a curve by whole decibels shifts
    every rating by exactly as much, also for negative band values; both rules
    agree for positive values. A nudge of 1e-7 (in units of the last place)
    makes decimal ties such as 42.35 (stored as 42.34999...) round up as written.
    """
    scale = 10.0**decimals
    y: Floats = np.floor(np.asarray(x, dtype=float) * scale + _HALF)
    return y / scale if decimals else y


def _as_bands(tl: ArrayLike, name: str = "tl") -> Floats:
    arr = np.asarray(tl, dtype=float)
    if arr.ndim == 0 or arr.shape[-1] != N_BANDS:
        raise ValueError(
            f"{name} must have {N_BANDS} one-third-octave bands (50-5000 Hz) on its last axis, "
            f"got shape {arr.shape}"
        )
    return arr


def check_finite(x: Floats, bands: slice, rating: str) -> None:
    """Raise RatingError naming the lowest band of ``bands`` that is NaN, infinite or beyond +-1e6 dB.

    Parameters
    ----------
    x : ndarray, shape (..., 21)
        Band values, dB.
    bands : slice
        The rated bands (e.g. 125-4000 Hz for STC).
    rating : str
        Rating label for the message ("STC", "Rw", "R'w", ... see ``RANGE_TEXT``).
    """
    sub = x[..., bands].reshape(-1, bands.stop - bands.start)
    ok = np.abs(sub) < _LIMIT_DB  # NaN and +-inf fail the comparison too
    if ok.all():
        return
    rows, cols = np.nonzero(~ok)
    col = int(np.min(cols))  # same as cols.min(); numpy 2.5 stubs checked as 3.11 lack its no-argument form
    band = float(BANDS[bands][col])
    value = float(sub[rows[cols == col][0], col])
    if np.isnan(value):
        what = "missing (NaN)"
    elif np.isinf(value):
        what = f"not finite ({value})"
    else:
        what = f"out of range ({value} dB, limit +-1e6 dB)"
    raise RatingError(
        f"{rating} needs the {band:g} Hz band ({RANGE_TEXT[rating]}), but it is {what}",
        band=band,
        rating=rating,
    )


def _largest_shift(u: Floats, limit: float, step: float) -> Floats:
    """Largest whole number of steps s with sum_i max(0, s step - u_i) <= limit, per row of u (k, 16).

    The closed form of the module Notes: s = floor(min_j (limit + P_j) / (step j)), P_j the sum of the
    j smallest u. ``u`` is sorted in place.
    """
    u.sort(axis=1)
    p = np.cumsum(u, axis=1)
    p += limit
    p /= step * _J16
    s: Floats = np.floor(p.min(axis=1))
    return s


def _stc_rows(x: Floats, round_tl: bool = True) -> Floats:
    """STC (float, integer-valued) of rows x (k, 21), bands not checked.

    u = TL rounded to whole dB minus the E413 contour shape; the contour may sit
    at most 32 dB in total and 8 dB in any band above u.
    """
    if round_tl:
        u = np.floor(x[:, _STC] + _HALF) - _STC_SHAPE
        cap = u.min(axis=1) + 8.0
        limit = 32.0
    else:
        # Unrounded TL: the sums are no longer integers; 1e-6 dB of slack absorbs float rounding.
        u = x[:, _STC] - _STC_SHAPE
        cap = np.floor(u.min(axis=1) + 8.0 + 1e-9)
        limit = 32.0 + 1e-6
    out: Floats = np.minimum(_largest_shift(u, limit, 1.0), cap)
    return out


def _rw_rows(x: Floats, decimal: bool = False) -> Floats:
    """Rw (float; whole dB, or 0.1 dB steps if ``decimal``) of rows x (k, 21), bands not checked.

    u = X reduced to 0.1 dB minus the ISO 717-1 reference curve, in integer
    tenths; the unfavourable sum may reach 32.0 dB (320 tenths).
    """
    u = np.floor(x[:, _RW] * 10.0 + _HALF) - _RW_TENTHS
    if decimal:
        return _largest_shift(u, 320.0, 1.0) / 10.0
    return _largest_shift(u, 320.0, 10.0)


def _oitc_raw(x: Floats) -> Floats:
    """Unrounded OITC of rows x (k, 21): 100.13 - 10 lg sum_i W_i 10^(-TL_i/10), W_i = 10^((L_i + A_i)/10)."""
    power = np.exp(x[:, _OITC] * _NEG_LN10_10) @ _OITC_W
    out: Floats = _OITC_TOTAL - 10.0 * np.log10(power)
    return out


def _oitc_rows(x: Floats) -> Floats:
    """Integer OITC (float) of rows x (k, 21), bands not checked."""
    return round_half_up(_oitc_raw(x))


def _spectrum_levels(x: Floats, enlarged: bool) -> Floats:
    """X_A,j = -10 lg sum_i 10^((L_ij - X_i)/10) (ISO 717-1 Formula (1)) of rows x, unrounded, (k, 8 or 2).

    X is reduced to 0.1 dB first. A spectrum whose bands are not all finite gives NaN.
    """
    cols = len(_TERMS) if enlarged else 2
    sub = x if enlarged else x[:, _RW]
    weights = _SPEC_W[:, :cols] if enlarged else _SPEC_W[_RW, :2]
    xr = np.floor(sub * 10.0 + _HALF) / 10.0
    finite = np.isfinite(xr)
    with np.errstate(over="ignore"):
        power = np.exp(np.where(finite, xr, 0.0) * _NEG_LN10_10)
    with np.errstate(divide="ignore"):
        xa: Floats = -10.0 * np.log10(power @ weights)
    if not finite.all():
        used = _SPEC_USED[:, :cols] if enlarged else _SPEC_USED[_RW, :2]
        xa[(~finite).astype(float) @ used > 0] = np.nan
    return xa


#: Label and rated bands of each rating name, for :func:`check_finite`.
LABELS: dict[str, tuple[str, slice]] = {"stc": ("STC", _STC), "rw": ("Rw", _RW), "oitc": ("OITC", _OITC)}

#: Integer ratings (as floats) of (k, 21) row blocks, without band checks: for a caller that checked the
#: bands once with :func:`check_finite` and then rates many small blocks (the leak audit).
SMALL_RATERS: dict[str, Callable[[Floats], Floats]] = {"stc": _stc_rows, "rw": _rw_rows, "oitc": _oitc_rows}


def rating_weights(rating: str) -> Floats:
    """Band weights (21,) of the rating's reference spectrum, for ranking transmitted power.

    "stc": 10^(Delta_i/10) with Delta_i the E413 contour shape (125-4000 Hz);
    "rw": 10^(L_i/10) with L_i ISO 717-1 spectrum No. 1 (100-3150 Hz);
    "oitc": 10^((L_i + A_i)/10), the A-weighted E1332 spectrum (80-4000 Hz).
    Zero outside the rating's bands; normalised to sum 1.
    """
    w = np.zeros(N_BANDS)
    if rating == "stc":
        w[_STC] = 10.0 ** (_STC_SHAPE / 10.0)
    elif rating == "rw":
        w[_RW] = 10.0 ** (np.asarray(_SPEC1_100_3150)[_RW] / 10.0)
    elif rating == "oitc":
        w[_OITC] = _OITC_W
    else:
        raise ValueError(f"rating must be one of {RATINGS}, got {rating!r}")
    out: Floats = w / w.sum()
    return out


def _blocks(arr: Floats) -> Iterator[tuple[int, Floats]]:
    """(start row, block) over the curves of ``arr`` flattened to (n, 21).

    Each block is checked before it is rated, so in a batch with bad bands the error names the lowest
    bad band of the first block that has one.
    """
    flat = arr.reshape(-1, N_BANDS)
    for start in range(0, flat.shape[0], _BLOCK):
        yield start, flat[start : start + _BLOCK]


def _finish(values: Floats, shape: tuple[int, ...], as_int: bool) -> Any:
    out: NDArray[Any] = values.reshape(shape)
    if as_int:
        out = out.astype(np.int64)
    if out.ndim == 0:
        return int(out) if as_int else float(out)
    return out


def stc(tl: ArrayLike, *, round_tl: bool = True, _label: str = "STC") -> Any:
    """Sound Transmission Class (ASTM E413) of transmission-loss spectra.

    Parameters
    ----------
    tl : array_like, shape (..., 21)
        Band values in dB over :data:`acoustics.BANDS`; only 125-4000 Hz are
        read. NaN outside that range is allowed.
    round_tl : bool
        Round each band to a whole decibel (ties upwards, see
        :func:`round_half_up`) before rating, as ASTM practice does for E90
        data. Default True.

    Returns
    -------
    int or ndarray of int64, shape (...)
        The rating; no lower bound (may be below 15 or negative).

    Raises
    ------
    RatingError
        If a band 125-4000 Hz is NaN or infinite (the message names it).
    ValueError
        If the last axis is not 21 bands long.

    Notes
    -----
    Contour c_i(s) = s + Delta_i with Delta_i = -16, -13, -10, -7, -4, -1, 0,
    +1, +2, +3, +4 (x6) dB at 125...4000 Hz. STC is the largest integer s with
    sum_i max(0, c_i - TL_i) <= 32 dB and max_i (c_i - TL_i) <= 8 dB [1]_,
    solved in closed form (module Notes).

    References
    ----------
    .. [1] ASTM E413-22, Sections 6-7 and Table 1.
    """
    arr = _as_bands(tl)
    out = np.empty(int(np.prod(arr.shape[:-1])))
    for start, block in _blocks(arr):
        check_finite(block, _STC, _label)
        out[start : start + block.shape[0]] = _stc_rows(block, round_tl)
    return _finish(out, arr.shape[:-1], True)


def rw(tl: ArrayLike, *, decimal: bool = False, enlarged: bool = True, _label: str = "Rw") -> RwResult:
    """Weighted sound reduction index Rw with C, Ctr and enlarged-range terms (ISO 717-1).

    Parameters
    ----------
    tl : array_like, shape (..., 21)
        Band values in dB (R, R', Dn, DnT ...) over :data:`acoustics.BANDS`.
        100-3150 Hz are required; the enlarged terms use 50-5000 Hz when given.
    decimal : bool
        False (default): ISO 717-1 integer rating, reference curve shifted in
        1 dB steps and C terms rounded to integers. True: shift in 0.1 dB steps
        and C terms to 0.1 dB, as ISO 12999-1 Annex B asks for stating
        uncertainty.
    enlarged : bool
        Compute the enlarged-range terms (default True). False skips them
        (they come back as None / NaN) and is faster.

    Returns
    -------
    RwResult
        Fields ``rw, c, ctr, c50_3150, c50_5000, c100_5000, ctr50_3150,
        ctr50_5000, ctr100_5000``. 1-D input gives numbers (``None`` for an
        enlarged term whose bands are missing); batch input gives arrays
        (int64 for integer rw, c, ctr; float with NaN for missing enlarged terms).

    Raises
    ------
    RatingError
        If a band 100-3150 Hz is NaN or infinite.

    Notes
    -----
    Inputs are reduced to 0.1 dB. Rw is the 500 Hz value of the reference curve
    (33 ... 56 dB at 100 ... 3150 Hz) shifted as far as possible with the sum
    of unfavourable deviations <= 32.0 dB [1]_ (closed form, module Notes). For
    spectrum j with levels L_ij, X_Aj = -10 lg sum_i 10^((L_ij - X_i)/10) and
    C_j = round(X_Aj) - Rw [1]_, rounded half up.

    References
    ----------
    .. [1] ISO 717-1:2020, Clauses 4.4-4.5, Tables 3-4, Annex B Table B.1.
    .. [2] ISO 12999-1:2020, Annex B (0.1 dB variant).
    """
    arr = _as_bands(tl)
    lead = arr.shape[:-1]
    n = int(np.prod(lead))
    cols = len(_TERMS) if enlarged else 2
    value = np.empty(n)
    xa = np.empty((n, cols))
    for start, block in _blocks(arr):
        check_finite(block, _RW, _label)
        stop = start + block.shape[0]
        value[start:stop] = _rw_rows(block, decimal)
        xa[start:stop] = _spectrum_levels(block, enlarged)
    with np.errstate(invalid="ignore"):
        terms = round_half_up(xa, 1 if decimal else 0) - value[:, None]
    if decimal:
        terms = np.round(terms, 1)  # 0.1 dB steps without float residue (53.4 - 55.0 = -1.6000000000000014)
    if not lead:
        num: Callable[[float], Any] = float if decimal else int
        vals = [num(value[0])] + [None if np.isnan(v) else num(v) for v in terms[0]]
        vals += [None] * (len(_TERMS) - cols)
        return RwResult(*vals)
    fields: list[Any] = [value.reshape(lead)]
    for j in range(len(_TERMS)):
        fields.append(terms[:, j].reshape(lead) if j < cols else np.full(lead, np.nan))
    if not decimal:
        for j in (0, 1, 2):
            fields[j] = fields[j].astype(np.int64)
    return RwResult(*fields)


def oitc(tl: ArrayLike, *, decimal: bool = False, _label: str = "OITC") -> Any:
    """Outdoor-Indoor Transmission Class (ASTM E1332) of band spectra.

    Parameters
    ----------
    tl : array_like, shape (..., 21)
        Band TL (or NR, giving OINIC) in dB; 80-4000 Hz are read.
    decimal : bool
        Return the value to 0.1 dB instead of the integer rating.

    Returns
    -------
    int, float or ndarray
        OITC = 100.13 - 10 lg sum_i 10^((L_i + A_i - TL_i)/10), rounded half up.

    Notes
    -----
    L_i is the E1332 reference spectrum, A_i the A-weighting; 100.13 dB is the
    overall A-weighted level of L, so a flat TL of X dB rates X.

    References
    ----------
    .. [1] ASTM E1332-22, Section 4.1 and Table 1 (spectrum from memory).
    """
    arr = _as_bands(tl)
    out = np.empty(int(np.prod(arr.shape[:-1])))
    for start, block in _blocks(arr):
        check_finite(block, _OITC, _label)
        out[start : start + block.shape[0]] = _oitc_raw(block)
    return _finish(round_half_up(out, 1 if decimal else 0), arr.shape[:-1], not decimal)


def rate(tl: ArrayLike, rating: str = "stc") -> Any:
    """The integer rating named ``rating`` ("stc", "rw" or "oitc") of ``tl``."""
    if rating == "stc":
        return stc(tl)
    if rating == "rw":
        return rw(tl).rw
    if rating == "oitc":
        return oitc(tl)
    raise ValueError(f"rating must be one of {RATINGS}, got {rating!r}")


def contour(rating: str, value: float) -> Floats:
    """Reference contour of ``rating`` placed at ``value``, for drawing beside a TL curve.

    Parameters
    ----------
    rating : {"stc", "rw"}
    value : float
        Rating (contour value at 500 Hz), dB.

    Returns
    -------
    ndarray, shape (21,)
        Contour in dB, NaN outside the rating's bands.
    """
    out = np.full(N_BANDS, np.nan)
    if rating == "stc":
        out[_STC] = value + _STC_SHAPE
    elif rating == "rw":
        out[_RW] = value + _RW_SHAPE
    else:
        raise ValueError(f"rating must be 'stc' or 'rw' for a contour, got {rating!r}")
    return out
