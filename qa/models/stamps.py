"""Stamps: the version mark of what a cached result was computed from.

A cached leak audit or field prediction is keyed by the stamps of its inputs (the wall, its wall type,
the wall's rooms and tests). A change replaces the stamp in the same database transaction as the change
itself, so another process sees the new stamp exactly when it sees the new data: never a new stamp with
old data, and a rolled-back change leaves the old stamp. See :mod:`qa.audit.cache`.
"""

from __future__ import annotations

from django.db import models


class Stamp(models.Model):
    scope = models.CharField(max_length=8, help_text='"wall", "type" (wall type) or "field".')
    ref = models.BigIntegerField(help_text="Primary key of the wall or wall type.")
    value = models.BigIntegerField(help_text="Random; replaced on every change.")

    class Meta:
        constraints = [models.UniqueConstraint(fields=["scope", "ref"], name="qa_stamp_scope_ref")]

    def __str__(self) -> str:
        return f"{self.scope} {self.ref}: {self.value}"
