"""Who acts, from which device, and the errors every write can raise."""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime
from typing import Any

from ..access import require
from ..models import Event, Job, Member


class Reject(ValueError):
    """A write that breaks a rule; ``errors`` is ``{field: [rule]}`` as the API answers it."""

    def __init__(self, errors: dict[str, list[str]]):
        super().__init__(errors)
        self.errors = errors


class Stale(Exception):
    """The caller edited an older version than the server's. ``obj`` is the object as it stands."""

    def __init__(self, obj: Any, base_version: int):
        super().__init__(f"version {base_version} is stale: the server has version {obj.version}")
        self.obj = obj
        self.base_version = base_version


@dataclass(frozen=True)
class Actor:
    """A member acting on their job, with the device's clock and id when the change came from a phone."""

    member: Member
    device_at: datetime | None = None
    device_id: str = ""

    @property
    def job(self) -> Job:
        return self.member.job

    @property
    def user(self) -> Any:
        return self.member.user

    def need(self, right: str, trade: str | None = None) -> None:
        """Raise PermissionDenied (403 in the API, a rejected operation in the walk) without the right."""
        require(self.member, right, trade=trade)

    @property
    def device(self) -> dict[str, Any]:
        return {"device_at": self.device_at, "device_id": self.device_id}

    def event(self, verb: str, target: Any, data: dict[str, Any] | None = None) -> Event:
        return Event.record(self.job, self.user, verb, target, data, **self.device)


def check_version(obj: Any, base_version: int | None) -> None:
    """Compare the version the caller saw with the server's.

    None means the caller did not say (the API's plain PATCH); equal goes on; older raises
    :class:`Stale`; newer than the server's is impossible and is refused.
    """
    if base_version is None:
        return
    if base_version > obj.version:
        raise Reject({"base_version": [f"is ahead of the server's version {obj.version}"]})
    if base_version < obj.version:
        raise Stale(obj, base_version)
