"""Walk sync: apply a device's outbox of operations, each exactly once.

Lengths in a payload are in the job's units (the API's field names). A batch runs in one
transaction; each operation in its own savepoint together with the :class:`~qa.models.SyncOperation`
row that claims its ``op_id`` first, so the unique ``op_id`` guarantees it takes effect once: a
replay (a lost response, a second device, a retried batch) gets the stored answer back and changes
nothing. The batch writes its events in one statement and invalidates each wall's audit once.

Answers (``status``):

``applied``
    The change is in the record; the answer carries the object as it now stands.
``conflict``
    The device changed a version older than the server's. Nothing is overwritten: for a finding
    a :class:`~qa.models.Conflict` keeps both versions until the inspector resolves it; for a
    seal point the server's tick stands and the device's is kept in the stored answer.
``rejected``
    The operation broke a rule (bad field, no right, a lifecycle step the status does not allow);
    ``errors`` names the field and the rule, as the API does. A rejected operation never holds
    back the others of its batch.

Every write goes through :mod:`qa.actions`, the same functions the API and the pages call.
"""

from __future__ import annotations

import uuid
from collections.abc import Callable
from contextvars import ContextVar
from dataclasses import dataclass, field
from typing import Any

from django.core.exceptions import PermissionDenied
from django.db import DataError, IntegrityError, connection, transaction
from rest_framework import serializers

from .. import actions
from ..actions import Actor, Reject, Stale
from ..actions.parse import parse_id, parse_uuid, parse_version
from ..api.finding_json import finding_json
from ..api.serializers import FindingSerializer
from ..audit.cache import deferred_invalidation
from ..models import Conflict, Finding, Job, Member, SealPoint, SyncOperation, Wall
from ..models.events import buffered_events
from .operations import Operation, parse_operation

MAX_BATCH = 500
#: Fields a device may change on a finding with ``finding.update`` (API names, job units): what the
#: finding serializer accepts, less what fixes a finding to its place and moment.
EDITABLE = tuple(
    name
    for name in FindingSerializer.Meta.fields
    if name not in FindingSerializer.Meta.read_only_fields
    and name not in ("id", "client_id", "wall", "photos", "device_time")
)
NOTE_MAX = 2000


def finding_data(finding: Finding, job: Job, photos: list[str] | None = None) -> dict:
    """A finding as the API shows it (job units): the serializer's own writer, without a serializer.

    ``photos``: its live photo ids when the caller knows them (a finding just created has none).
    """
    if photos is None:
        photos = [str(p.id) for p in finding.photos.all() if not p.removed]
    return finding_json(finding, job.units, photos, finding.created_by.username)


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


def _seal_point_data(point: SealPoint) -> dict:
    return {"id": point.id, "status": point.status, "version": point.version}


def _plain_errors(errors: Any) -> dict:
    return {str(k): [str(m) for m in (v if isinstance(v, list) else [v])] for k, v in dict(errors).items()}


def _finding(actor: Actor, payload: dict) -> Finding:
    client_id = parse_uuid(payload.get("finding"), "finding")
    finding = (
        Finding.objects.select_for_update(of=("self",))
        .select_related("wall__wall_type", "seal_point", "created_by")
        .prefetch_related("photos")
        .filter(client_id=client_id, job=actor.job)
        .first()
    )
    if finding is None:
        raise Reject({"finding": ["no such finding in this job"]})
    return finding


def _note(payload: dict) -> str:
    note = payload.get("note", "")
    if note is None:
        note = ""
    if not isinstance(note, str) or len(note) > NOTE_MAX:
        raise Reject({"note": [f"must be text of at most {NOTE_MAX} characters"]})
    return note


def validated_changes(job: Job, finding: Finding, changes: Any) -> dict:
    """A device's edit of ``finding`` (API names, job units) validated by the API's serializer → SI."""
    if not isinstance(changes, dict) or not changes:
        raise Reject({"changes": ["give the fields to change, in the job's units"]})
    unknown = sorted(set(changes) - set(EDITABLE))
    if unknown:
        raise Reject(
            {str(unknown[0])[:40]: [f"cannot be changed in the walk (editable: {', '.join(EDITABLE)})"]}
        )
    serializer = FindingSerializer(finding, data=changes, partial=True, context={"job": job})
    if not serializer.is_valid():
        raise Reject(_plain_errors(serializer.errors))
    return dict(serializer.validated_data)


