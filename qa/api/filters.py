"""Query-string filters shared by the list endpoints.

A filter value that cannot match anything (an id that is not a number of at most 18 digits, text with
a NUL byte, which PostgreSQL refuses to compare) gives an empty list, never a server error.
"""

from __future__ import annotations

import re

from django.db.models import QuerySet
from rest_framework.pagination import LimitOffsetPagination

from ..converters import ID_REGEX

_ID = re.compile(f"^{ID_REGEX}$")
MAX_TEXT = 200


def apply_filters(queryset: QuerySet, params, spec: dict[str, tuple[str, str]]) -> QuerySet:
    """Filter ``queryset`` by each query parameter named in ``spec``: {param: (field lookup, "id"|"text")}."""
    for param, (lookup, kind) in spec.items():
        value = params.get(param)
        if not value:
            continue
        usable = bool(_ID.match(value)) if kind == "id" else ("\x00" not in value and len(value) <= MAX_TEXT)
        queryset = queryset.filter(**{lookup: value}) if usable else queryset.none()
    return queryset


class Pages(LimitOffsetPagination):
    """?limit=&offset= pages; limits are capped so no value overflows the database's integers."""

    default_limit = 100
    max_limit = 1000
    MAX_OFFSET = 10**12

    def get_offset(self, request):
        return min(super().get_offset(request), self.MAX_OFFSET)
