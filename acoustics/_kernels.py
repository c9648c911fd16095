"""Batch kernels behind :mod:`acoustics.ratings`: contour searches, band energy sums, input checks.

Private: the public functions in :mod:`acoustics.ratings` validate shapes and
call these on row blocks (curves on axis 0, the 21 bands on axis 1).

Notes
-----
Speed comes from three choices, none of which changes a result:

1. Each block is transposed once into preallocated work buffers with the bands
   on axis 0, so every later operation runs along long contiguous rows and no
   large temporary is allocated (fresh multi-megabyte temporaries cost page
   faults, which dominate on a loaded machine).
2. The contour searches run on small integers (int16, or uint8 for STC): band
   values rounded to whole decibels (STC) or to integer tenths (ISO 717-1, so
   an unfavourable sum of exactly 32.0 dB is compared exactly), made relative
   to the lowest band. Integer arithmetic makes the comparisons exact.
3. The contour position is found by binary lifting on the integer shift (the
   deficiency sum is monotone in the shift), each step one pass over the block:
   3 steps for STC; for Rw 3 steps inside a window just below the upper bound
   (6 in 0.1 dB steps), plus a full search for the few curves below it.
4. Range checks use the per-curve minimum and sum the search needs anyway; the
   exact band-by-band scan (which names the band) runs only when they fail.

The energy sums for C and Ctr are one matrix product of the per-band powers
10^(-X/10) with the precomputed spectrum weights 10^(L/10).

References
----------
.. [1] ASTM E413-22, Sections 6-7 and Table 1.
.. [2] ISO 717-1:2020, Clauses 4.4-4.5, Tables 3-4, Annex B Table B.1.
"""

from __future__ import annotations

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
    _RW_TENTHS,
    _SPEC_USED,
    _SPEC_W,
    _SPEC_W_RW,
    _STC,
    _STC_SHAPE,
)

__all__: list[str] = []

# Curves per block: the (16, n) float64 work buffer (512 KiB) stays in the L2 cache.
CHUNK = 4096
# Half-up rounding constant: floor(x + 0.5 + 1e-7), see ratings.round_half_up.
_HALF = 0.5 + 1e-7

_E413 = "ASTM E413 range 125-4000 Hz"
_ISO717 = "ISO 717-1 range 100-3150 Hz"
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

_STC_COL = _STC_SHAPE[:, None]
_RW_COL = _RW_TENTHS[:, None]
_SPEC_W_T = np.ascontiguousarray(_SPEC_W.T)  # (8, 21)
_SPEC_USED_T = _SPEC_USED.T.astype(float)  # (8, 21)
_N_STC = _STC.stop - _STC.start
_N_RW = _RW.stop - _RW.start


def check_finite(block: np.ndarray, sl: slice, rating: str) -> None:
    """Raise RatingError naming the first band of ``sl`` that is NaN, infinite or beyond +-1e6 dB."""
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
        f"{rating} needs the {band:g} Hz band ({RANGE_TEXT[rating]}), but it is {what}",
        band=band,
        rating=rating,
    )


# Rows of the span whose first bad band an error names (the checking unit of earlier versions, kept so
# a batch with several bad curves names the same band as before). A cheap test on the per-curve minimum
# and sum (_range_ok) guards each block; the exact scan runs only when it fails.
ERR_ROWS = 16384


class Work:
    """Preallocated per-call work buffers for blocks of up to ``rows`` curves."""

    def __init__(self, rows: int, bands: int = _N_RW, power: bool = False) -> None:
        self.f = np.empty((bands, rows))
        self.p = np.empty((bands, rows)) if power else None
        self.g = np.empty((_N_RW, rows)) if bands > _N_RW else None
        self.i16 = np.empty((_N_RW, rows), np.int16)
        self.d16 = np.empty((_N_RW, rows), np.int16)
        self.z16 = np.zeros((_N_RW, rows), np.int16)
        self.u8 = np.empty((_N_STC, rows), np.uint8)
        self.d8 = np.empty((_N_STC, rows), np.uint8)


