"""URL converters. Object ids are at most 18 digits, so a longer number is a plain 404 at routing
instead of an integer overflow in the database driver."""

from __future__ import annotations

from django.urls import register_converter


class IdConverter:
    regex = "[0-9]{1,18}"

    def to_python(self, value: str) -> int:
        return int(value)

    def to_url(self, value) -> str:
        return str(int(value))


register_converter(IdConverter, "id")

#: The same rule for DRF router lookups.
ID_REGEX = IdConverter.regex
