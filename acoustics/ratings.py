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
s inside that bracket is found by binary lifting (3 steps for STC, 5 for Rw,
9 for Rw in 0.1 dB steps), each step one vectorised pass over all curves.
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

from .bands import BANDS, N_BANDS
from .errors import RatingError
from .spectra import (
    _K16,
    _NEG_LN10_100,
    _OITC,
    _OITC_TOTAL,
    _OITC_W,
    _RW,
    _RW_SHAPE,
    _RW_TENTHS,
    _SPEC1_100_3150,
    _SPEC_USED,
    _SPEC_W,
    _SPEC_W_RW,
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

# Rows per internal chunk: keeps temporaries inside the CPU cache and bounds
# the memory of rating millions of curves.
_CHUNK = 16384


_E413 = "ASTM E413 range 125-4000 Hz"
_ISO717 = "ISO 717-1 range 100-3150 Hz"
_RANGE_TEXT = {
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


def _check_finite(block: np.ndarray, sl: slice, rating: str) -> None:
    sub = block[:, sl]
    # One pass: NaN and +-inf fail the comparison; 1e6 dB keeps the integer tenths in range.
    ok = np.abs(sub) < 1e6
    if ok.all():
        return
    bad_rows, bad_cols = np.nonzero(~ok)
    col = bad_cols.min()
    band = float(BANDS[sl][col])
    value = sub[bad_rows[bad_cols == col][0], col]
    if np.isnan(value):
        what = "missing (NaN)"
    elif np.isinf(value):
        what = f"not finite ({value})"
    else:
        what = f"out of range ({value} dB, limit +-1e6 dB)"
    raise RatingError(
        f"{rating} needs the {band:g} Hz band ({_RANGE_TEXT[rating]}), but it is {what}",
        band=band,
        rating=rating,
    )


def _lift(
    v: np.ndarray, lo: np.ndarray, hi: np.ndarray, limit: int, unit: int, steps: tuple[int, ...]
) -> np.ndarray:
    """Largest s in [lo, hi] with sum_i max(0, unit*s - v_i) <= limit (``lo`` must satisfy it).

    ``v`` (int16) has the bands on axis 0 and the curves on axis 1, so every
    operation runs along long contiguous rows. The admissible s form a prefix of
    [lo, hi] (the deficiency sum grows with s), so adding each power of two
    whenever the result stays admissible finds the largest one.
    """
    res = lo
    span = int(np.max(hi - lo)) if np.ndim(hi) else int(hi - np.min(lo))
    # Powers of two up to the largest p <= span reach every offset up to 2p - 1 >= span.
    steps = tuple(st for st in steps if st <= max(span, 1))
    for step in steps:
        cand = res + step
        dev = (cand * unit).astype(np.int16) - v
        np.maximum(dev, 0, out=dev)
        ok = dev.sum(axis=0, dtype=np.int16) <= limit
        ok &= cand <= hi
        res = np.where(ok, cand, res)
    return res


def _rounded_rows(x: np.ndarray, sl: slice, scale: float) -> np.ndarray:
    """round_half_up(x[:, sl] * scale) as float with bands on axis 0 (contiguous rows)."""
    t = np.multiply(x[:, sl].T, scale, order="C")
    t += 0.5 + 1e-7
    return np.floor(t, out=t)


def _relative(u: np.ndarray, cap: float) -> tuple[np.ndarray, np.ndarray]:
    """Row minimum of u and min(u - umin, cap) as int16 (small non-negative integers)."""
    umin = u.min(axis=0)
    u -= umin
    np.minimum(u, cap, out=u)
    return umin, u.astype(np.int16)


def _stc_block(x: np.ndarray, round_tl: bool) -> np.ndarray:
    if round_tl:
        u = _rounded_rows(x, _STC, 1.0)
        u -= _STC_SHAPE[:, None]
        umin, v = _relative(u, 9.0)
        # Contour at umin + 2: every deficiency <= 2 dB, sum <= 32. umin + 8: the 8 dB single-band cap.
        d = _lift(v, np.full(umin.shape, 2, np.int16), 8, 32, 1, (4, 2, 1))
        return umin + d
    u = np.subtract(x[:, _STC].T, _STC_SHAPE[:, None], order="C")
    umin = u.min(axis=0)
    lo, hi = np.floor(umin + 2 + 1e-9), np.floor(umin + 8 + 1e-9)
    res = lo
    for step in (4, 2, 1):
        cand = res + step
        ok = np.maximum(cand - u, 0).sum(axis=0) <= 32 + 1e-6
        ok &= cand <= hi
        res = np.where(ok, cand, res)
    return res


def _rw_value(tenths: np.ndarray, decimal: bool) -> np.ndarray:
    """Rw of one block from the 100-3150 Hz band values in integer tenths of a dB, shape (16, n)."""
    u = tenths - _RW_TENTHS[:, None]
    usum = u.sum(axis=0)
    umin, v = _relative(u, 600.0)
    if decimal:
        # Contour in tenths above umin: 20 keeps every deviation <= 2.0 dB; 320 puts the lowest band at 32.0.
        d = _lift(v, np.full(umin.shape, 20, np.int16), 320, 320, 1, (256, 128, 64, 32, 16, 8, 4, 2, 1))
        return (umin + d) / 10.0
    lo = np.floor((umin + 20) / 10)
    # Work in whole dB above lo; v measured from umin, so offset by (10 lo - umin) tenths (10..20).
    off = (10 * lo - umin).astype(np.int16)
    v = v - off
    # Upper end: the lowest band alone reaches 32.0, and 16 s - sum(u) <= 32 (all deficient).
    hi = np.minimum(np.floor((umin + 320) / 10), np.floor((320 + usum) / 160))
    d = _lift(v, np.zeros(umin.shape, np.int16), (hi - lo).astype(np.int16), 320, 10, (16, 8, 4, 2, 1))
    return lo + d


def _tenths(x: np.ndarray) -> tuple[np.ndarray, np.ndarray | None]:
    """Band values reduced to 0.1 dB (ISO 717-1 4.4 footnote 1, ties up), in tenths, bands on axis 0.

    Returns the (21, n) tenths and a (21, n) mask of non-finite bands (None if all finite);
    non-finite bands (allowed outside 100-3150 Hz) are set to 0 and must be masked by the caller.
    """
    t = _rounded_rows(x, slice(None), 10.0)
    bad = ~np.isfinite(t)
    if bad.any():
        t[bad] = 0.0
        return t, bad
    return t, None


def _rw_block(x: np.ndarray, decimal: bool, enlarged: bool = True) -> tuple[np.ndarray, np.ndarray]:
    """Rw (integer-valued or 0.1 dB) and the X_A sums (unrounded, (n, 8) or (n, 2)) for one block."""
    if not enlarged:
        tenths = _rounded_rows(x, _RW, 10.0)  # finite: checked by the caller
        value = _rw_value(tenths, decimal)
        tenths *= _NEG_LN10_100
        power = np.exp(tenths, out=tenths)
        xa = np.log10(_SPEC_W_RW @ power)
        xa *= -10.0
        return value, xa.T
    tenths, bad = _tenths(x)
    value = _rw_value(tenths[_RW], decimal)
    tenths *= _NEG_LN10_100
    power = np.exp(tenths, out=tenths)  # 10^(-X/10) with X = tenths / 10
    if bad is not None:
        power[bad] = 0.0
    with np.errstate(divide="ignore"):
        xa = np.log10(_SPEC_W.T @ power)
    xa *= -10.0
    xa = xa.T
    if bad is not None:
        xa[(_SPEC_USED.T.astype(float) @ bad.astype(float)).T > 0] = np.nan
    return value, xa


def _oitc_value(x: np.ndarray) -> np.ndarray:
    """Unrounded OITC of one block."""
    return _OITC_TOTAL - 10.0 * np.log10(np.exp(x[:, _OITC] * (-np.log(10.0) / 10.0)) @ _OITC_W)


def _closed_form(u: np.ndarray, limit: float) -> np.ndarray:
    """Largest s with sum_i max(0, s - u_i) <= limit per row of u (rows = curves), in closed form.

    With u sorted and P_k the sum of its k smallest values, the deficiency sum
    is max_k (k s - P_k), so s* = floor(min_k (limit + P_k) / k). Few numpy
    calls, which suits the small batches of the audit (its cost there is
    call overhead, not arithmetic).
    """
    u = np.sort(u, axis=1)
    p = np.cumsum(u, axis=1)
    p += limit
    p /= _K16
    return np.floor(p.min(axis=1) + 1e-9)


def _small_stc(x: np.ndarray) -> np.ndarray:
    t = np.floor(x[:, _STC] + (0.5 + 1e-7)) - _STC_SHAPE
    return np.minimum(_closed_form(t, 32.0), t.min(axis=1) + 8.0)


def _small_rw(x: np.ndarray) -> np.ndarray:
    # Tenths, so an unfavourable sum of exactly 32.0 dB is compared exactly; s in tenths, then whole dB.
    t = np.floor(x[:, _RW] * 10.0 + (0.5 + 1e-7)) - _RW_TENTHS
    return np.floor(_closed_form(t / 10.0, 32.0 + 1e-9))


def _block_rater(rating: str):
    """Integer rater of small 2-D blocks (curves on axis 0) without validation (callers validated once)."""
    if rating == "stc":
        return _small_stc
    if rating == "rw":
        return _small_rw
    if rating == "oitc":
        return lambda x: round_half_up(_oitc_value(x))
    raise ValueError(f"rating must be one of {RATINGS}, got {rating!r}")


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
    flat = arr.reshape(-1, N_BANDS)
    for start in range(0, flat.shape[0], _CHUNK):
        yield start, flat[start : start + _CHUNK]


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
    for start, block in _blocks(arr):
        _check_finite(block, _STC, _label)
        flat_out[start : start + block.shape[0]] = _stc_block(block, round_tl)
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
    rw_out = np.empty(n)
    xa_out = np.full((n, len(_TERMS)), np.nan)
    cols = len(_TERMS) if enlarged else 2
    for start, block in _blocks(arr):
        _check_finite(block, _RW, _label)
        value, xa = _rw_block(block, decimal, enlarged)
        stop = start + block.shape[0]
        rw_out[start:stop] = value
        xa_out[start:stop, :cols] = xa
    with np.errstate(invalid="ignore"):
        if decimal:
            terms = np.round(round_half_up(xa_out, 1) - rw_out[:, None], 1)
        else:
            terms = round_half_up(xa_out) - rw_out[:, None]
    if not lead:
        num = (lambda v: int(v)) if not decimal else (lambda v: float(v))
        vals = [num(rw_out[0])] + [None if np.isnan(v) else num(v) for v in terms[0]]
        return RwResult(*vals)
    fields = [rw_out.reshape(lead)]
    for j in range(len(_TERMS)):
        fields.append(terms[:, j].reshape(lead))
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
    for start, block in _blocks(arr):
        _check_finite(block, _OITC, _label)
        flat_out[start : start + block.shape[0]] = _oitc_value(block)
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
