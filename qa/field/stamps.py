"""Field-prediction cache stamps: one per wall, replaced when its rooms, junctions or field tests change.

Like the audit's stamps (:mod:`qa.audit.cache`), a stamp lives in Django's shared cache, so every
process sees a change at once; the prediction's key carries the audit's key (findings, openings,
the wall, its wall type), the job's building kind and this stamp.
"""

from __future__ import annotations

import uuid

from django.core.cache import cache
from django.db.models.signals import post_delete, post_save
from django.dispatch import receiver

from ..audit.cache import invalidate_later
from ..models import FieldTest, JunctionOverride, RoomPair

_STAMP = "sealwalk:field:stamp:w:{}"


def invalidate_field(wall_id: int) -> None:
    """Make the cached field prediction of one wall unreachable."""
    cache.set(_STAMP.format(wall_id), uuid.uuid4().hex, None)


def field_stamps(wall_ids: list[int]) -> dict[int, str]:
    """The current stamp of each wall (a new one for a wall that has none; another process's wins)."""
    keys = {pk: _STAMP.format(pk) for pk in wall_ids}
    found = cache.get_many(list(keys.values()))
    missing = [k for k in keys.values() if k not in found]
    if missing:
        for k in missing:
            cache.add(k, uuid.uuid4().hex, None)
        found.update(cache.get_many(missing))
    return {pk: found.get(k, "-") for pk, k in keys.items()}


@receiver(post_save, sender=RoomPair)
@receiver(post_delete, sender=RoomPair)
@receiver(post_save, sender=JunctionOverride)
@receiver(post_delete, sender=JunctionOverride)
@receiver(post_save, sender=FieldTest)
@receiver(post_delete, sender=FieldTest)
def _field_input_changed(sender, instance, **kwargs):
    invalidate_later(invalidate_field, instance.wall_id)
