from __future__ import annotations

from collections.abc import Iterator
from contextlib import contextmanager
from contextvars import ContextVar

from django.conf import settings
from django.db import models

from .jobs import Job

#: Events held back by :func:`buffered_events`, written in one statement when the block ends.
_BUFFER: ContextVar[list | None] = ContextVar("sealwalk_event_buffer", default=None)


class AppendOnlyError(Exception):
    """Raised when code tries to change or remove an event."""


class EventQuerySet(models.QuerySet):
    def update(self, **kwargs):
        raise AppendOnlyError("events are append-only")

    def delete(self):
        raise AppendOnlyError("events are append-only")


class Event(models.Model):
    """Append-only audit trail: who did what, when on the server and when on the device, from which device."""

    job = models.ForeignKey(Job, on_delete=models.CASCADE, related_name="events")
    actor = models.ForeignKey(settings.AUTH_USER_MODEL, null=True, on_delete=models.PROTECT, related_name="+")
    verb = models.CharField(max_length=40)
    target_type = models.CharField(max_length=20)
    target_id = models.CharField(max_length=64)
    data = models.JSONField(default=dict, blank=True)
    at = models.DateTimeField(auto_now_add=True, db_index=True)
    device_at = models.DateTimeField(null=True, blank=True)
    device_id = models.CharField(max_length=64, blank=True)

    objects = EventQuerySet.as_manager()

    class Meta:
        ordering = ["at", "id"]
        indexes = [models.Index(fields=["job", "target_type", "target_id"])]

    def __str__(self) -> str:
        return f"{self.at:%Y-%m-%d %H:%M} {self.verb} {self.target_type} {self.target_id}"

    def save(self, *args, **kwargs):
        if self.pk is not None:
            raise AppendOnlyError("events are append-only")
        super().save(*args, **kwargs)

    def delete(self, *args, **kwargs):
        raise AppendOnlyError("events are append-only")

    @classmethod
    def record(
        cls, job, actor, verb: str, target, data: dict | None = None, *, device_at=None, device_id: str = ""
    ) -> Event:
        event = cls(
            job=job,
            actor=actor if getattr(actor, "is_authenticated", False) else None,
            verb=verb,
            target_type=target._meta.model_name,
            target_id=str(target.pk),
            data=data or {},
            device_at=device_at,
            device_id=device_id[:64],
        )
        buffer = _BUFFER.get()
        if buffer is None:
            event.save()
        else:
            buffer.append(event)
        return event


@contextmanager
def buffered_events() -> Iterator[list[Event]]:
    """Hold back every :meth:`Event.record` in the block and write them in one statement at its end.

    The caller may drop events of a part that was rolled back by truncating the yielded list. Use it
    inside a transaction, so the events commit with the changes they describe.
    """
    buffer: list[Event] = []
    token = _BUFFER.set(buffer)
    try:
        yield buffer
    finally:
        _BUFFER.reset(token)
    Event.objects.bulk_create(buffer)
