"""Cached leak audits: per-wall stamps, invalidation and the batch lookup.

Audits are cached per wall through Django's cache framework (never in the process): the key carries
the engine version, a stamp per wall and a stamp per wall type, and :mod:`qa.signals` replaces a
stamp when any input of the wall changes (findings, openings, the wall, its wall type), which makes
the old entry unreachable. Cold walls are computed by :func:`qa.impact.compute_summary`.
"""

from __future__ import annotations

import uuid
from collections.abc import Iterable

from django.core.cache import cache

#: Bump when the adapter or the engine changes the numbers; old cache entries are then ignored.
ENGINE_VERSION = "a1"
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


def audits_for_walls(walls: Iterable) -> dict[int, dict]:
    """Cached audit summaries of ``walls`` (each with its wall type loaded): {wall id: summary}.

    Warm: two cache reads, no query. Cold walls: two queries (openings, findings) for all of them.
    """
    from django.db.models import Prefetch

    from .impact import compute_summary  # at call time: qa.impact imports this module
    from .models import Finding, Opening

    walls = list(walls)
    if not walls:
        return {}
    keys = audit_keys(walls)
    hit = cache.get_many(list(keys.values()))
    out = {pk: hit[key] for pk, key in keys.items() if key in hit}
    cold = [w for w in walls if w.pk not in out]
    if cold:
        from django.db.models import prefetch_related_objects

        for w in cold:  # a wall object reused after a change must not keep its old findings
            for name in ("openings", "findings"):
                getattr(w, "_prefetched_objects_cache", {}).pop(name, None)
        prefetch_related_objects(
            cold,
            Prefetch("openings", queryset=Opening.objects.filter(removed=False).order_by("id")),
            Prefetch("findings", queryset=Finding.objects.filter(removed=False).order_by("id")),
        )
        memo: dict = {}
        fresh = {}
        for w in cold:
            fresh[keys[w.pk]] = out[w.pk] = compute_summary(w, memo=memo)
        cache.set_many(fresh, AUDIT_TIMEOUT)
    return out


def audits_for_job(job) -> dict[int, dict]:
    """{wall id: summary} for every live wall of ``job``: one query for the walls when warm."""
    from .models import Wall

    return audits_for_walls(Wall.objects.live().filter(job=job).select_related("wall_type"))
