"""Strict parsing of the values a device or a script sends: ids, UUIDs, moments, versions.

Each raises :class:`~qa.actions.Reject` naming the field and the rule, never a server error: an id
like "²" (a digit to ``str.isdigit`` that ``int`` refuses), a date like 30 February, an offset of
+25:00 or a year whose conversion to UTC overflows are all plain answers.
"""

from __future__ import annotations

import uuid
from datetime import UTC, datetime
from typing import Any

from django.utils.dateparse import parse_datetime

from .context import Reject

#: A device clock outside this range is a broken clock or a forged operation.
EARLIEST, LATEST = datetime(2000, 1, 1, tzinfo=UTC), datetime(2100, 1, 1, tzinfo=UTC)
MAX_VERSION = 2**31 - 1
ID_DIGITS = 18


def parse_uuid(value: Any, field: str) -> uuid.UUID:
    if not isinstance(value, str):
        raise Reject({field: ["must be a UUID"]})
    try:
        return uuid.UUID(value)
    except ValueError:
        raise Reject({field: ["must be a UUID"]}) from None


def parse_id(value: Any, field: str) -> int:
    """An object id: a whole number, or a string of ASCII digits (at most 18), nothing else."""
    if isinstance(value, bool):
        raise Reject({field: ["must be an id (a whole number)"]})
    if isinstance(value, int) and 0 < value < 10**ID_DIGITS:
        return value
    if isinstance(value, str) and value.isascii() and value.isdigit() and len(value) <= ID_DIGITS:
        return int(value)
    raise Reject({field: ["must be an id (a whole number)"]})


def parse_moment(value: Any, field: str) -> datetime | None:
    """An ISO 8601 date-time with a real date, a real offset and a year from 2000 to 2099; None if absent."""
    if value is None:
        return None
    rule = "must be an ISO 8601 date-time between 2000 and 2099"
    if not isinstance(value, str) or len(value) > 40:
        raise Reject({field: [rule]})
    try:
        moment = parse_datetime(value)
        if moment is None:
            raise ValueError(value)
        if moment.tzinfo is None:
            moment = moment.replace(tzinfo=UTC)
        moment = moment.astimezone(UTC)
    except (ValueError, OverflowError):
        raise Reject({field: [rule]}) from None
    if not EARLIEST <= moment < LATEST:
        raise Reject({field: [rule]})
    return moment


def parse_version(value: Any, field: str = "base_version") -> int | None:
    if value is None:
        return None
    if isinstance(value, bool) or not isinstance(value, int) or not 1 <= value <= MAX_VERSION:
        raise Reject({field: ["must be a whole number of 1 or more"]})
    return value