def _stale(actor: Actor, finding: Finding, base: int, device_version: dict) -> tuple[dict, Conflict]:
    conflict = actions.keep_conflict(actor, finding, base, finding_data(finding, actor.job), device_version)
    answer = {
        "status": "conflict",
        "conflict": conflict_data(conflict, actor.job),
        "finding": finding_data(finding, actor.job),
    }
    return answer, conflict


# --- what one batch loads at once ---------------------------------------------------------------


@dataclass
class Prefetched:
    """Rows a batch reads once instead of once per operation (locked with the batch's transaction)."""

    points: dict[int, SealPoint] = field(default_factory=dict)
    #: client ids of findings that already exist (a replayed create); None: not looked up
    existing: set[uuid.UUID] | None = None
    #: the batch's one serializer for new findings (see :func:`_new_finding_serializer`)
    creating: FindingSerializer | None = None
    #: live walls of the job that the batch's new findings name, by id
    walls: dict[int, Wall] = field(default_factory=dict)


class _PreloadedWall(serializers.PrimaryKeyRelatedField):
    """A finding's wall field answering from the walls a batch loaded at once; the database otherwise."""

    def __init__(self, walls: dict[int, Wall], **kwargs: Any) -> None:
        self.walls = walls
        super().__init__(**kwargs)

    def to_internal_value(self, data: Any) -> Any:
        if type(data) is int and data in self.walls:  # JSON whole numbers only; DRF refuses the rest
            return self.walls[data]
        return super().to_internal_value(data)


_PREFETCHED: ContextVar[Prefetched | None] = ContextVar("sealwalk_sync_prefetched", default=None)


def _prefetch(job: Job, ops: list[Operation]) -> Prefetched:
    point_ids, client_ids, wall_ids = set(), set(), set()
    for op in ops:
        try:
            if op.kind == "seal_point.status":
                point_ids.add(parse_id(op.payload.get("seal_point"), "seal_point"))
            elif op.kind == "finding.create":
                client_ids.add(parse_uuid(op.payload.get("client_id"), "client_id"))
                if type(op.payload.get("wall")) is int:  # in range, or the handler answers it
                    wall_ids.add(parse_id(op.payload["wall"], "wall"))
        except Reject:
            continue  # the handler answers it
    points = SealPoint.objects.select_for_update().filter(
        pk__in=point_ids, wall__job=job, wall__removed=False, removed=False
    )
    existing = set(Finding.objects.filter(client_id__in=client_ids).values_list("client_id", flat=True))
    # The rows FindingSerializer's wall field would read one by one (same filter, same related rows).
    walls = Wall.objects.filter(pk__in=wall_ids, job=job, removed=False).select_related("wall_type")
    return Prefetched(points={p.pk: p for p in points}, existing=existing, walls={w.pk: w for w in walls})


# --- operation handlers: (actor, op) -> (answer, conflict or None) ------------------------------

Answer = tuple[dict, Conflict | None]


def _seal_point_status(actor: Actor, op: Operation) -> Answer:
    actor.need("edit")
    # A missing status reads as "", which tick_seal_point refuses like any status outside the list.
    status = op.payload.get("status", "")
    point_id = parse_id(op.payload.get("seal_point"), "seal_point")
    batch = _PREFETCHED.get()
    point = batch.points.get(point_id) if batch is not None else None
    if point is None:
        point = (
            SealPoint.objects.select_for_update()
            .filter(pk=point_id, wall__job=actor.job, wall__removed=False, removed=False)
            .first()
        )
    if point is None:
        raise Reject({"seal_point": ["no such seal point in this job"]})
    try:
        actions.tick_seal_point(actor, point, status, op.base_version)
    except Stale:
        # Someone else ticked it since; their tick stands, the device's is kept in this answer.
        answer = {
            "status": "conflict",
            "seal_point": _seal_point_data(point),
            "device_version": {"status": status, "base_version": op.base_version},
        }
        return answer, None
    return {"status": "applied", "seal_point": _seal_point_data(point)}, None


