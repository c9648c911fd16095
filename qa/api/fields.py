"""Serializer fields that take values in the job's units and store SI."""

from __future__ import annotations

import math

from rest_framework import serializers

from .. import units


class FiniteFloatField(serializers.FloatField):
    """A float that refuses NaN, infinities and absurd magnitudes with a message naming the rule."""

    default_error_messages = {
        "not_finite": "must be a finite number",
        "absurd": "is not a plausible value (more than {limit:g})",
    }

    def __init__(self, *, limit: float = 1e6, **kwargs):
        self.limit = limit
        super().__init__(**kwargs)

    def to_internal_value(self, data):
        if isinstance(data, bool):
            self.fail("invalid")
        value = super().to_internal_value(data)
        if not math.isfinite(value):
            self.fail("not_finite")
        if abs(value) > self.limit:
            self.fail("absurd", limit=self.limit)
        return value


class UnitField(FiniteFloatField):
    """A quantity in the job's units on the wire, SI inside.

    The job comes from the serializer context (``context["job"]``); the source attribute is
    the SI model field, e.g. ``UnitField("gap", source="width_m")``.
    """

    def __init__(self, quantity: str, **kwargs):
        self.quantity = quantity
        kwargs.setdefault("limit", 1e5)
        super().__init__(**kwargs)

    def _units(self) -> str:
        return self.context["job"].units

    def to_internal_value(self, data):
        value = super().to_internal_value(data)
        return units.to_si(value, self.quantity, self._units())

    def to_representation(self, value):
        if value is None:
            return None
        return round(units.from_si(value, self.quantity, self._units()), 6)
