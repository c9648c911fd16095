"""Findings: create (and mark the seal point defect), edit, the lifecycle steps, remove."""

from __future__ import annotations

import uuid
from typing import Any

from ..choices import SealStatus
from ..models import Finding
from ..models.findings import TransitionError
from .context import Actor, Reject, check_version
from .seal_points import mark_checked

#: Lifecycle steps: the model method and the right each needs.
STEPS = {"fix": ("mark_fixed", "fix"), "verify": ("verify", "verify"), "reopen": ("reopen", "verify")}
NOTE_MAX = 2000


def existing_finding(actor: Actor, client_id: uuid.UUID | None) -> Finding | None:
    """The finding already stored under ``client_id`` (a replayed create), None if there is none."""
    if client_id is None:
        return None
    found = Finding.objects.filter(client_id=client_id).first()
    if found is not None and found.job_id != actor.job.id:
        raise Reject({"client_id": ["is already used"]})
    return found


def create_finding(actor: Actor, fields: dict[str, Any]) -> Finding:
    """Store a new finding from validated SI ``fields`` and mark its seal point defect.

    ``fields`` are a FindingSerializer's ``validated_data`` (wall and seal point as objects). The
    caller checks :func:`existing_finding` first; a twin racing this one raises IntegrityError on
    the unique ``client_id``.
    """
    actor.need("edit")
    fields = dict(fields)
    device_time = fields.pop("device_time", None) or actor.device_at
    finding = Finding(job=actor.job, created_by=actor.user, device_time=device_time, **fields)
    finding.save(force_insert=True)
    point = finding.seal_point
    if point is not None and point.status != SealStatus.DEFECT:
        mark_checked(actor, point, SealStatus.DEFECT)
        point.save(update_fields=["status", "version", "checked_by", "checked_at"])
    actor.event(
        "finding.created",
        finding,
        {"wall": finding.wall.tag, "kind": finding.kind, "trade": finding.trade, "version": finding.version},
    )
    return finding


def edit_finding(
    actor: Actor, finding: Finding, changes: dict[str, Any], base_version: int | None = None
) -> Finding:
    """Apply validated SI ``changes``, bump the version, record which fields changed."""
    actor.need("edit")
    if finding.removed:
        raise Reject({"finding": ["was removed"]})
    if finding.wall.removed:
        raise Reject({"finding": ["its wall was removed"]})
    check_version(finding, base_version)
    for name, value in changes.items():
        setattr(finding, name, value)
    finding.version += 1
    finding.save()
    actor.event("finding.edited", finding, {"fields": sorted(changes), "version": finding.version})
    return finding


def clean_note(note: Any) -> str:
    if not isinstance(note, str) or len(note) > NOTE_MAX:
        raise Reject({"note": [f"must be text of at most {NOTE_MAX} characters"]})
    return note.strip()


def finding_step(
    actor: Actor, finding: Finding, step: str, note: str = "", base_version: int | None = None
) -> Finding:
    """Mark fixed (crew of the trade or inspector), verify or reopen (inspector; reopen needs a note)."""
    method, right = STEPS[step]
    actor.need(right, trade=finding.trade)
    note = clean_note(note)
    if finding.removed:
        raise Reject({"status": ["this finding was removed"]})
    if finding.wall.removed:
        raise Reject({"status": ["its wall was removed"]})
    # The version first: a step decided on an older version (someone fixed, verified or edited the
    # finding since) is a conflict for the inspector even when the status would still allow it.
    check_version(finding, base_version)
    try:
        finding.check_step(step)
    except TransitionError as exc:
        raise Reject({"status": [str(exc).partition(": ")[2]]}) from None
    if step == "reopen" and not note:
        raise Reject({"note": ["say why the finding is reopened"]})
    try:
        getattr(finding, method)(actor.user, note, **actor.device)
    except TransitionError as exc:
        raise Reject({"status": [str(exc).partition(": ")[2]]}) from None
    return finding


def remove_finding(
    actor: Actor, finding: Finding, note: str = "", base_version: int | None = None
) -> Finding:
    """Remove a finding from the record (kept, with an event; it no longer counts)."""
    actor.need("edit")
    note = clean_note(note)
    if not finding.removed:
        check_version(finding, base_version)
    try:
        finding.remove(actor.user, note, **actor.device)
    except TransitionError as exc:
        raise Reject({"status": [str(exc).partition(": ")[2]]}) from None
    return finding
