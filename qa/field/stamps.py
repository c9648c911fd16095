"""Field-prediction cache stamps: one per wall, replaced when its rooms, junctions or field tests change.

Like the audit's stamps (:mod:`qa.audit.cache`), a stamp is a database row replaced in the same
transaction as the change; the prediction's key carries the audit's key (findings, openings, the wall,
its wall type), the job's building kind and this stamp.
"""

from __future__ import annotations

from django.db.models.signals import post_delete, post_save
from django.dispatch import receiver

from ..audit.cache import FIELD, bump, invalidate_later
from ..models import FieldTest, JunctionOverride, RoomPair


def invalidate_field(wall_id: int) -> None:
    """Make the cached field prediction of one wall unreachable."""
    bump(FIELD, [wall_id])


@receiver(post_save, sender=RoomPair)
@receiver(post_delete, sender=RoomPair)
@receiver(post_save, sender=JunctionOverride)
@receiver(post_delete, sender=JunctionOverride)
@receiver(post_save, sender=FieldTest)
@receiver(post_delete, sender=FieldTest)
def _field_input_changed(sender, instance, **kwargs):
    invalidate_later(FIELD, instance.wall_id)
