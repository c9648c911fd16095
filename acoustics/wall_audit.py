"""The leak audit on a wall's whole model: what each finding costs, in what order to fix, what interacts.

:func:`audit_wall` prices every finding of a :class:`acoustics.wall_model.WallModel` with all the
others in place: a finding's ``gain`` is the rating with that finding removed from the whole model
minus the as-found rating; the fix-first ``order`` is greedy on the whole model at every step (the
fix that leaves the highest rating; ties to the finding passing the most power weighted by the
rating's reference spectrum, then to the lower id); ``after`` is the rating after each step and
``needed`` the shortest prefix of the order that reaches the target (None if even the fully fixed
wall falls short). Every state is rated from its own band curve, never by combining single numbers.

Because the model is W(x) = W_0 + L.x + x'Mx/2 (:mod:`acoustics.wall_model`), removing finding k
from a state x removes dW_k = L_k + sum_l M_kl x_l, so all candidates of a step are one matrix
product and one batched rating call.

References
----------
.. [1] Hopkins, C. (2007) *Sound Insulation*, Eq. 4.92.
.. [2] ASTM E413, ISO 717-1, ASTM E1332 (the ratings, :mod:`acoustics.ratings`).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import numpy.typing as npt

from .leaks import FLAG_TEXT
from .ratings import LABELS, RATINGS, SMALL_RATERS, check_finite, rating_weights
from .wall_model import MODEL_VERSION, WALL_FLAG_TEXT, WallModel

__all__ = ["WallAudit", "audit_wall", "ENGINE_VERSION"]

ENGINE_VERSION = f"sealwalk-acoustics 0.1/{MODEL_VERSION}"
#: A joined path is reported as an interaction when it carries at least this share of the intact wall's
#: weighted power (0.1 = about 0.4 dB; common practice, no source).
INTERACTION_SHARE = 0.1
_WEIGHTS = {r: rating_weights(r) for r in RATINGS}


def _json(a: npt.ArrayLike) -> list[float | None]:
    return [None if not math.isfinite(v) else round(v, 4) for v in np.asarray(a, dtype=float).tolist()]


@dataclass(frozen=True, eq=False)
class WallAudit:
    """Result of :func:`audit_wall`; arrays per finding in input order unless said otherwise.

    Attributes
    ----------
    rating : str
    designed, as_found : int
        The intact wall (every finding fixed), and with every finding open.
    if_reported_fixed : int
        With the findings marked ``reported_fixed`` removed (the crew's reported fixes hold).
    gain : ndarray of int, shape (n,)
        Rating with that finding alone removed from the whole model, minus ``as_found``.
    order, after, needed, target
        Fix-first sequence (indices), rating after each step, shortest prefix reaching ``target``.
    designed_tl, as_found_tl : ndarray, shape (21,)
    after_tl : ndarray, shape (n, 21)
    power_share : ndarray, shape (n,)
        Weighted share of the as-found power each finding removes when fixed alone.
    paths, path_kinds : tuple of str
        How each finding was modelled ("one face: leaf A, into the cavity", "straight aperture ...").
    flags : tuple of tuple of str
        Validity flags per finding; ``model_flags`` for the wall.
    interactions : list of dict
        Pairs joined through the cavity or under a plate that matter (see :func:`audit_wall`).
    ids, kinds : tuple of str
    """

    rating: str
    designed: int
    as_found: int
    if_reported_fixed: int
    gain: npt.NDArray[np.integer[Any]]
    order: list[int]
    after: npt.NDArray[np.integer[Any]]
    needed: list[int] | None
    target: int | None
    designed_tl: npt.NDArray[np.float64]
    as_found_tl: npt.NDArray[np.float64]
    after_tl: npt.NDArray[np.float64]
    power_share: npt.NDArray[np.float64]
    paths: tuple[str, ...]
    path_kinds: tuple[str, ...]
    flags: tuple[tuple[str, ...], ...]
    model_flags: tuple[str, ...]
    interactions: list[dict[str, Any]] = field(default_factory=list)
    ids: tuple[str, ...] = ()
    kinds: tuple[str, ...] = ()
    engine_version: str = ENGINE_VERSION

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready form (plain lists and numbers; NaN bands become None)."""
        all_flags = dict.fromkeys([*self.model_flags, *(f for fl in self.flags for f in fl)])
        text = {**FLAG_TEXT, **WALL_FLAG_TEXT}
        return {
            "engine_version": self.engine_version,
            "rating": self.rating,
            "designed": int(self.designed),
            "as_found": int(self.as_found),
            "if_reported_fixed": int(self.if_reported_fixed),
            "target": None if self.target is None else int(self.target),
            "findings": [
                {
                    "id": self.ids[k],
                    "kind": self.kinds[k],
                    "gain": int(self.gain[k]),
                    "power_share": round(float(self.power_share[k]), 6),
                    "path": self.paths[k],
                    "path_kind": self.path_kinds[k],
                    "flags": list(self.flags[k]),
                }
                for k in range(len(self.ids))
            ],
            "order": [self.ids[k] for k in self.order],
            "after": [int(v) for v in self.after],
            "needed": None if self.needed is None else [self.ids[k] for k in self.needed],
            "designed_tl": _json(self.designed_tl),
            "as_found_tl": _json(self.as_found_tl),
            "after_tl": [_json(r) for r in self.after_tl],
            "interactions": self.interactions,
            "model_flags": list(self.model_flags),
            "flag_text": {f: text[f] for f in all_flags if f in text},
        }


def _significant(v: npt.NDArray[np.float64], digits: int) -> npt.NDArray[np.float64]:
    """``v`` rounded to ``digits`` significant digits, element by element (as ``float(f"{x:.12g}")``)."""
    mag = np.floor(np.log10(np.abs(np.where(v == 0, 1.0, v))))
    scale = 10.0 ** (digits - 1 - mag)
    return np.round(v * scale) / scale


def _tl(w: npt.NDArray[np.float64], inv_s: float) -> npt.NDArray[np.float64]:
    return -10.0 * np.log10(w * inv_s)


def audit_wall(model: WallModel, rating: str = "stc", target: int | None = None) -> WallAudit:
    """Price every finding on the wall's whole model.

    Parameters
    ----------
    model : WallModel
        From :func:`acoustics.wall_model.wall_model`.
    rating : {"stc", "rw", "oitc"}
    target : int, optional
        Rating the wall must reach; fills ``needed``.

    Returns
    -------
    WallAudit

    Notes
    -----
    ``interactions`` lists each pair (k, l) whose joined term M_kl carries at least
    :data:`INTERACTION_SHARE` of the intact wall's weighted power, with ``cost_together`` (intact
    wall minus the wall with only k and l open), ``cost_apart`` (the same for k alone and l alone),
    ``fix_both`` and ``fix_alone`` (gains on the as-found wall) and a note: "joined: either fix
    closes this path" when fixing either one alone buys most of what fixing both buys, and "fix both
    faces: either alone buys little" when fixing both buys more than the two alone.
    """
    if rating not in RATINGS:
        raise ValueError(f"rating must be one of {RATINGS}, got {rating!r}")
    if target is not None:
        if isinstance(target, bool) or not float(target).is_integer():
            raise ValueError(f"target must be a whole-number rating, got {target!r}")
        target = int(target)
    rater = SMALL_RATERS[rating]
    weights = _WEIGHTS[rating]
    inv_s = 1.0 / model.area
    n = len(model.parts)
    base = model.base
    designed_tl = _tl(base, inv_s)
    label, rated = LABELS[rating]
    check_finite(designed_tl[None, :], rated, label)
    designed = int(rater(designed_tl[None, :])[0])
    lin = model.linear
    cross = model.cross
    ids = tuple(p.id for p in model.parts)
    if n == 0:
        return WallAudit(
            rating,
            designed,
            designed,
            designed,
            np.zeros(0, int),
            [],
            np.zeros(0, int),
            [] if target is not None and designed >= target else None,
            target,
            designed_tl,
            designed_tl,
            np.zeros((0, designed_tl.size)),
            np.zeros(0),
            (),
            (),
            (),
            model.flags,
        )

    x = np.ones(n)
    dw = lin + np.einsum("klb,l->kb", cross, x)  # what fixing each finding removes from the all-open state
    total = base + lin.sum(0) + 0.5 * np.einsum("klb,l->b", cross, x)
    rows = np.vstack([total, total - dw])
    rated_all = rater(_tl(np.maximum(rows, base), inv_s)).astype(int)
    as_found = int(rated_all[0])
    gain = rated_all[1:] - as_found
    wtotal = float(total @ weights)
    power_share = (dw @ weights) / wtotal

    # Greedy on the whole model; static tie rank: id order (so input order changes nothing).
    id_rank = np.empty(n)
    id_rank[sorted(range(n), key=lambda k: ids[k])] = np.arange(n)
    order: list[int] = []
    after = np.empty(n, dtype=int)
    after_tl = np.empty((n, base.size))
    w = total.copy()
    open_ = np.ones(n, dtype=bool)
    removes = dw.copy()  # what fixing each finding removes from the current state w
    # Alike findings (the same added power, joined to nothing) tie on rating and on power at every
    # step, so the lowest id of each such group stands for it: the others wait (``queued``) until it is
    # fixed. The order is the plain greedy's; a wall of many alike boxes or holes rates far fewer rows.
    queued = np.zeros(n, dtype=bool)
    behind: dict[int, list[int]] = {}  # group head -> the rest of its group, in id order
    alike: dict[bytes, list[int]] = {}
    for k in np.flatnonzero(~cross.any(axis=(1, 2))):
        alike.setdefault(lin[k].tobytes(), []).append(int(k))
    for group in alike.values():
        if len(group) > 1:
            group.sort(key=lambda k: id_rank[k])
            behind[group[0]] = group[1:]
            queued[group[1:]] = True
    for step in range(n):
        if step == n - 1:
            best = int(np.flatnonzero(open_)[0])
            order.append(best)
            after[step], after_tl[step] = designed, designed_tl
            break
        idx = np.flatnonzero(open_ & ~queued)
        d = removes[idx]
        cand = np.maximum(w - d, base)
        tls = _tl(cand, inv_s)
        r = rater(tls)
        # highest rating, then most weighted power, then lowest id rank. Powers are compared to 12
        # significant digits: two identical findings summed in another order differ in the last bits,
        # and that noise must not decide the order (input order changes nothing).
        pw_key = _significant(d @ weights, 12)
        pick = np.lexsort((id_rank[idx], -pw_key, -r))[0]
        best = int(idx[pick])
        order.append(best)
        after[step], after_tl[step] = int(r[pick]), tls[pick]
        w = cand[pick]
        open_[best] = False
        removes -= cross[:, best]  # with ``best`` closed, the paths it joined are gone
        rest = behind.pop(best, None)
        if rest:  # the next of its alike group stands for the group now
            queued[rest[0]] = False
            if rest[1:]:
                behind[rest[0]] = rest[1:]

    needed: list[int] | None = None
    if target is not None:
        if as_found >= target:
            needed = []
        elif designed >= target:
            needed = order[: int(np.argmax(after >= target)) + 1]

    fixed = np.array([not p.reported_fixed for p in model.parts], dtype=float)
    if fixed.all():
        if_fixed = as_found
    else:
        if_fixed = int(rater(_tl(model.power(fixed)[None, :], inv_s))[0])

    return WallAudit(
        rating=rating,
        designed=designed,
        as_found=as_found,
        if_reported_fixed=if_fixed,
        gain=gain,
        order=order,
        after=after,
        needed=needed,
        target=target,
        designed_tl=designed_tl,
        as_found_tl=_tl(total, inv_s),
        after_tl=after_tl,
        power_share=power_share,
        paths=tuple(p.path for p in model.parts),
        path_kinds=tuple(p.path_kind for p in model.parts),
        flags=tuple(tuple(dict.fromkeys(p.flags)) for p in model.parts),
        model_flags=model.flags,
        interactions=_interactions(model, rater, weights, designed, as_found, gain, total, dw, inv_s),
        ids=ids,
        kinds=tuple(p.kind for p in model.parts),
    )


def _interactions(
    model: WallModel,
    rater: Callable[[npt.NDArray[np.float64]], npt.NDArray[np.float64]],
    weights: npt.NDArray[np.float64],
    designed: int,
    as_found: int,
    gain: npt.NDArray[np.int_],
    total: npt.NDArray[np.float64],
    dw: npt.NDArray[np.float64],
    inv_s: float,
) -> list[dict[str, Any]]:
    base, lin, cross = model.base, model.linear, model.cross
    wbase = float(base @ weights)
    joined = cross @ weights  # (n, n): each pair's joined power, weighted
    strong = np.argwhere(np.triu(joined >= INTERACTION_SHARE * wbase, 1))  # (k, l), k < l, in row order
    pairs = [kl for kl in map(tuple, strong.tolist()) if kl in model.cross_path]
    if not pairs:
        return []
    rows = []
    for k, l in pairs:
        rows += [base + lin[k], base + lin[l], base + lin[k] + lin[l] + cross[k, l],
                 np.maximum(total - dw[k] - dw[l] + cross[k, l], base)]  # fmt: skip
    r = rater(_tl(np.array(rows), inv_s)).astype(int).reshape(len(pairs), 4)
    out = []
    ids = [p.id for p in model.parts]
    for (k, l), (rk, rl, rkl, rfix) in zip(pairs, r, strict=True):
        both = int(rfix) - as_found
        alone = [int(gain[k]), int(gain[l])]
        if both > sum(alone):
            note = "fix both faces: either alone buys little"
        else:
            note = "joined: either fix closes this path"
        out.append(
            {
                "findings": [ids[k], ids[l]],
                "path": model.cross_path[(k, l)],
                "cost_together": designed - int(rkl),
                "cost_apart": [designed - int(rk), designed - int(rl)],
                "fix_both": both,
                "fix_alone": alone,
                "note": note,
            }
        )
    return out