def _lift16(v: np.ndarray, start, hi, limit: int, unit: int, steps, ws: Work) -> np.ndarray:
    """Largest s in [start, hi] with sum_i max(0, unit*s - v_i) <= limit; ``start`` must satisfy it.

    ``v`` (int16, bands on axis 0) is read only; ``start`` and ``hi`` are scalars
    or int16 rows. The admissible s form a prefix (the sum grows with s), so
    adding each power of two whenever the result stays admissible finds the
    largest; ``steps`` must reach every offset up to max(hi - start).
    """
    n = v.shape[1]
    dev = ws.d16[:, :n]
    zeros = ws.z16[:, :n]  # array-array maximum is vectorised; the scalar form is several times slower
    res = np.array(np.broadcast_to(start, (n,)), dtype=np.int16)
    span = int(np.max(hi - res)) if n else 0
    for step in steps:
        if step > max(span, 1):
            continue
        cand = res + np.int16(step)
        np.subtract(cand * np.int16(unit) if unit != 1 else cand, v, out=dev)
        np.maximum(dev, zeros, out=dev)
        ok = dev.sum(axis=0, dtype=np.int16) <= limit
        ok &= cand <= hi
        res = np.where(ok, cand, res)
    return res


def _admissible(v: np.ndarray, s: np.ndarray, limit: int, unit: int, ws: Work) -> np.ndarray:
    """sum_i max(0, unit*s - v_i) <= limit per curve (int16 rows)."""
    n = v.shape[1]
    dev = ws.d16[:, :n]
    np.subtract(s * np.int16(unit) if unit != 1 else s, v, out=dev)
    np.maximum(dev, ws.z16[:, :n], out=dev)
    return dev.sum(axis=0, dtype=np.int16) <= limit


def stc_block(x: np.ndarray, round_tl: bool, ws: Work, label: str, span: np.ndarray) -> np.ndarray:
    """STC (float, integer-valued) of one block of curves, x of shape (m, 21); ``span`` for errors."""
    m = x.shape[0]
    t = ws.f[:_N_STC, :m]
    if not round_tl:
        check_finite(span, _STC, label)
        np.subtract(x[:, _STC].T, _STC_COL, out=t)
        umin = t.min(axis=0)
        lo, hi = np.floor(umin + 2 + 1e-9), np.floor(umin + 8 + 1e-9)
        res = lo
        for step in (4, 2, 1):
            cand = res + step
            ok = np.maximum(cand - t, 0).sum(axis=0) <= 32 + 1e-6
            ok &= cand <= hi
            res = np.where(ok, cand, res)
        return res
    np.add(x[:, _STC].T, _HALF, out=t)
    np.floor(t, out=t)
    t -= _STC_COL
    with np.errstate(invalid="ignore", over="ignore"):
        umin, usum = t.min(axis=0), t.sum(axis=0)
    if not _range_ok(umin, usum, _B_DB):
        check_finite(span, _STC, label)
    t -= umin
    v = ws.u8[:, :m]
    np.minimum(t, 9.0, out=v, casting="unsafe")  # capped, then uint8 in the same pass
    # Contour at umin + d, d in [2, 8]: d = 2 keeps every deficiency <= 2 dB (sum <= 32); 8 is the
    # single-band cap. uint8: max(v, d) - v = max(0, d - v) <= 9 per band, sum <= 144 < 256.
    dev = ws.d8[:, :m]
    res = np.full(m, 2, np.uint8)
    for step in (4, 2, 1):
        cand = res + np.uint8(step)
        np.maximum(v, cand, out=dev)
        dev -= v
        ok = dev.sum(axis=0, dtype=np.uint8) <= 32
        ok &= cand <= 8
        res = np.where(ok, cand, res)
    umin += res
    return umin


# Search windows below the upper bound (window, its lifting steps, the full steps): Rw lies within 5 dB of
# it for all but a few in 100 000 wall-like curves (measured on the benchmark's curves); 0.1 dB variant:
# 6.3 dB. Curves outside the window are searched again on their own, so the window only affects speed.
_WINDOW = {
    False: (7, (4, 2, 1), (16, 8, 4, 2, 1)),
    True: (63, (32, 16, 8, 4, 2, 1), (256, 128, 64, 32, 16, 8, 4, 2, 1)),
}


