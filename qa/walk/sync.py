"""Walk sync: apply a device's outbox of operations, each exactly once.

An operation is ``{"op_id": UUID, "kind": str, "base_version": int | None, "device_at": ISO 8601,
"payload": {...}}``; lengths in the payload are in the job's units (the API's field names). Each
operation runs in its own transaction together with the :class:`~qa.models.SyncOperation` row
that stores its answer, so the unique ``op_id`` guarantees it takes effect once: a replay (a
lost response, a second device, a retried batch) gets the stored answer back and changes nothing.

Answers (``status``):

``applied``
    The change is in the record; the answer carries the object as it now stands.
``conflict``
    The device edited a version older than the server's. Nothing is overwritten: for a finding
    a :class:`~qa.models.Conflict` keeps both versions until the inspector resolves it; for a
    seal point the server's tick stands and the device's is kept in the stored answer.
``rejected``
    The operation broke a rule (bad field, no right, a lifecycle step the status does not allow);
    ``errors`` names the field and the rule, as the API does.

Versions: every applied change bumps the object's ``version`` by one, the same way the device's
local copy does, so a chain of edits made offline on one device carries matching base versions.
"""

from __future__ import annotations

import uuid
from collections.abc import Callable
from datetime import datetime

from django.core.exceptions import PermissionDenied
from django.db import IntegrityError, transaction
from django.utils import timezone
from django.utils.dateparse import parse_datetime
from rest_framework import serializers

from ..access import require
from ..api.serializers import FindingSerializer
from ..choices import SealStatus
from ..models import Conflict, Event, Finding, Job, Member, SealPoint, SyncOperation
from ..models.findings import TransitionError

MAX_BATCH = 500
#: Fields a device may change on a finding with ``finding.update`` (API names, job units): what the
#: finding serializer accepts, less what fixes a finding to its place and moment.
EDITABLE = tuple(
    name
    for name in FindingSerializer.Meta.fields
    if name not in FindingSerializer.Meta.read_only_fields
    and name not in ("id", "client_id", "wall", "photos", "device_time")
)


class Reject(Exception):
    """An operation that breaks a rule; ``errors`` is ``{field: [rule]}``."""

    def __init__(self, errors: dict):
        super().__init__(errors)
        self.errors = errors


class _Context:
    def __init__(
        self, job: Job, member: Member, device_id: str, device_at: datetime | None, op_row_holder: dict
    ):
        self.job, self.member, self.user = job, member, member.user
        self.device_id, self.device_at = device_id, device_at
        self.holder = op_row_holder  # filled with the SyncOperation once it exists

    def event(self, verb: str, target, data: dict | None = None) -> None:
        Event.record(
            self.job, self.user, verb, target, data, device_at=self.device_at, device_id=self.device_id
        )

    @property
    def lifecycle_event(self) -> dict:
        return {"device_at": self.device_at, "device_id": self.device_id}

    def need(self, right: str, trade: str | None = None) -> None:
        try:
            require(self.member, right, trade=trade)
        except PermissionDenied as exc:
            raise Reject({"non_field_errors": [str(exc)]}) from None


def finding_data(finding: Finding, job: Job) -> dict:
    """A finding as the API shows it (job units)."""
    return dict(FindingSerializer(finding, context={"job": job}).data)


def _seal_point_data(point: SealPoint) -> dict:
    return {"id": point.id, "status": point.status, "version": point.version}


def _finding(ctx: _Context, payload: dict, *, lock: bool = True) -> Finding:
    ref = payload.get("finding")
    try:
        client_id = uuid.UUID(str(ref))
    except ValueError:
        raise Reject({"finding": ["must be the finding's client id (a UUID)"]}) from None
    qs = Finding.objects.select_for_update() if lock else Finding.objects
    finding = qs.filter(client_id=client_id, job=ctx.job).first()
    if finding is None:
        raise Reject({"finding": ["no such finding in this job"]})
    return finding


def _check_base(base_version) -> int | None:
    if base_version is None:
        return None
    if isinstance(base_version, bool) or not isinstance(base_version, int) or base_version < 1:
        raise Reject({"base_version": ["must be a whole number of 1 or more"]})
    return base_version


# --- operation handlers --------------------------------------------------------------------------


