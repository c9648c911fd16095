"""Conflicts: a stale edit from a device is kept beside the server's version until the inspector
settles it — never silently overwritten."""

from __future__ import annotations

from typing import Any

from django.utils import timezone

from ..models import Conflict, Finding
from .context import Actor, Reject, check_version
from .findings import STEPS, edit_finding, finding_step, remove_finding


def keep_conflict(
    actor: Actor, finding: Finding, base_version: int, server_version: dict, device_version: dict
) -> Conflict:
    """Keep a device's stale change of ``finding`` as a conflict (both versions as the API shows them)."""
    conflict = Conflict.objects.create(
        finding=finding,
        base_version=base_version,
        server_version=server_version,
        device_version=device_version,
        created_by=actor.user,
    )
    actor.event(
        "finding.conflict",
        finding,
        {"conflict": conflict.id, "base_version": base_version, "server_version": finding.version},
    )
    return conflict


def resolve_conflict(
    actor: Actor,
    conflict: Conflict,
    keep: str,
    device_changes: dict[str, Any] | None = None,
    base_version: int | None = None,
) -> Conflict:
    """Settle ``conflict``: keep the server's version, or apply the device's (inspector only).

    ``device_changes`` are the device's edits validated to SI by the caller (None when the device
    removed the finding, took a lifecycle step, or when the server's version is kept). A finding
    removed since is never edited: only "server" can settle its conflicts.
    """
    actor.need("edit")
    if keep not in ("server", "device"):
        raise Reject({"keep": ["must be 'server' or 'device'"]})
    if conflict.resolution:
        raise Reject({"conflict": [f"was already resolved ({conflict.resolution})"]})
    finding = (
        Finding.objects.select_for_update(of=("self",)).select_related("wall").get(pk=conflict.finding_id)
    )
    if keep == "device":
        if finding.removed or finding.wall.removed:
            raise Reject({"keep": ["the finding was removed since; keep the server's version"]})
        check_version(finding, base_version)
        device = conflict.device_version if isinstance(conflict.device_version, dict) else {}
        if device.get("removed"):
            remove_finding(actor, finding, "conflict resolved: device version kept")
        elif device.get("step") in STEPS:
            # A lifecycle step decided on an older version: take it now, if the status allows it.
            finding_step(actor, finding, device["step"], str(device.get("note") or ""))
        else:
            edit_finding(actor, finding, device_changes or {})
    conflict.resolution, conflict.resolved_by, conflict.resolved_at = keep, actor.user, timezone.now()
    conflict.save(update_fields=["resolution", "resolved_by", "resolved_at"])
    actor.event("conflict.resolved", conflict, {"keep": keep, "finding": finding.id})
    conflict.finding = finding
    return conflict