def rw_search(u: np.ndarray, umin: np.ndarray, usum: np.ndarray, decimal: bool, ws: Work) -> np.ndarray:
    """Rw of one block from u = X - reference curve in integer tenths (float, (16, m)); u may be overwritten.

    ``umin`` and ``usum`` are the per-curve minimum and sum of u. The shift s
    (whole dB, or tenths for ``decimal``) is bracketed by lo (every deviation
    <= 2.0 dB, so the sum is <= 32.0) and hi (the lowest band alone, or all 16
    bands deficient, would exceed 32.0 beyond it). The search lifts from
    start = max(lo, hi - window) over the window only (3 steps instead of 5;
    0.1 dB: 6 instead of 9). A result above start proves start admissible; the
    few curves left at start > lo are tested, and those where start fails get
    the full search below it.
    """
    m = u.shape[1]
    unit = 1 if decimal else 10
    if decimal:
        lo = umin + 20.0
        hi = np.minimum(umin + 320.0, np.floor((320.0 + usum) / 16.0))
    else:
        lo = np.floor((umin + 20.0) / 10.0)
        hi = np.minimum(np.floor((umin + 320.0) / 10.0), np.floor((320.0 + usum) / 160.0))
    window, near, full = _WINDOW[decimal]
    # v = u relative to the contour at lo, as int16. The spread max(u) - umin <= usum - 16 umin; below
    # 30000 tenths one pass converts, else values no contour reaches are capped at 600 first.
    v = ws.i16[:, :m]
    if m and (usum - 16.0 * umin).max() < 30000.0:
        np.subtract(u, lo * unit, out=v, casting="unsafe")
    else:
        u -= lo * unit
        np.minimum(u, 600.0, out=v, casting="unsafe")
    dhi = (hi - lo).astype(np.int16)
    start = np.maximum(dhi - np.int16(window), np.int16(0))
    d = _lift16(v, start, dhi, 320, unit, near, ws)
    unsure = np.flatnonzero((d == start) & (start > 0))
    if unsure.size:
        sub = np.ascontiguousarray(v[:, unsure])
        fail = ~_admissible(sub, start[unsure], 320, unit, ws)
        if fail.any():
            idx, sub = unsure[fail], sub[:, fail]  # start fails: the answer lies in [0, start - 1]
            d[idx] = _lift16(np.ascontiguousarray(sub), 0, start[idx] - np.int16(1), 320, unit, full, ws)
    lo += d
    return lo / 10.0 if decimal else lo


# Bounds (in the rows' units) of the cheap range check: min(u) > -B and sum(u) - 15 min(u) < B put every
# band strictly inside +-B, which with the contour shape added stays inside the +-1e6 dB input limit.
_B_TENTHS = 9_999_000.0
_B_DB = 999_000.0


def _range_ok(umin: np.ndarray, usum: np.ndarray, bound: float) -> bool:
    """True if every band of every curve is finite and inside +-bound (NaN and inf fail)."""
    with np.errstate(invalid="ignore", over="ignore"):
        return bool((umin > -bound).all() and (usum - 15.0 * umin < bound).all())


def rw_block_fast(
    x: np.ndarray, decimal: bool, enlarged: bool, ws: Work, label: str, span: np.ndarray
) -> tuple[np.ndarray, np.ndarray]:
    """Rw and the X_A sums of one block, x of shape (m, 21); X_A has shape (8, m) or (2, m) (unrounded).

    The rated bands are checked (RatingError names the first bad one).
    """
    m = x.shape[0]
    if not enlarged:
        t = ws.f[:, :m]
        np.multiply(x[:, _RW].T, 10.0, out=t)
        t += _HALF
        np.floor(t, out=t)  # tenths, ties up (ISO 717-1 4.4 footnote 1)
        p = ws.p[:, :m]
        np.multiply(t, _NEG_LN10_100, out=p)
        t -= _RW_COL
        with np.errstate(invalid="ignore", over="ignore"):
            umin, usum = t.min(axis=0), t.sum(axis=0)
        if not _range_ok(umin, usum, _B_TENTHS):
            check_finite(span, _RW, label)
        np.exp(p, out=p)  # 10^(-X/10) with X = tenths / 10
        xa = _SPEC_W_RW @ p
        np.log10(xa, out=xa)
        xa *= -10.0
        return rw_search(t, umin, usum, decimal, ws), xa
    t = ws.f[:, :m]
    np.multiply(x.T, 10.0, out=t)
    t += _HALF
    np.floor(t, out=t)
    r = ws.g[:, :m]
    np.subtract(t[_RW], _RW_COL, out=r)
    with np.errstate(invalid="ignore", over="ignore"):
        umin, usum = r.min(axis=0), r.sum(axis=0)
    if not _range_ok(umin, usum, _B_TENTHS):
        check_finite(span, _RW, label)
    bad = None
    with np.errstate(invalid="ignore", over="ignore"):
        all_finite = np.isfinite(t.sum())
    if not all_finite:
        bad = ~np.isfinite(t)
        if bad.any():
            t[bad] = 0.0
        else:
            bad = None
    p = ws.p[:, :m]
    np.multiply(t, _NEG_LN10_100, out=p)
    np.exp(p, out=p)
    if bad is not None:
        p[bad] = 0.0
    with np.errstate(divide="ignore"):
        xa = _SPEC_W_T @ p
        np.log10(xa, out=xa)
    xa *= -10.0
    if bad is not None:
        xa[(_SPEC_USED_T @ bad.astype(float)) > 0] = np.nan
    return rw_search(r, umin, usum, decimal, ws), xa