def _seal_point_status(ctx: _Context, payload: dict, base: int | None) -> dict:
    ctx.need("edit")
    status = payload.get("status")
    if status not in SealStatus.values:
        raise Reject({"status": [f"must be one of {', '.join(SealStatus.values)}"]})
    point = (
        SealPoint.objects.select_for_update()
        .filter(
            pk=payload.get("seal_point") if str(payload.get("seal_point", "")).isdigit() else None,
            wall__job=ctx.job,
            removed=False,
        )
        .first()
    )
    if point is None:
        raise Reject({"seal_point": ["no such seal point in this job"]})
    if base is not None and base < point.version and status != point.status:
        # Someone else ticked it since; their tick stands, the device's is kept in this answer.
        return {
            "status": "conflict",
            "seal_point": _seal_point_data(point),
            "device_version": {"status": status, "base_version": base},
        }
    old = point.status
    point.status, point.version = status, point.version + 1
    point.checked_by, point.checked_at = ctx.user, timezone.now()
    point.save(update_fields=["status", "version", "checked_by", "checked_at"])
    ctx.event("sealpoint.checked", point, {"from": old, "to": status, "version": point.version})
    return {"status": "applied", "seal_point": _seal_point_data(point)}


def _finding_create(ctx: _Context, payload: dict, base: int | None) -> dict:
    ctx.need("edit")
    client_id = payload.get("client_id")
    if client_id is None:
        raise Reject({"client_id": ["required: the device makes the finding's UUID"]})
    try:
        existing = Finding.objects.filter(client_id=uuid.UUID(str(client_id))).first()
    except ValueError:
        raise Reject({"client_id": ["must be a UUID"]}) from None
    if existing is not None:
        if existing.job_id != ctx.job.id:
            raise Reject({"client_id": ["is already used"]})
        return {"status": "applied", "finding": finding_data(existing, ctx.job)}
    serializer = FindingSerializer(data=payload, context={"job": ctx.job})
    if not serializer.is_valid():
        raise Reject(_plain_errors(serializer.errors))
    finding = serializer.save(
        job=ctx.job,
        created_by=ctx.user,
        device_time=serializer.validated_data.get("device_time") or ctx.device_at,
    )
    point = finding.seal_point
    result = {"status": "applied"}
    if point is not None and point.status != SealStatus.DEFECT:
        point.status, point.version = SealStatus.DEFECT, point.version + 1
        point.checked_by, point.checked_at = ctx.user, timezone.now()
        point.save(update_fields=["status", "version", "checked_by", "checked_at"])
        result["seal_point"] = _seal_point_data(point)
    ctx.event(
        "finding.created",
        finding,
        {"wall": finding.wall.tag, "kind": finding.kind, "trade": finding.trade, "version": finding.version},
    )
    result["finding"] = finding_data(finding, ctx.job)
    return result


def _edit_fields(payload: dict) -> dict:
    changes = payload.get("changes")
    if not isinstance(changes, dict) or not changes:
        raise Reject({"changes": ["give the fields to change, in the job's units"]})
    unknown = sorted(set(changes) - set(EDITABLE))
    if unknown:
        raise Reject({unknown[0]: [f"cannot be changed in the walk (editable: {', '.join(EDITABLE)})"]})
    return changes


def apply_finding_changes(ctx_job: Job, finding: Finding, changes: dict, user, event: dict) -> Finding:
    """Validate ``changes`` (job units) through the API serializer, save, bump the version, record."""
    serializer = FindingSerializer(finding, data=changes, partial=True, context={"job": ctx_job})
    if not serializer.is_valid():
        raise Reject(_plain_errors(serializer.errors))
    finding = serializer.save(version=finding.version + 1)
    Event.record(
        ctx_job,
        user,
        "finding.edited",
        finding,
        {"fields": sorted(serializer.validated_data), "version": finding.version},
        **event,
    )
    return finding


def _stale(ctx: _Context, finding: Finding, base: int, device_version: dict) -> dict:
    conflict = Conflict.objects.create(
        finding=finding,
        base_version=base,
        server_version=finding_data(finding, ctx.job),
        device_version=device_version,
        created_by=ctx.user,
    )
    ctx.holder["conflict"] = conflict
    ctx.event(
        "finding.conflict",
        finding,
        {"conflict": conflict.id, "base_version": base, "server_version": finding.version},
    )
    return {
        "status": "conflict",
        "conflict": conflict_data(conflict, ctx.job),
        "finding": finding_data(finding, ctx.job),
    }


