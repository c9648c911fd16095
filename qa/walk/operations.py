"""Parsing one outbox operation before anything touches the database.

An operation is ``{"op_id": UUID, "kind": str, "base_version": int | None, "device_at": ISO 8601,
"payload": {...}}``. :func:`parse_operation` checks every envelope field and answers a bad one
with the field and the rule; the payload's own fields are checked by the handler of its kind
(through the API's serializers, so the rules are the API's).
"""

from __future__ import annotations

import uuid
from dataclasses import dataclass
from datetime import datetime
from typing import Any

from ..actions import Reject
from ..actions.parse import parse_moment, parse_uuid, parse_version

#: Kinds of operation the walk sends (each has a handler in :mod:`.sync`).
KINDS = (
    "seal_point.status",
    "finding.create",
    "finding.update",
    "finding.fix",
    "finding.verify",
    "finding.reopen",
    "finding.remove",
    "conflict.resolve",
)


@dataclass(frozen=True)
class Operation:
    op_id: uuid.UUID
    kind: str
    base_version: int | None
    device_at: datetime | None
    payload: dict[str, Any]


def parse_operation(raw: Any) -> Operation:
    """Check an operation's envelope; raise :class:`~qa.actions.Reject` naming the first bad field."""
    if not isinstance(raw, dict):
        raise Reject({"op": ["must be an object"]})
    op_id = parse_uuid(raw.get("op_id"), "op_id")
    kind = raw.get("kind")
    if not isinstance(kind, str) or kind not in KINDS:
        raise Reject({"kind": [f"must be one of {', '.join(KINDS)}"]})
    payload = raw.get("payload")
    if payload is None:
        payload = {}
    if not isinstance(payload, dict):
        raise Reject({"payload": ["must be an object"]})
    return Operation(
        op_id=op_id,
        kind=kind,
        base_version=parse_version(raw.get("base_version")),
        device_at=parse_moment(raw.get("device_at"), "device_at"),
        payload=payload,
    )