def _new_finding_serializer(actor: Actor, payload: Any) -> FindingSerializer:
    """A serializer validating ``payload`` as a new finding of the actor's job.

    Within a batch one serializer serves every create, given each payload in turn: DRF copies all the
    declared fields for each new serializer, which was a third of what a create cost.
    """
    batch = _PREFETCHED.get()
    if batch is None or batch.creating is None:
        serializer = FindingSerializer(data=payload, context={"job": actor.job})
        if batch is not None:
            # The serializer scoped the field's queryset to the job; the stubs do not know the attribute.
            scoped = serializer.fields["wall"].queryset  # type: ignore[attr-defined]
            serializer.fields["wall"] = _PreloadedWall(batch.walls, queryset=scoped)
            batch.creating = serializer
        return serializer
    serializer = batch.creating
    serializer.initial_data = payload
    for state in ("_validated_data", "_errors", "_data"):  # what DRF keeps from the last validation
        serializer.__dict__.pop(state, None)
    return serializer


def _finding_create(actor: Actor, op: Operation) -> Answer:
    actor.need("edit")
    if op.payload.get("client_id") is None:
        raise Reject({"client_id": ["required: the device makes the finding's UUID"]})
    client_id = parse_uuid(op.payload.get("client_id"), "client_id")
    batch = _PREFETCHED.get()
    absent = batch is not None and batch.existing is not None and client_id not in batch.existing
    existing = None if absent else actions.findings.existing_finding(actor, client_id)
    if existing is not None:
        return {"status": "applied", "finding": finding_data(existing, actor.job)}, None
    serializer = _new_finding_serializer(actor, op.payload)
    if not serializer.is_valid():
        raise Reject(_plain_errors(serializer.errors))
    # The same client id arriving through another door at this moment raises IntegrityError: _apply
    # answers with that finding (this op's own savepoint is the only one a create needs).
    finding = actions.create_finding(actor, serializer.validated_data)
    answer: dict = {"status": "applied", "finding": finding_data(finding, actor.job, photos=[])}  # none yet
    if finding.seal_point is not None:
        answer["seal_point"] = _seal_point_data(finding.seal_point)
    return answer, None


def _finding_update(actor: Actor, op: Operation) -> Answer:
    actor.need("edit")
    finding = _finding(actor, op.payload)
    if op.base_version is None:
        raise Reject({"base_version": ["required for an edit"]})
    changes = op.payload.get("changes")
    validated = validated_changes(actor.job, finding, changes)
    try:
        actions.edit_finding(actor, finding, validated, op.base_version)
    except Stale:
        return _stale(actor, finding, op.base_version, {"changes": changes})
    return {"status": "applied", "finding": finding_data(finding, actor.job)}, None


def _step(step: str) -> Callable[[Actor, Operation], Answer]:
    def handler(actor: Actor, op: Operation) -> Answer:
        finding = _finding(actor, op.payload)
        note = _note(op.payload)
        try:
            actions.finding_step(actor, finding, step, note, op.base_version)
        except Stale:
            return _stale(actor, finding, op.base_version or 0, {"step": step, "note": note})
        return {"status": "applied", "finding": finding_data(finding, actor.job)}, None

    return handler


def _finding_remove(actor: Actor, op: Operation) -> Answer:
    actor.need("edit")
    finding = _finding(actor, op.payload)
    try:
        actions.remove_finding(actor, finding, _note(op.payload), op.base_version)
    except Stale:
        return _stale(actor, finding, op.base_version or 0, {"removed": True})
    return {"status": "applied", "finding": finding_data(finding, actor.job)}, None


def resolve(actor: Actor, conflict_id: Any, keep: Any, base_version: int | None = None) -> dict:
    """Settle a conflict (the walk's resolve endpoint and the ``conflict.resolve`` operation)."""
    conflict = (
        Conflict.objects.select_for_update()
        .filter(pk=parse_id(conflict_id, "conflict"), finding__job=actor.job)
        .select_related("finding")
        .first()
    )
    if conflict is None:
        raise Reject({"conflict": ["no such conflict in this job"]})
    device = conflict.device_version if isinstance(conflict.device_version, dict) else {}
    changes = None
    # Only an edit carries changes to validate: a removal or a lifecycle step has none.
    edits = not (device.get("removed") or device.get("step") or conflict.finding.removed)
    if keep == "device" and edits:
        changes = validated_changes(actor.job, conflict.finding, device.get("changes"))
    try:
        conflict = actions.resolve_conflict(actor, conflict, keep, changes, base_version)
    except Stale as exc:
        raise Reject({"base_version": [str(exc)]}) from None
    return {
        "status": "applied",
        "conflict": conflict_data(conflict, actor.job),
        "finding": finding_data(conflict.finding, actor.job),
    }


