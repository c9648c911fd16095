"""Signal hooks: leak-audit cache invalidation.

A wall's audit depends on its findings, its openings, the wall itself (size, target, scheme) and its
wall type (curve, layers, thickness). Every save or delete of one of them replaces the matching
stamp (:mod:`qa.audit.cache`) in the same transaction, so the next read recomputes. Queryset
``update()`` and ``bulk_create()`` send no signals: code that uses them must call the invalidate
functions itself.
"""

from __future__ import annotations

from django.db.models.signals import post_delete, post_init, post_save
from django.dispatch import receiver

from .audit import cache
from .models import Finding, Opening, Wall, WallType

_later = cache.invalidate_later


@receiver(post_init, sender=Finding)
def _remember_wall(sender, instance, **kwargs):
    # A finding moved to another wall changes both walls. __dict__ avoids loading a deferred field.
    instance._audit_wall_id = instance.__dict__.get("wall_id")


@receiver(post_save, sender=Finding)
@receiver(post_delete, sender=Finding)
def _finding_changed(sender, instance, **kwargs):
    _later(cache.WALL, instance.wall_id)
    before = getattr(instance, "_audit_wall_id", None)
    if before and before != instance.wall_id:
        _later(cache.WALL, before)
    instance._audit_wall_id = instance.wall_id


@receiver(post_save, sender=Opening)
@receiver(post_delete, sender=Opening)
def _opening_changed(sender, instance, **kwargs):
    _later(cache.WALL, instance.wall_id)


@receiver(post_save, sender=Wall)
@receiver(post_delete, sender=Wall)
def _wall_changed(sender, instance, **kwargs):
    _later(cache.WALL, instance.pk)


@receiver(post_save, sender=WallType)
@receiver(post_delete, sender=WallType)
def _wall_type_changed(sender, instance, **kwargs):
    _later(cache.WALL_TYPE, instance.pk)
