"""Cached leak audits: per-wall stamps, invalidation and the batch lookup.

Audits are cached through Django's cache framework (never in the process) under a key that carries the
engine version, the wall's stamp and its wall type's stamp. Stamps are rows of
:class:`qa.models.Stamp`, replaced by :mod:`qa.signals` in the same transaction as any change to an
input of the wall (findings, openings, the wall, its wall type): a reader sees the new stamp exactly
when it sees the new data, a rolled-back change keeps the old stamp, and a batch of changes (a sync)
replaces each stamp once, in one statement, at its end. Cold walls are computed by
:func:`qa.audit.summary.compute_summary`.
"""

from __future__ import annotations

import secrets
from collections.abc import Iterable, Iterator
from contextlib import contextmanager
from contextvars import ContextVar

from django.core.cache import cache
from django.db import connection
from django.db.models import Q

from ..models import Stamp

#: Bump when the adapter or the engine changes the numbers; old cache entries are then ignored.
ENGINE_VERSION = "a2"
AUDIT_TIMEOUT = 60 * 60 * 24 * 30  # s; stamps make stale entries unreachable long before this

WALL, WALL_TYPE, FIELD = "wall", "type", "field"
_CHUNK = 400  # rows per statement: well inside SQLite's limit on bound parameters


def bump(scope: str, refs: Iterable[int]) -> None:
    """Replace the stamps of ``refs`` in ``scope`` (one upsert, in id order so writers never deadlock)."""
    ids = sorted({int(r) for r in refs if r is not None})
    table = connection.ops.quote_name(Stamp._meta.db_table)
    for start in range(0, len(ids), _CHUNK):
        chunk = ids[start : start + _CHUNK]
        values = ", ".join(["(%s, %s, %s)"] * len(chunk))
        params = [v for ref in chunk for v in (scope, ref, secrets.randbits(62))]
        with connection.cursor() as cursor:
            cursor.execute(
                f"INSERT INTO {table} (scope, ref, value) VALUES {values} "
                "ON CONFLICT (scope, ref) DO UPDATE SET value = excluded.value",
                params,
            )


def stamps(wanted: dict[str, Iterable[int]]) -> dict[tuple[str, int], int]:
    """{(scope, ref): stamp} for ``{scope: refs}`` in one query; a ref never stamped is left out (0)."""
    q = Q(pk__in=[])
    for scope, refs in wanted.items():
        q |= Q(scope=scope, ref__in=list(refs))
    return {(s, r): v for s, r, v in Stamp.objects.filter(q).values_list("scope", "ref", "value")}


def invalidate_wall(wall_id: int) -> None:
    """Make the cached audit of one wall unreachable (call after any change to its inputs)."""
    bump(WALL, [wall_id])


def invalidate_wall_type(wall_type_id: int) -> None:
    """Make the cached audits of every wall of one wall type unreachable."""
    bump(WALL_TYPE, [wall_type_id])


def audit_stamps(walls: list, **more: Iterable[int]) -> dict[tuple[str, int], int]:
    """The stamps :func:`audit_keys` needs for ``walls`` (and any ``more`` scopes) in one query."""
    return stamps({WALL: [w.pk for w in walls], WALL_TYPE: {w.wall_type_id for w in walls}, **more})


def audit_keys(walls: list, found: dict[tuple[str, int], int] | None = None) -> dict[int, str]:
    """Current cache key of each wall's audit: engine version, wall stamp and wall type stamp."""
    if found is None:
        found = audit_stamps(walls)
    return {
        w.pk: f"sealwalk:audit:{ENGINE_VERSION}:{w.pk}:{found.get((WALL, w.pk), 0)}:"
        f"{found.get((WALL_TYPE, w.wall_type_id), 0)}"
        for w in walls
    }


#: Stamps to replace once when a :func:`deferred_invalidation` block ends: {(scope, ref)}.
_DEFERRED: ContextVar[set[tuple[str, int]] | None] = ContextVar("sealwalk_deferred", default=None)


def invalidate_later(scope: str, ref: int) -> None:
    """Replace a stamp now — or once, with the others, at the end of a deferred block."""
    deferred = _DEFERRED.get()
    if deferred is None:
        bump(scope, [ref])
    else:
        deferred.add((scope, ref))


@contextmanager
def deferred_invalidation() -> Iterator[None]:
    """Collect the invalidations of a block (a sync batch) and replace each stamp once when it ends.

    Use it inside the block's transaction, so the stamps change with the data they mark.
    """
    deferred: set[tuple[str, int]] = set()
    token = _DEFERRED.set(deferred)
    try:
        yield
    finally:
        _DEFERRED.reset(token)
    for scope in sorted({s for s, _ in deferred}):
        bump(scope, [r for s, r in deferred if s == scope])


@contextmanager
def first_reader(key: str | None, seconds: int) -> Iterator[bool]:
    """Whether this reader holds ``key`` for the block (a cache lock: one reader recomputes what many
    would, the others answer with what they have). ``key`` None: no lock wanted, always True. A lock
    left by a reader that died lapses after ``seconds``."""
    mine = key is None or cache.add(key, 1, seconds)
    try:
        yield mine
    finally:
        if mine and key is not None:
            cache.delete(key)
