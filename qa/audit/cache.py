"""Cached leak audits: per-wall stamps, invalidation and the batch lookup.

Audits are cached per wall through Django's cache framework (never in the process): the key carries
the engine version, a stamp per wall and a stamp per wall type, and :mod:`qa.signals` replaces a
stamp when any input of the wall changes (findings, openings, the wall, its wall type), which makes
the old entry unreachable. Cold walls are computed by :func:`qa.audit.summary.compute_summary`.
"""

from __future__ import annotations

import uuid
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from contextvars import ContextVar

from django.core.cache import cache
from django.db import transaction

#: Bump when the adapter or the engine changes the numbers; old cache entries are then ignored.
ENGINE_VERSION = "a2"
AUDIT_TIMEOUT = 60 * 60 * 24 * 30  # s; stamps make stale entries unreachable long before this

_STAMP_W = "sealwalk:audit:stamp:w:{}"
_STAMP_T = "sealwalk:audit:stamp:t:{}"


def invalidate_wall(wall_id: int) -> None:
    """Make the cached audit of one wall unreachable (call after any change to its inputs)."""
    cache.set(_STAMP_W.format(wall_id), uuid.uuid4().hex, None)


def invalidate_wall_type(wall_type_id: int) -> None:
    """Make the cached audits of every wall of one wall type unreachable."""
    cache.set(_STAMP_T.format(wall_type_id), uuid.uuid4().hex, None)


def _stamps(keys: list[str]) -> dict[str, str]:
    found = cache.get_many(keys)
    missing = [k for k in keys if k not in found]
    if missing:
        for k in missing:  # add(): a stamp another process set first wins
            cache.add(k, uuid.uuid4().hex, None)
        found.update(cache.get_many(missing))
    return found


def audit_keys(walls: list) -> dict[int, str]:
    """Current cache key of each wall's audit: engine version, wall stamp and wall type stamp."""
    wkeys = [_STAMP_W.format(w.pk) for w in walls]
    tkeys = list(dict.fromkeys(_STAMP_T.format(w.wall_type_id) for w in walls))
    stamps = _stamps(wkeys + tkeys)
    return {
        w.pk: f"sealwalk:audit:{ENGINE_VERSION}:{w.pk}:{stamps.get(_STAMP_W.format(w.pk), '-')}:"
        f"{stamps.get(_STAMP_T.format(w.wall_type_id), '-')}"
        for w in walls
    }


#: Stamps to replace once when a :func:`deferred_invalidation` block ends: {(function, id)}.
_DEFERRED: ContextVar[set | None] = ContextVar("sealwalk_deferred_invalidation", default=None)


def _now_and_after_commit(fn: Callable[[int], None], pk: int) -> None:
    # Invalidate now (readers inside the transaction see the change) and again after commit, so a
    # reader in another process that refilled the cache between the two sees a fresh stamp.
    fn(pk)
    transaction.on_commit(lambda: fn(pk))


def invalidate_later(fn: Callable[[int], None], pk: int) -> None:
    """Invalidate through ``fn`` now and after commit — or once at the end of a deferred block."""
    deferred = _DEFERRED.get()
    if deferred is None:
        _now_and_after_commit(fn, pk)
    else:
        deferred.add((fn, pk))


@contextmanager
def deferred_invalidation() -> Iterator[None]:
    """Collect the invalidations of a block (a sync batch) and do each one once when it ends."""
    deferred: set = set()
    token = _DEFERRED.set(deferred)
    try:
        yield
    finally:
        _DEFERRED.reset(token)
    for fn, pk in deferred:
        _now_and_after_commit(fn, pk)
