"""Single-number ratings of band spectra: STC, Rw with C and Ctr, OITC.

Every function takes an array whose last axis runs over :data:`acoustics.BANDS`
(21 one-third-octave bands, 50-5000 Hz) and rates all leading axes in one
vectorised pass; a 1-D spectrum gives plain Python numbers. Each rating reads
only its own bands, so a spectrum measured 100-3150 Hz (NaN elsewhere) still
rates Rw; a rated band that is NaN raises :class:`~acoustics.RatingError`
naming the band.

Notes
-----
Both contour ratings are solved without stepping the contour one decibel at a
time. With u_i = X_i - c_i (band value minus the contour shape), the deficiency
sum f(s) = sum_i max(0, s - u_i) grows with the contour position s. At
s = min(u) + 2 dB no band is deficient by more than 2 dB, so f <= 16 * 2 = 32 dB
holds; at s = min(u) + 8 (ASTM E413 single-band cap) or min(u) + 32 (ISO 717-1:
the lowest band alone reaches 32) it is the upper end. The largest admissible
s inside that bracket is found by binary lifting on the integer shift, each
step one vectorised pass over all curves: 3 steps for STC; for Rw 3 steps over
the 7 dB just below the upper end (6 over 6.3 dB in 0.1 dB steps), with a full
search only for the rare curves whose rating lies lower (see
``acoustics._kernels``).
There is no floor: a wall with open gaps may rate below 15 or below zero.
ISO 717-1 values are first reduced to 0.1 dB and the search runs in integer
tenths of a decibel, so an unfavourable sum of exactly 32.0 dB is allowed.

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

from typing import Any, NamedTuple

import numpy as np

from ._kernels import (
    _HALF,
    CHUNK,
    ERR_ROWS,
    SMALL_RATERS,
    Work,
    check_finite,
    oitc_value,
    rw_block,
    rw_block_fast,
    stc_block,
)
from .bands import N_BANDS
from .spectra import (
    _OITC,
    _OITC_W,
    _RW,
    _RW_SHAPE,
    _SPEC1_100_3150,
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
]

#: Names accepted by :func:`rate` and :func:`acoustics.audit`.
RATINGS = ("stc", "rw", "oitc")

# Re-exported for callers that rate blocks or check bands themselves.
_check_finite = check_finite
_rw_block = rw_block
_oitc_value = oitc_value


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


def round_half_up(x: np.ndarray | float, decimals: int = 0) -> np.ndarray:
    """Round ties upwards: floor(x + 0.5) at ``decimals`` places (numpy's own rounding goes half to even).

    Half up rather than half away from zero (the method notes' common-practice
    suggestion) so that a uniform shift of a curve by whole decibels shifts
    every rating by exactly as much, also for negative band values; both rules
    agree for positive values. A nudge of 1e-7 (in units of the last place)
    makes decimal ties such as 42.35 (stored as 42.34999...) round up as written.
    """
    scale = 10.0**decimals
    y = np.floor(np.asarray(x, dtype=float) * scale + (0.5 + 1e-7))
    return y / scale if decimals else y


def _as_bands(tl: Any, name: str = "tl") -> np.ndarray:
    arr = np.asarray(tl, dtype=float)
    if arr.ndim == 0 or arr.shape[-1] != N_BANDS:
        raise ValueError(
            f"{name} must have {N_BANDS} one-third-octave bands (50-5000 Hz) on its last axis, "
            f"got shape {arr.shape}"
        )
    return arr


def _block_rater(rating: str):
    """Integer rater of small 2-D blocks (curves on axis 0) without validation (callers validated once)."""
    try:
        return SMALL_RATERS[rating]
    except KeyError:
        raise ValueError(f"rating must be one of {RATINGS}, got {rating!r}") from None


def rating_weights(rating: str) -> np.ndarray:
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
    return w / w.sum()


def _blocks(arr: np.ndarray):
    """Yield (start, block, span): blocks of CHUNK curves and the ERR_ROWS span an error is reported for."""
    flat = arr.reshape(-1, N_BANDS)
    for start in range(0, flat.shape[0], CHUNK):
        first = start - start % ERR_ROWS
        yield start, flat[start : start + CHUNK], flat[first : first + ERR_ROWS]


def _finish(values: np.ndarray, shape: tuple[int, ...], as_int: bool) -> Any:
    out = values.reshape(shape)
    if as_int:
        out = out.astype(np.int64)
    if out.ndim == 0:
        return int(out) if as_int else float(out)
    return out


def stc(tl: Any, *, round_tl: bool = True, _label: str = "STC") -> Any:
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
    out = np.empty(arr.shape[:-1], dtype=float)
    flat_out = out.reshape(-1)
    ws = Work(min(flat_out.size, CHUNK), 16)
    for start, block, span in _blocks(arr):
        flat_out[start : start + block.shape[0]] = stc_block(block, round_tl, ws, _label, span)
    return _finish(out, arr.shape[:-1], True)


def rw(tl: Any, *, decimal: bool = False, enlarged: bool = True, _label: str = "Rw") -> RwResult:
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
        (they come back as None / NaN) and is about a third faster.

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
    of unfavourable deviations <= 32.0 dB [1]_. For spectrum j with levels L_ij,
    X_Aj = -10 lg sum_i 10^((L_ij - X_i)/10) and C_j = round(X_Aj) - Rw [1]_.

    References
    ----------
    .. [1] ISO 717-1:2020, Clauses 4.4-4.5, Tables 3-4, Annex B Table B.1.
    .. [2] ISO 12999-1:2020, Annex B (0.1 dB variant).
    """
    arr = _as_bands(tl)
    lead = arr.shape[:-1]
    n = int(np.prod(lead)) if lead else 1
    cols = len(_TERMS) if enlarged else 2
    rw_out = np.empty(n)
    xa_out = np.empty((n, cols))
    ws = Work(min(n, CHUNK), N_BANDS if enlarged else 16, power=True)
    for start, block, span in _blocks(arr):
        value, xa = rw_block_fast(block, decimal, enlarged, ws, _label, span)
        stop = start + block.shape[0]
        rw_out[start:stop] = value
        xa_out[start:stop] = xa.T
    # Terms: X_A rounded half up (to 1 or 0.1 dB) minus Rw, as round_half_up does it.
    with np.errstate(invalid="ignore"):
        if decimal:
            xa_out *= 10.0
            xa_out += _HALF
            np.floor(xa_out, out=xa_out)
            xa_out /= 10.0
            xa_out -= rw_out[:, None]
            terms = np.round(xa_out, 1, out=xa_out)
        else:
            xa_out += _HALF
            np.floor(xa_out, out=xa_out)
            xa_out -= rw_out[:, None]
            terms = xa_out
    if not lead:
        num = (lambda v: int(v)) if not decimal else (lambda v: float(v))
        vals = [num(rw_out[0])] + [None if np.isnan(v) else num(v) for v in terms[0]]
        vals += [None] * (len(_TERMS) - cols)
        return RwResult(*vals)
    fields = [rw_out.reshape(lead)]
    for j in range(len(_TERMS)):
        fields.append(terms[:, j].reshape(lead) if j < cols else np.full(lead, np.nan))
    if not decimal:
        for j in (0, 1, 2):
            fields[j] = fields[j].astype(np.int64)
    return RwResult(*fields)


def oitc(tl: Any, *, decimal: bool = False, _label: str = "OITC") -> Any:
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
        OITC = 100.13 - 10 lg sum_i 10^((L_i + A_i - TL_i)/10), rounded.

    Notes
    -----
    L_i is the E1332 reference spectrum, A_i the A-weighting; 100.13 dB is the
    overall A-weighted level of L, so a flat TL of X dB rates X.

    References
    ----------
    .. [1] ASTM E1332-22, Section 4.1 and Table 1 (spectrum from memory).
    """
    arr = _as_bands(tl)
    out = np.empty(arr.shape[:-1], dtype=float)
    flat_out = out.reshape(-1)
    for start, block, span in _blocks(arr):
        sub = block[:, _OITC]
        if not (sub.min() > -1e6 and sub.max() < 1e6):  # NaN fails too
            check_finite(span, _OITC, _label)
        flat_out[start : start + block.shape[0]] = oitc_value(block)
    out = round_half_up(out, 1 if decimal else 0)
    return _finish(out, arr.shape[:-1], not decimal)


def rate(tl: Any, rating: str = "stc") -> Any:
    """The integer rating named ``rating`` ("stc", "rw" or "oitc") of ``tl``."""
    if rating == "stc":
        return stc(tl)
    if rating == "rw":
        return rw(tl).rw
    if rating == "oitc":
        return oitc(tl)
    raise ValueError(f"rating must be one of {RATINGS}, got {rating!r}")


def contour(rating: str, value: float) -> np.ndarray:
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
