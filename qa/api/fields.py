"""Serializer fields that take values in the job's units and store SI."""

from __future__ import annotations

import math

from rest_framework import serializers

from .. import units


class FiniteFloatField(serializers.FloatField):
    """A float that refuses NaN, infinities, booleans and absurd magnitudes with a message naming the rule."""

    default_error_messages = {
        "not_finite": "must be a finite number",
        "absurd": "is not a plausible value (more than {limit:g})",
    }

    def __init__(self, *, limit: float = 1e6, **kwargs):
        self.limit = limit
        super().__init__(**kwargs)

    def to_internal_value(self, data) -> float:
        if isinstance(data, bool):  # float(True) == 1.0 would pass silently
            self.fail("invalid")
        value = super().to_internal_value(data)
        if not math.isfinite(value):
            self.fail("not_finite")
        if abs(value) > self.limit:
            self.fail("absurd", limit=self.limit)
        return value


def in_api_units(value: float | None, quantity: str, job_units: str) -> float | None:
    """An SI value as the API writes it: in the job's units, to six decimals (None stays None)."""
    return None if value is None else round(units.from_si(value, quantity, job_units), 6)


class UnitField(FiniteFloatField):
    """A quantity in the job's units on the wire, SI inside.

    The job comes from the serializer context (``context["job"]``); the source attribute is
    the SI model field, e.g. ``UnitField("gap", source="width_m")``. ``min_value`` and
    ``max_value`` are SI bounds; a value outside them is refused with the bound shown in the
    job's units (an imperial user must not read "at least 0.1" about a length typed in feet).
    """

    default_error_messages = {
        "below": "must be at least {bound}",
        "above": "must be at most {bound}",
    }

    def __init__(self, quantity: str, **kwargs):
        self.quantity = quantity
        # Taken out of DRF's hands: its validators would compare SI values but print bare numbers.
        self.min_si = kwargs.pop("min_value", None)
        self.max_si = kwargs.pop("max_value", None)
        kwargs.setdefault("limit", 1e5)
        super().__init__(**kwargs)

    def _units(self) -> str:
        return self.context["job"].units

    def to_internal_value(self, data) -> float:
        value = units.to_si(super().to_internal_value(data), self.quantity, self._units())
        if self.min_si is not None and value < self.min_si:
            self.fail("below", bound=units.fmt(self.min_si, self.quantity, self._units(), digits=3))
        if self.max_si is not None and value > self.max_si:
            self.fail("above", bound=units.fmt(self.max_si, self.quantity, self._units(), digits=3))
        return value

    # The stubs give FloatField a str representation; DRF's FloatField (and this field) return a number.
    def to_representation(self, value) -> float | None:  # type: ignore[override]
        return in_api_units(value, self.quantity, self._units())
