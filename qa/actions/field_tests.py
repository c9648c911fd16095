"""Field tests entered for a wall: the one write path of the API and the wall page's form."""

from __future__ import annotations

from typing import Any

from ..models import FieldTest, Wall
from .context import Actor


def add_field_test(actor: Actor, wall: Wall, fields: dict[str, Any]) -> FieldTest:
    """Store a field test from a FieldTestSerializer's ``validated_data`` (bands cleaned, results
    computed by the engine) with who entered it, and its event."""
    actor.need("edit")
    test = FieldTest.objects.create(wall=wall, created_by=actor.user, **fields)
    actor.event("field_test.created", test, {"wall": wall.tag, "standard": test.standard})
    return test


def remove_field_test(actor: Actor, test: FieldTest) -> None:
    """Take a field test out of the record (kept, marked removed, as findings are)."""
    actor.need("edit")
    test.removed = True
    test.save(update_fields=["removed"])
    actor.event("field_test.removed", test, {"wall": test.wall.tag})
