"""Leak audit on a wall curve plus added areas: what each finding costs, and what to fix first.

This is the first audit of the engine, kept for callers that pass a TL curve and a list of
:class:`~acoustics.leaks.Leak` (every finding an independent added area). The whole-wall model, where
findings in opposite faces are joined through the cavity, is :func:`acoustics.audit_wall`. The
module was ``acoustics/audit.py``; it was renamed so that ``acoustics.audit`` is always the function.

Every finding is a :class:`~acoustics.leaks.Leak` (an added transmission area
per band, m^2). The as-found wall transmits
``S tau_wall + sum_i A_i`` (m^2 per band); removing a finding removes its A_i.

References
----------
.. [1] Hopkins, C. (2007) *Sound Insulation*, Eq. 4.92 (composite by energy sum).
.. [2] Sealwalk acoustics method notes, Section 12 (ranking by rating after
   the fix, ties broken by band power share) and check case C16.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import numpy.typing as npt

from .bands import BAND_INDEX, N_BANDS
from .leaks import FLAG_TEXT, Leak
from .ratings import LABELS, RATINGS, SMALL_RATERS, check_finite, rating_weights

__all__ = ["Audit", "audit"]

_I500 = BAND_INDEX[500]
# Reference-spectrum weights per rating, computed once (rating_weights builds them from the tables).
_WEIGHTS = {r: rating_weights(r) for r in RATINGS}


def _json_list(a: npt.ArrayLike) -> list[float | None]:
    return [None if not math.isfinite(v) else v for v in np.asarray(a, dtype=float).tolist()]


@dataclass(frozen=True, eq=False)
class Audit:
    """Result of :func:`audit`. Ratings are integers; arrays are per finding in input order
    unless said otherwise.

    Attributes
    ----------
    rating : str
        "stc", "rw" or "oitc".
    designed : int
        Rating of the intact wall (all findings fixed).
    as_found : int
        Rating with every finding open.
    gain : ndarray of int, shape (n,)
        Rating with that finding alone fixed, minus ``as_found``.
    order : list of int
        Fix-first sequence (indices into the findings).
    after : ndarray of int, shape (n,)
        Rating after each step of ``order``; ``after[-1] == designed``.
    needed : list of int or None
        Shortest prefix of ``order`` reaching ``target``; ``[]`` if already
        met, None if no target was given or the intact wall falls short.
    target : int or None
    as_found_tl : ndarray, shape (21,)
        As-found TL, dB.
    after_tl : ndarray, shape (n, 21)
        TL after each step of ``order``, dB.
    open_area_500 : ndarray, shape (n,)
        Equivalent open area of each finding at 500 Hz: its transmission area
        S*tau in the 500 Hz band, m^2 (the area of a tau = 1 hole passing the
        same power).
    power_share : ndarray, shape (n,)
        Share of the as-found transmitted power carried by each finding,
        weighted over the rating's bands by its reference spectrum
        (:func:`acoustics.ratings.rating_weights`); with ``wall_share`` it sums to 1.
    wall_share : float
        Share carried by the intact wall itself.
    flags : tuple of str
        Validity flags of the findings, without repeats, in first-seen order.
    """

    rating: str
    designed: int
    as_found: int
    gain: npt.NDArray[np.integer[Any]]
    order: list[int]
    after: npt.NDArray[np.integer[Any]]
    needed: list[int] | None
    target: int | None
    as_found_tl: npt.NDArray[np.float64]
    after_tl: npt.NDArray[np.float64]
    open_area_500: npt.NDArray[np.float64]
    power_share: npt.NDArray[np.float64]
    wall_share: float
    flags: tuple[str, ...] = ()
    labels: tuple[str, ...] = field(default=())
    kinds: tuple[str, ...] = field(default=())

    def to_dict(self) -> dict[str, Any]:
        """JSON-serialisable form (lists and plain numbers; NaN bands become None)."""
        return {
            "rating": self.rating,
            "designed": int(self.designed),
            "as_found": int(self.as_found),
            "target": None if self.target is None else int(self.target),
            "gain": [int(v) for v in self.gain],
            "order": [int(v) for v in self.order],
            "after": [int(v) for v in self.after],
            "needed": None if self.needed is None else [int(v) for v in self.needed],
            "as_found_tl": _json_list(self.as_found_tl),
            "after_tl": [_json_list(row) for row in self.after_tl],
            "open_area_500": [float(v) for v in self.open_area_500],
            "power_share": [float(v) for v in self.power_share],
            "wall_share": float(self.wall_share),
            "flags": list(self.flags),
            "flag_text": {f: FLAG_TEXT[f] for f in self.flags if f in FLAG_TEXT},
            "labels": list(self.labels),
            "kinds": list(self.kinds),
        }


def _leak_matrix(leaks: Sequence[Any]) -> tuple[npt.NDArray[np.float64], list[Leak]]:
    if isinstance(leaks, Leak):
        raise ValueError("leaks must be a sequence of Leak objects; wrap a single leak in a list")
    out = []
    for i, lk in enumerate(leaks):
        if isinstance(lk, Leak):
            out.append(lk)
            continue
        try:
            out.append(Leak.added(lk, kind="added"))
        except ValueError as exc:
            raise ValueError(f"leaks[{i}]: {exc}") from None
    if not out:
        return np.zeros((0, N_BANDS)), out
    return np.stack([lk.area for lk in out]), out


def audit(
    tl: Any, area: float, leaks: Sequence[Leak], rating: str = "stc", target: int | None = None
) -> Audit:
    """Cost of each finding on a wall's rating and the fix-first order.

    Parameters
    ----------
    tl : array_like, shape (21,)
        Designed (intact) wall TL over :data:`acoustics.BANDS`, dB.
    area : float
        Wall area S, m^2 (> 0).
    leaks : sequence of Leak
        Through-path leaks and added-area defects (a bare (21,) array is taken
        as an added area). Empty is allowed.
    rating : {"stc", "rw", "oitc"}
        Rating used for every figure.
    target : int, optional
        Rating the wall should reach; fills ``needed``.

    Returns
    -------
    Audit

    Raises
    ------
    RatingError
        If ``tl`` is NaN or infinite in a band the rating needs.
    ValueError
        On a wrong shape, a non-positive area, a bad leak or rating name.

    Notes
    -----
    As found: tau = (S tau_wall + sum_i A_i) / S, TL = -10 lg tau per band [1]_;
    every state is rated from its own band curve, never by combining single
    numbers.

    ``order`` is greedy: at each step fix the finding whose removal gives the
    highest rating of what is left; ties go to the finding that transmits more
    power weighted by the rating's reference spectrum, then to the earlier one.

    Why "fix alone" (``gain``) and "fix in order" (``after``) differ: take two
    alike leaks that together carry most of the transmitted power. Fixing
    either one alone only halves the leak power, at most 3 dB in the bands
    they dominate, so each shows a small ``gain``; the wall comes back only
    when both are fixed, which ``after`` shows as a small first step and a
    large second one. Conversely, a small leak next to a dominant one has a
    ``gain`` of zero but may matter once the dominant one is fixed. So read
    ``gain`` as "what this fix alone buys" and ``after``/``needed`` as the plan,
    and tell the crew when several findings must be fixed together.

    References
    ----------
    .. [1] Hopkins (2007) *Sound Insulation*, Eq. 4.92.
    """
    if rating not in RATINGS:
        raise ValueError(f"rating must be one of {RATINGS}, got {rating!r}")
    tl = np.asarray(tl, dtype=float)
    if tl.shape != (N_BANDS,):
        raise ValueError(f"tl must be one wall's TL with shape ({N_BANDS},), got {tl.shape}")
    try:
        s = float(area)
    except (TypeError, ValueError):
        raise ValueError(f"area must be the wall area in m^2, got {area!r}") from None
    if not math.isfinite(s) or s <= 0:
        raise ValueError(f"area must be a finite wall area > 0 m^2, got {area!r}")
    if target is not None:
        if isinstance(target, bool) or not float(target).is_integer():
            raise ValueError(f"target must be a whole-number rating, got {target!r}")
        target = int(target)
    # Validate the rated bands (RatingError names the band), then rate the intact wall.
    label, rated = LABELS[rating]
    check_finite(tl[None, :], rated, label)
    designed = int(SMALL_RATERS[rating](tl[None, :])[0])
    amat, leak_objs = _leak_matrix(leaks)
    with np.errstate(divide="ignore", invalid="ignore"):
        return _run(tl, s, amat, leak_objs, rating, target, designed)


def _run(
    tl: npt.NDArray[np.float64],
    s: float,
    amat: npt.NDArray[np.float64],
    leak_objs: list[Leak],
    rating: str,
    target: int | None,
    designed: int,
) -> Audit:
    """Everything after validation; see :func:`audit` for the method."""
    n = amat.shape[0]
    rater = SMALL_RATERS[rating]
    weights = _WEIGHTS[rating]
    inv_s = 1.0 / s

    base = s * 10.0 ** (-tl / 10.0)
    total = base + amat.sum(axis=0)
    as_found_tl = -10.0 * np.log10(total * inv_s)

    # Power shares: weights are zero outside the rated bands, where NaN bands (allowed there) count as 0.
    wpow = (amat if np.isfinite(amat).all() else np.nan_to_num(amat)) @ weights
    wtotal = _nan_zero_sum(total * weights)
    power_share = wpow / wtotal if n else np.zeros(0)
    wall_share = _nan_zero_sum(base * weights) / wtotal

    # As found, and each finding fixed alone, in one rating call. With a single finding the fixed wall
    # is the design itself: that row is not rated (no round trip through tau across a rounding edge).
    if n > 1:
        rows = np.empty((n + 1, N_BANDS))
        rows[0] = as_found_tl
        np.subtract(total, amat, out=rows[1:])
        rows[1:] *= inv_s
        np.log10(rows[1:], out=rows[1:])
        rows[1:] *= -10.0
        rated = rater(rows).astype(np.int64)
        as_found = int(rated[0])
        gain = rated[1:] - as_found
    elif n == 1:
        as_found = int(rater(as_found_tl[None, :])[0])
        gain = np.array([designed - as_found])
    else:
        as_found = designed
        gain = np.zeros(0, dtype=np.int64)

    order, after, after_tl = _greedy(tl, total, amat, inv_s, wpow, rater, designed)

    needed: list[int] | None = None
    if target is not None:
        if as_found >= target:
            needed = []
        elif designed >= target:
            k = int(np.argmax(after >= target))
            needed = order[: k + 1]

    flags = tuple(dict.fromkeys(f for lk in leak_objs for f in lk.flags))
    return Audit(
        rating=rating,
        designed=designed,
        as_found=as_found,
        gain=gain,
        order=order,
        after=after,
        needed=needed,
        target=target,
        as_found_tl=as_found_tl,
        after_tl=after_tl,
        open_area_500=amat[:, _I500].copy(),
        power_share=power_share,
        wall_share=wall_share,
        flags=flags,
        labels=tuple(lk.label for lk in leak_objs),
        kinds=tuple(lk.kind for lk in leak_objs),
    )


# Greedy steps tried per batched rating call (see _greedy); 8 measured fastest for 10-50 findings.
LOOKAHEAD = 8


def _nan_zero_sum(a: npt.NDArray[np.float64]) -> float:
    """np.nansum of a 1-D array (NaN counted as 0, the same summation), without its call overhead."""
    a[np.isnan(a)] = 0.0
    return float(a.sum())


def _greedy(
    tl: npt.NDArray[np.float64],
    total: npt.NDArray[np.float64],
    amat: npt.NDArray[np.float64],
    inv_s: float,
    wpow: npt.NDArray[np.float64],
    rater: Callable[[npt.NDArray[np.float64]], npt.NDArray[np.float64]],
    designed: int,
    lookahead: int = LOOKAHEAD,
) -> tuple[list[int], npt.NDArray[np.int64], npt.NDArray[np.float64]]:
    """Greedy fix order, several steps per batched rating call when a guess holds.

    The tie rule (highest rating, then most weighted power, then the earliest
    finding) becomes one static rank per finding, so a step picks with one
    argmax over ``rating * n + rank``; each call rates only the open findings.

    Speculation, exact by construction: the runner-up order of the last step
    guesses the next picks g1, g2, ...; one call rates every open finding fixed
    next from the current state *and* from the states with g1, g1+g2, ...
    already fixed (found by the same sequential subtractions as the real
    updates). Steps are taken while the real pick equals the guess that built
    the next state; the first miss discards the rest. The runner-up is the next
    pick in about nine steps out of ten, so a call usually settles several steps.
    """
    n = amat.shape[0]
    order: list[int] = []
    after = np.empty(n, dtype=np.int64)
    after_tl = np.empty((n, N_BANDS))
    if n == 0:
        return order, after, after_tl
    # rank: ascending in weighted power, and for equal power the earlier finding ranks higher.
    rank = np.empty(n)
    rank[np.lexsort((-np.arange(n), wpow))] = np.arange(n, dtype=float)
    left = total.copy()
    open_ = np.arange(n)  # open findings, ascending
    guess: list[int] = []  # positions in open_
    step = 0
    while n - step > 1:
        g = guess[: min(lookahead, n - step - 1) - 1]
        m = len(g) + 1
        k = open_.size
        rows = amat[open_]
        # states[i]: left with g[0..i-1] fixed, by sequential subtraction (cumsum adds row by row).
        states = np.cumsum(np.concatenate((left[None, :], -rows[g])), axis=0) if g else left[None, :]
        buf = states[:, None, :] - rows  # (m, k, 21): every open finding fixed next, from each state
        buf *= inv_s
        np.log10(buf, out=buf)
        buf *= -10.0
        r = rater(buf.reshape(m * k, N_BANDS)).reshape(m, k)
        key = r * n
        key += rank[open_]
        if g:
            # In state i the guesses g[0..i-1] are already fixed (their rows may be NaN): never pick them.
            ga = np.asarray(g)
            key[_MASK_ROWS[m], ga[_MASK_COLS[m]]] = -np.inf
        picks = key.argmax(axis=1).tolist()
        for i in range(m):
            pos = picks[i]
            best = int(open_[pos])
            order.append(best)
            after[step] = r[i, pos]
            after_tl[step] = buf[i, pos]
            step += 1
            if i == m - 1 or pos != g[i]:
                break
        left = states[i] - amat[best]
        nxt = np.argsort(-key[i])[1:lookahead]
        nxt = nxt[np.isfinite(key[i, nxt])]
        # Drop the findings fixed in this call and renumber the guesses to the remaining open ones.
        keep = np.ones(k, dtype=bool)
        keep[picks[: i + 1]] = False
        open_ = open_[keep]
        guess = (nxt - np.cumsum(~keep)[nxt]).tolist()
    # The last finding: fixing it restores the design exactly (no round trip through tau).
    order.append(int(open_[0]))
    after[n - 1], after_tl[n - 1] = designed, tl
    return order, after, after_tl


def _mask_pattern(m: int) -> tuple[npt.NDArray[np.intp], npt.NDArray[np.intp]]:
    """Index pairs (state i, guess l) with l < i: guess l is already fixed in state i."""
    rows = [i for i in range(1, m) for _ in range(i)]
    cols = [l for i in range(1, m) for l in range(i)]
    return np.array(rows, dtype=np.intp), np.array(cols, dtype=np.intp)


_MASK_ROWS = {}
_MASK_COLS = {}
for _m in range(1, 33):
    _MASK_ROWS[_m], _MASK_COLS[_m] = _mask_pattern(_m)
del _m