def _conflict_resolve(actor: Actor, op: Operation) -> Answer:
    return resolve(actor, op.payload.get("conflict"), op.payload.get("keep"), op.base_version), None


HANDLERS: dict[str, Callable[[Actor, Operation], Answer]] = {
    "seal_point.status": _seal_point_status,
    "finding.create": _finding_create,
    "finding.update": _finding_update,
    "finding.fix": _step("fix"),
    "finding.verify": _step("verify"),
    "finding.reopen": _step("reopen"),
    "finding.remove": _finding_remove,
    "conflict.resolve": _conflict_resolve,
}


# --- the batch -----------------------------------------------------------------------------------


def _replay(row: SyncOperation, job: Job, member: Member) -> dict:
    if row.job_id != job.id or row.user_id != member.user_id:
        return {"op_id": str(row.op_id), "status": "rejected", "errors": {"op_id": ["is already used"]}}
    return row.result


def _rejection(exc: Exception) -> dict:
    if isinstance(exc, Reject):
        return {"status": "rejected", "errors": exc.errors}
    if isinstance(exc, PermissionDenied):
        return {"status": "rejected", "errors": {"non_field_errors": [str(exc)]}}
    # A value the database or the model cannot hold: this operation alone is refused.
    return {"status": "rejected", "errors": {"payload": [f"could not be stored ({type(exc).__name__})"]}}


def _rolled_back(events: list, mark: int) -> None:
    """Forget what an operation rolled back to its savepoint left in the batch's memory."""
    del events[mark:]
    batch = _PREFETCHED.get()
    if batch is not None:
        batch.points.clear()  # a rolled-back tick may have changed a loaded row: read them again


def _apply(actor: Actor, op: Operation, events: list) -> tuple[dict, Conflict | None]:
    """Apply one claimed operation in its own savepoint; a broken rule rolls back its changes and events."""
    mark = len(events)
    try:
        with transaction.atomic():
            result, conflict = HANDLERS[op.kind](actor, op)
        return {"op_id": str(op.op_id), "kind": op.kind, **result}, conflict
    except (Reject, PermissionDenied, DataError, OverflowError, TypeError) as exc:
        _rolled_back(events, mark)
        return {"op_id": str(op.op_id), "kind": op.kind, **_rejection(exc)}, None
    except IntegrityError:
        # A create whose client id was stored through another door at the same moment: that one stands.
        twin = None
        if op.kind == "finding.create":
            twin = actions.findings.existing_finding(
                actor, parse_uuid(op.payload.get("client_id"), "client_id")
            )
        if twin is None:
            raise
        _rolled_back(events, mark)
        return {
            "op_id": str(op.op_id),
            "kind": op.kind,
            "status": "applied",
            "finding": finding_data(twin, actor.job),
        }, None


def _claim(job: Job, member: Member, device_id: str, kinds: dict[uuid.UUID, str]) -> dict:
    """Claim every op id of the batch in one statement; return {op_id: (row, ours)}.

    A row another request claimed first (committed, or waited for by PostgreSQL's unique index) is
    not ours: its stored answer is replayed. SQLite serialises writers (immediate transactions).
    """
    token = uuid.uuid4().hex
    SyncOperation.objects.bulk_create(
        [
            SyncOperation(
                op_id=op_id,
                job=job,
                user_id=member.user_id,
                device_id=device_id,
                kind=kind[:30],
                result={"claimed_by": token},
            )
            for op_id, kind in kinds.items()
        ],
        ignore_conflicts=True,
    )
    rows = SyncOperation.objects.filter(op_id__in=list(kinds))
    return {row.op_id: (row, row.result == {"claimed_by": token}) for row in rows}


