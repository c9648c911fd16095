"""Ticking a seal point: pass, defect, not applicable or back to not checked."""

from __future__ import annotations

from django.utils import timezone

from ..choices import SealStatus
from ..models import SealPoint
from .context import Actor, Reject, check_version


def mark_checked(actor: Actor, point: SealPoint, status: str) -> str:
    """Set ``point``'s status with who and when, bump its version; return the old status (not saved)."""
    old = point.status
    point.status, point.version = status, point.version + 1
    point.checked_by, point.checked_at = actor.user, timezone.now()
    return old


def tick_seal_point(
    actor: Actor, point: SealPoint, status: str, base_version: int | None = None
) -> SealPoint:
    """Tick ``point``. A stale tick of another status raises :class:`~qa.actions.Stale`."""
    actor.need("edit")
    if status not in SealStatus.values:
        raise Reject({"status": [f"must be one of {', '.join(SealStatus.values)}"]})
    if point.removed:
        raise Reject({"seal_point": ["was removed"]})
    if base_version is not None and base_version < point.version and status == point.status:
        return point  # someone else ticked it the same way since: nothing to change
    check_version(point, base_version)
    old = mark_checked(actor, point, status)
    point.save(update_fields=["status", "version", "checked_by", "checked_at"])
    actor.event("sealpoint.checked", point, {"from": old, "to": status, "version": point.version})
    return point