def rw_block(x: np.ndarray, decimal: bool, enlarged: bool = True) -> tuple[np.ndarray, np.ndarray]:
    """Rw (integer-valued or 0.1 dB) and the X_A sums, shape (m, 8) or (m, 2), of one unchecked block."""
    ws = Work(x.shape[0], N_BANDS, power=True)
    value, xa = rw_block_fast(x, decimal, enlarged, ws, "Rw", x)
    return value, xa.T


def oitc_value(x: np.ndarray) -> np.ndarray:
    """Unrounded OITC of one block."""
    return _OITC_TOTAL - 10.0 * np.log10(np.exp(x[:, _OITC] * (-np.log(10.0) / 10.0)) @ _OITC_W)


# ---------------------------------------------------------------------------------------------------
# Small batches (the audit rates a few dozen curves many times): closed forms, few numpy calls.


def small_stc(x: np.ndarray) -> np.ndarray:
    """STC (float) of a small (k, 21) batch, unvalidated.

    Largest s with sum_i max(0, s - u_i) <= 32 and s <= min(u) + 8, u = rounded TL
    minus the contour shape. With u sorted and P_j the sum of its j smallest
    values the deficiency sum is max_j (j s - P_j), so s = floor(min_j (32 + P_j) / j).
    All P_j come from one product with a triangular matrix of ones (exact: small
    integers in float); a ratio of integers with denominator j <= 16 is either
    exact or at least 1/16 above its floor, so the floor needs no tolerance.
    Few numpy calls, which is what counts for a few dozen curves.
    """
    t = np.add(x[:, _STC], _HALF)
    np.floor(t, out=t)
    t -= _STC_SHAPE
    t.sort(axis=1)
    p = _TRI16 @ t.T  # (16, k): row j-1 holds P_j
    p += 32.0
    p /= _K16_COL
    s = p.min(axis=0)
    np.floor(s, out=s)
    t = t[:, 0]
    t += 8.0
    return np.minimum(s, t, out=s)


def small_rw(x: np.ndarray) -> np.ndarray:
    """Rw (float) of a small (k, 21) batch, unvalidated; integer tenths so a 32.0 dB sum is exact.

    s = floor(min_j (320 + P_j) / (10 j)) with P_j the sum of the j smallest
    values of u = X - reference curve in integer tenths: a ratio of integers
    with denominator <= 160, exact or at least 1/160 above its floor.
    """
    t = np.multiply(x[:, _RW], 10.0)
    t += _HALF
    np.floor(t, out=t)
    t -= _RW_TENTHS
    t.sort(axis=1)
    p = _TRI16 @ t.T
    p += 320.0
    p /= _K16_10_COL
    s = p.min(axis=0)
    return np.floor(s, out=s)


# Lower-triangular ones: (_TRI16 @ u)[j - 1] = sum of the first j entries of u.
_TRI16 = np.tril(np.ones((16, 16)))
_K16_COL = _K16[:, None]
_K16_10_COL = 10.0 * _K16[:, None]


def small_oitc(x: np.ndarray) -> np.ndarray:
    """Integer OITC (float) of a small batch: round half up of :func:`oitc_value`."""
    return np.floor(oitc_value(x) + _HALF)


SMALL_RATERS = {"stc": small_stc, "rw": small_rw, "oitc": small_oitc}
LABELS = {"stc": ("STC", _STC), "rw": ("Rw", _RW), "oitc": ("OITC", _OITC)}