def _store_results(rows: list[SyncOperation]) -> None:
    """Write each claimed row's answer: one UPDATE by id, sent as one batch (``bulk_update`` builds a
    CASE over every row, which cost more than the batch's findings)."""
    if not rows:
        return
    field = SyncOperation._meta.get_field("result")
    quote = connection.ops.quote_name
    sql = f"UPDATE {quote(SyncOperation._meta.db_table)} SET {quote('result')} = %s WHERE {quote('id')} = %s"
    with connection.cursor() as cursor:
        cursor.executemany(sql, [(field.get_db_prep_save(row.result, connection), row.pk) for row in rows])


def _envelope_answer(raw: Any, exc: Reject) -> tuple[uuid.UUID | None, str, dict]:
    """An operation whose envelope is bad: its answer, and its op id when it has a usable one."""
    op_id = raw.get("op_id") if isinstance(raw, dict) else None
    answer = {"op_id": op_id if isinstance(op_id, str) else None, "status": "rejected", "errors": exc.errors}
    try:
        parsed = uuid.UUID(op_id) if isinstance(op_id, str) else None
    except ValueError:
        parsed = None
    kind = raw.get("kind") if isinstance(raw, dict) else None
    return parsed, kind if isinstance(kind, str) else "", answer


def apply_batch(job: Job, member: Member, ops: Any, device_id: Any = "") -> list[dict]:
    """Apply an outbox batch in order; one answer per operation.

    Raises
    ------
    serializers.ValidationError
        ``ops`` is not a list, or has more than :data:`MAX_BATCH` operations, or ``device_id`` is
        not short text.
    """
    if not isinstance(ops, list):
        raise serializers.ValidationError({"ops": ["must be a list of operations"]})
    if len(ops) > MAX_BATCH:
        raise serializers.ValidationError({"ops": [f"at most {MAX_BATCH} operations per batch"]})
    if not isinstance(device_id, str) or len(device_id) > 64:
        raise serializers.ValidationError({"device_id": ["must be text of at most 64 characters"]})
    parsed: list[Operation | tuple[Any, Reject]] = []
    for raw in ops:
        try:
            parsed.append(parse_operation(raw))
        except Reject as exc:
            parsed.append((raw, exc))
    envelopes = {id(item): _envelope_answer(*item) for item in parsed if not isinstance(item, Operation)}
    kinds: dict[uuid.UUID, str] = {}
    for item in parsed:
        if isinstance(item, Operation):
            kinds.setdefault(item.op_id, item.kind)
        else:
            envelope_id, envelope_kind, _ = envelopes[id(item)]
            if envelope_id is not None:
                kinds.setdefault(envelope_id, envelope_kind)
    answers: list[dict] = []
    with transaction.atomic(), deferred_invalidation(), buffered_events() as events:
        claims = _claim(job, member, device_id, kinds)
        done: dict[uuid.UUID, dict] = {}
        links: list[tuple[Conflict, SyncOperation]] = []
        token = _PREFETCHED.set(_prefetch(job, [p for p in parsed if isinstance(p, Operation)]))
        try:
            for item in parsed:
                op_id = item.op_id if isinstance(item, Operation) else envelopes[id(item)][0]
                row, ours = claims.get(op_id, (None, False)) if op_id is not None else (None, False)
                if op_id in done:  # the same op twice in one batch: the first answer stands
                    answers.append(done[op_id])
                elif row is not None and not ours:
                    answers.append(_replay(row, job, member))
                elif isinstance(item, Operation):
                    answer, conflict = _apply(Actor(member, item.device_at, device_id), item, events)
                    done[item.op_id] = answer
                    answers.append(answer)
                    if conflict is not None:
                        assert row is not None  # every operation's id was claimed above
                        links.append((conflict, row))
                else:
                    answer = envelopes[id(item)][2]
                    if op_id is not None:
                        done[op_id] = answer
                    answers.append(answer)
        finally:
            _PREFETCHED.reset(token)
        mine = [row for row, ours in claims.values() if ours]
        for row in mine:
            row.result = done.get(row.op_id, row.result)
        _store_results(mine)
        for conflict, row in links:
            Conflict.objects.filter(pk=conflict.pk).update(operation=row)
    return answers


__all__ = [
    "MAX_BATCH",
    "EDITABLE",
    "apply_batch",
    "conflict_data",
    "finding_data",
    "parse_version",
    "resolve",
]
