"""Plain reference implementations of the ratings, the composite and the greedy fix order.

Written straight from the wording of each standard, one curve at a time in
Python integers and floats, with no attempt at speed: they exist so that the
vectorised closed forms of :mod:`acoustics.ratings`, :mod:`acoustics.composite`
and :mod:`acoustics.audit` can be checked against something a reader can
verify line by line against the text. The tests hold the fast paths equal to
these on thousands of curves, with tolerance zero for the integer ratings.

Private: not part of the public API, not used by the engine itself.

Rounding follows the engine's documented rule (:func:`acoustics.round_half_up`):
ties go up, with a nudge of 1e-7 in the last place so that decimal ties written
as 42.35 round up as written.

References
----------
.. [1] ASTM E413-22, *Classification for Rating Sound Insulation*, Sections 6-7
   and Table 1: shift the contour in 1 dB steps; the sum of deficiencies may
   not exceed 32 dB and no single deficiency 8 dB; the STC is the contour's
   value at 500 Hz.
.. [2] ISO 717-1:2020, Clause 4.4: values reduced to 0.1 dB; the reference
   curve is shifted in 1 dB steps (0.1 dB steps per ISO 12999-1 Annex B) until
   the sum of unfavourable deviations is as large as possible but not more
   than 32.0 dB. Clause 4.5, Formulas (1)-(2): X_Aj = -10 lg sum_i
   10^((L_ij - X_i)/10), C_j = X_Aj - Rw rounded to an integer.
.. [3] ASTM E1332-22, Section 4.1: OITC = 100.13 - 10 lg sum_i
   10^((L_i + A_i - TL_i)/10).
.. [4] Hopkins, C. (2007) *Sound Insulation*, Eq. 4.92: composite transmission
   by energy sum over the elements.
.. [5] Sealwalk acoustics method notes, Section 12: the fix-first order is
   greedy, best rating after the fix first, ties by weighted transmitted power,
   then by input order.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from typing import Any

import numpy as np

from .ratings import rating_weights
from .spectra import _A_WEIGHT, _OITC_L, _RW_SHAPE, _SPECTRA, _STC_SHAPE

__all__ = [
    "ref_stc",
    "ref_rw",
    "ref_spectrum_level",
    "ref_oitc",
    "ref_composite",
    "ref_audit",
    "ref_wall_order",
]

_HALF = 0.5 + 1e-7
_STC_BANDS = range(4, 20)  # 125-4000 Hz in acoustics.BANDS
_RW_BANDS = range(3, 19)  # 100-3150 Hz
_OITC_BANDS = range(2, 20)  # 80-4000 Hz


def _half_up(x: float) -> int:
    return math.floor(x + _HALF)


def ref_stc(curve: Sequence[float]) -> int:
    """STC by ASTM E413 as worded: whole-dB TL, contour lowered 1 dB at a time until it fits.

    Start where the lowest band is 8 dB deficient (no higher contour can pass
    the single-deficiency rule) and step down until the deficiency sum is at
    most 32 dB and no band is deficient by more than 8 dB.
    """
    tl = [_half_up(curve[b]) for b in _STC_BANDS]
    shape = [int(v) for v in _STC_SHAPE]
    s = min(t - c for t, c in zip(tl, shape, strict=True)) + 8
    while True:
        dev = [max(0, s + c - t) for t, c in zip(tl, shape, strict=True)]
        if sum(dev) <= 32 and max(dev) <= 8:
            return s
        s -= 1


def ref_rw(curve: Sequence[float], decimal: bool = False) -> float:
    """Rw by ISO 717-1 as worded, in integer tenths: lower the reference curve until the sum <= 32.0 dB.

    Start above the answer, where the lowest band alone or all 16 bands
    together would exceed 32.0 dB, and step down by 1 dB (or 0.1 dB).
    Returns an int (whole-dB rating) or a float in 0.1 dB steps.
    """
    x = [_half_up(curve[b] * 10.0) for b in _RW_BANDS]
    ref = [round(10 * v) for v in _RW_SHAPE]
    step = 1 if decimal else 10
    u = [xi - r for xi, r in zip(x, ref, strict=True)]
    s = min(min(u) + 320, (sum(u) + 320) // 16) // step * step
    while sum(max(0, s + r - xi) for xi, r in zip(x, ref, strict=True)) > 320:
        s -= step
    return s / 10.0 if decimal else int(s // 10)


def ref_spectrum_level(curve: Sequence[float], column: int) -> float | None:
    """X_A of ISO 717-1 spectrum ``column`` (0 C, 1 Ctr, 2-7 enlarged ranges), or None if a band is missing.

    Inputs reduced to 0.1 dB; the energy sum by :func:`math.fsum`.
    """
    spec = _SPECTRA[:, column]
    terms = []
    for b in range(len(spec)):
        if math.isnan(spec[b]):
            continue
        if not math.isfinite(curve[b]):
            return None
        xb = _half_up(curve[b] * 10.0) / 10.0
        terms.append(10.0 ** ((spec[b] - xb) / 10.0))
    return float(-10.0 * math.log10(math.fsum(terms)))


def ref_oitc(curve: Sequence[float]) -> float:
    """Unrounded OITC by ASTM E1332 Section 4.1, summed with :func:`math.fsum`."""
    terms = [
        10.0 ** ((lv + a - curve[b]) / 10.0) for b, lv, a in zip(_OITC_BANDS, _OITC_L, _A_WEIGHT, strict=True)
    ]
    return 100.13 - 10.0 * math.log10(math.fsum(terms))


def ref_composite(
    areas: Sequence[float], tls: Sequence[Sequence[float]], added: Sequence[float]
) -> list[float]:
    """Composite TL per band: -10 lg((sum_i S_i 10^(-TL_i/10) + A_added) / sum_i S_i) (Hopkins Eq. 4.92)."""
    total = math.fsum(areas)
    out = []
    for b in range(len(added)):
        p = math.fsum(s * 10.0 ** (-t[b] / 10.0) for s, t in zip(areas, tls, strict=True)) + added[b]
        out.append(-10.0 * math.log10(p / total))
    return out


_RATERS: dict[str, Callable[[Any], Any]] = {"stc": ref_stc, "rw": ref_rw}


def ref_audit(
    tl: np.ndarray, s: float, leak_areas: np.ndarray, weights: np.ndarray, rating: str
) -> dict[str, Any]:
    """The greedy fix-first order written plainly (method notes Section 12).

    Parameters
    ----------
    tl : ndarray, shape (21,)
        Intact wall TL, dB.
    s : float
        Wall area, m^2.
    leak_areas : ndarray, shape (n, 21)
        Each finding's added transmission area per band, m^2.
    weights : ndarray, shape (21,)
        Rating weights (:func:`acoustics.rating_weights`) for the power tie-break.
    rating : {"stc", "rw"}

    Returns
    -------
    dict
        ``designed``, ``as_found``, ``gain`` (one rating per finding fixed alone, minus as found; empty
        for a single finding), ``order``, ``after`` and ``after_tl`` (TL after each step).

    Notes
    -----
    At each step every remaining finding is fixed in turn and the wall rated; the best rating wins,
    then the larger weighted power, then the earlier finding. The per-band arithmetic is the
    engine's own (numpy, same operation order), so the TLs agree bit for bit.
    """
    rater = _RATERS[rating]
    n = len(leak_areas)
    base = s * 10.0 ** (-tl / 10.0)
    total = base + leak_areas.sum(axis=0)
    wpow = leak_areas @ weights
    as_found = rater(-10.0 * np.log10(total * (1.0 / s)))
    designed = rater(tl)
    gain = [rater(-10.0 * np.log10((total - a) * (1.0 / s))) - as_found for a in leak_areas] if n > 1 else []
    left = total.copy()
    alive = list(range(n))
    order: list[int] = []
    after: list[int] = []
    after_tl: list[np.ndarray] = []
    while alive:
        if len(alive) == 1:
            order.append(alive[0])
            after.append(designed)
            after_tl.append(tl)
            break
        best: tuple[Any, ...] | None = None
        for j in alive:
            t = np.log10((left - leak_areas[j]) * (1.0 / s))
            t *= -10.0
            key = (rater(t), wpow[j], -j)
            if best is None or key > best[:3]:
                best = (*key, t)
        assert best is not None
        j = -best[2]
        order.append(j)
        after.append(best[0])
        after_tl.append(best[3])
        alive.remove(j)
        left -= leak_areas[j]
    return {
        "designed": designed,
        "as_found": as_found,
        "gain": gain,
        "order": order,
        "after": after,
        "after_tl": np.array(after_tl),
    }


def ref_wall_order(model: Any, rating: str) -> tuple[list[int], list[int]]:
    """The whole-wall fix-first order written plainly: ``(order, after)`` for a
    :class:`acoustics.wall_model.WallModel` (method notes Sections 12 and 15).

    At each step every finding still open is closed in turn, the whole model's power
    W(x) = W_0 + L.x + x'Mx/2 is summed anew for that open set and rated; the best rating wins,
    then the larger weighted power the fix removes (to 12 significant digits), then the lower id.
    The last finding's step leaves the intact wall.
    """
    rater = _RATERS[rating]
    weights = rating_weights(rating)
    n = len(model.parts)
    ids = [p.id for p in model.parts]
    x = np.ones(n)
    order: list[int] = []
    after: list[int] = []
    while len(order) < n:
        now = model.power(x)
        candidates = []
        for k in range(n):
            if not x[k]:
                continue
            y = x.copy()
            y[k] = 0.0
            w = model.power(y)
            removed = float(f"{float((now - w) @ weights):.12g}")
            tl = -10.0 * np.log10(np.maximum(w, model.base) / model.area)
            candidates.append((-rater(tl), -removed, ids[k], k))
        r, _, _, k = min(candidates)
        order.append(k)
        x[k] = 0.0
        after.append(-r if len(order) < n else rater(-10.0 * np.log10(model.base / model.area)))
    return order, after
