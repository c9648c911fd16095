"""Rooms and junctions of a wall (the field prediction's inputs): the one write path of the API and
the wall page's rooms form. Events keep what an input was, since inputs are not findings."""

from __future__ import annotations

from typing import Any

from ..models import Wall
from .context import Actor


def save_field_input(actor: Actor, wall: Wall, noun: str, serializer: Any) -> Any:
    """Create (no instance) or change the input a validated serializer holds, with its event."""
    actor.need("edit")
    if serializer.instance is None:
        obj = serializer.save(wall=wall)
        actor.event(f"{noun}.created", obj, {"wall": wall.tag})
    else:
        obj = serializer.save()
        actor.event(f"{noun}.changed", obj, {"wall": wall.tag, "fields": sorted(serializer.validated_data)})
    return obj


def remove_field_input(actor: Actor, wall: Wall, noun: str, obj: Any, was: dict[str, Any]) -> None:
    """Delete an input; the event keeps what it was (``was``, its API form)."""
    actor.need("edit")
    actor.event(f"{noun}.removed", obj, {"wall": wall.tag, "was": was})
    obj.delete()