def _finding_update(ctx: _Context, payload: dict, base: int | None) -> dict:
    ctx.need("edit")
    changes = _edit_fields(payload)
    finding = _finding(ctx, payload)
    if base is None:
        raise Reject({"base_version": ["required for an edit"]})
    if finding.removed:
        raise Reject({"finding": ["was removed"]})
    if base < finding.version:
        return _stale(ctx, finding, base, {"changes": changes})
    finding = apply_finding_changes(ctx.job, finding, changes, ctx.user, ctx.lifecycle_event)
    return {"status": "applied", "finding": finding_data(finding, ctx.job)}


def _step(name: str, right: str) -> Callable:
    def handler(ctx: _Context, payload: dict, base: int | None) -> dict:
        finding = _finding(ctx, payload)
        ctx.need(right, trade=finding.trade)
        note = payload.get("note", "")
        if not isinstance(note, str) or len(note) > 2000:
            raise Reject({"note": ["must be text of at most 2000 characters"]})
        try:
            getattr(finding, name)(ctx.user, note, **ctx.lifecycle_event)
        except TransitionError as exc:
            raise Reject({"status": [str(exc).partition(": ")[2]]}) from None
        return {"status": "applied", "finding": finding_data(finding, ctx.job)}

    return handler


def _finding_remove(ctx: _Context, payload: dict, base: int | None) -> dict:
    ctx.need("edit")
    finding = _finding(ctx, payload)
    if base is not None and base < finding.version and not finding.removed:
        return _stale(ctx, finding, base, {"removed": True})
    try:
        finding.remove(ctx.user, payload.get("note", "") or "", **ctx.lifecycle_event)
    except TransitionError as exc:
        raise Reject({"status": [str(exc).partition(": ")[2]]}) from None
    return {"status": "applied", "finding": finding_data(finding, ctx.job)}


def conflict_data(conflict: Conflict, job: Job) -> dict:
    return {
        "id": conflict.id,
        "finding": str(conflict.finding.client_id),
        "base_version": conflict.base_version,
        "server_version": conflict.server_version,
        "device_version": conflict.device_version,
        "created_by": conflict.created_by.username,
        "created_at": conflict.created_at.isoformat(),
        "resolution": conflict.resolution,
    }


def resolve_conflict(
    job: Job,
    member: Member,
    conflict_id,
    keep: str,
    *,
    device_at=None,
    device_id: str = "",
    version: int | None = None,
) -> dict:
    """Settle a conflict: keep the server's version or apply the device's. Inspector only.

    Runs inside the caller's transaction. Raises :class:`Reject` on a bad request.
    """
    try:
        require(member, "edit")
    except PermissionDenied as exc:
        raise Reject({"non_field_errors": [str(exc)]}) from None
    if keep not in ("server", "device"):
        raise Reject({"keep": ["must be 'server' or 'device'"]})
    conflict = (
        Conflict.objects.select_for_update()
        .filter(pk=conflict_id if str(conflict_id).isdigit() else None, finding__job=job)
        .select_related("finding")
        .first()
    )
    if conflict is None:
        raise Reject({"conflict": ["no such conflict in this job"]})
    if conflict.resolution:
        raise Reject({"conflict": [f"was already resolved ({conflict.resolution})"]})
    finding = Finding.objects.select_for_update().get(pk=conflict.finding_id)
    event = {"device_at": device_at, "device_id": device_id}
    if keep == "device":
        if version is not None and version != finding.version:
            raise Reject({"base_version": [f"is stale: the finding is now at version {finding.version}"]})
        device = conflict.device_version
        if device.get("removed"):
            if not finding.removed:
                finding.remove(member.user, "conflict resolved: device version kept", **event)
        else:
            finding = apply_finding_changes(job, finding, device.get("changes", {}), member.user, event)
    conflict.resolution, conflict.resolved_by, conflict.resolved_at = keep, member.user, timezone.now()
    conflict.save(update_fields=["resolution", "resolved_by", "resolved_at"])
    Event.record(
        job, member.user, "conflict.resolved", conflict, {"keep": keep, "finding": finding.id}, **event
    )
    conflict.finding = finding
    return {
        "status": "applied",
        "conflict": conflict_data(conflict, job),
        "finding": finding_data(finding, job),
    }


def _conflict_resolve(ctx: _Context, payload: dict, base: int | None) -> dict:
    return resolve_conflict(
        ctx.job,
        ctx.member,
        payload.get("conflict"),
        payload.get("keep"),
        device_at=ctx.device_at,
        device_id=ctx.device_id,
        version=base,
    )


HANDLERS: dict[str, Callable] = {
    "seal_point.status": _seal_point_status,
    "finding.create": _finding_create,
    "finding.update": _finding_update,
    "finding.fix": _step("mark_fixed", "fix"),
    "finding.verify": _step("verify", "verify"),
    "finding.reopen": _step("reopen", "verify"),
    "finding.remove": _finding_remove,
    "conflict.resolve": _conflict_resolve,
}


# --- the batch -----------------------------------------------------------------------------------


def _plain_errors(errors) -> dict:
    return {str(k): [str(m) for m in (v if isinstance(v, list) else [v])] for k, v in dict(errors).items()}


def _replay(row: SyncOperation, job: Job, member: Member) -> dict:
    if row.job_id != job.id or row.user_id != member.user_id:
        return {"op_id": str(row.op_id), "status": "rejected", "errors": {"op_id": ["is already used"]}}
    return row.result


def apply_operation(job: Job, member: Member, raw: dict, device_id: str = "") -> dict:
    """Apply one outbox operation exactly once and return its answer (the stored one on a replay)."""
    if not isinstance(raw, dict):
        return {"op_id": None, "status": "rejected", "errors": {"op": ["must be an object"]}}
    try:
        op_id = uuid.UUID(str(raw.get("op_id")))
    except ValueError:
        return {"op_id": raw.get("op_id"), "status": "rejected", "errors": {"op_id": ["must be a UUID"]}}
    row = SyncOperation.objects.filter(op_id=op_id).first()
    if row is not None:
        return _replay(row, job, member)
    kind = raw.get("kind")
    device_at = raw.get("device_at")
    holder: dict = {}
    try:
        with transaction.atomic():
            answer = {"op_id": str(op_id), "kind": kind}
            try:
                with transaction.atomic():
                    handler = HANDLERS.get(kind)
                    if handler is None:
                        raise Reject({"kind": [f"must be one of {', '.join(HANDLERS)}"]})
                    when = parse_datetime(device_at) if isinstance(device_at, str) else None
                    if device_at is not None and when is None:
                        raise Reject({"device_at": ["must be an ISO 8601 date-time"]})
                    if when is not None and timezone.is_naive(when):
                        when = timezone.make_aware(when, timezone.utc)
                    payload = raw.get("payload") or {}
                    if not isinstance(payload, dict):
                        raise Reject({"payload": ["must be an object"]})
                    ctx = _Context(job, member, device_id, when, holder)
                    answer.update(handler(ctx, payload, _check_base(raw.get("base_version"))))
            except Reject as exc:
                holder.clear()
                answer.update(status="rejected", errors=exc.errors)
            row = SyncOperation.objects.create(
                op_id=op_id,
                job=job,
                user=member.user,
                device_id=device_id[:64],
                kind=str(kind)[:30],
                result=answer,
            )
            if "conflict" in holder:
                Conflict.objects.filter(pk=holder["conflict"].pk).update(operation=row)
    except IntegrityError:
        # The same op_id was applied by a concurrent request a moment ago: answer as it did.
        row = SyncOperation.objects.filter(op_id=op_id).first()
        if row is None:
            raise
        return _replay(row, job, member)
    return answer


def apply_batch(job: Job, member: Member, ops: list, device_id: str = "") -> list[dict]:
    """Apply an outbox batch in order; one answer per operation.

    Raises
    ------
    serializers.ValidationError
        ``ops`` is not a list, or has more than :data:`MAX_BATCH` operations.
    """
    if not isinstance(ops, list):
        raise serializers.ValidationError({"ops": ["must be a list of operations"]})
    if len(ops) > MAX_BATCH:
        raise serializers.ValidationError({"ops": [f"at most {MAX_BATCH} operations per batch"]})
    if not isinstance(device_id, str) or len(device_id) > 64:
        raise serializers.ValidationError({"device_id": ["must be text of at most 64 characters"]})
    return [apply_operation(job, member, raw, device_id) for raw in ops]
