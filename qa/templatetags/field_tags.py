"""Template tags of the field rating: the wall page's panel gets its data without a view change."""

from __future__ import annotations

from django import template

from ..field.presentation import wall_field_context

register = template.Library()


@register.simple_tag
def wall_field(wall, job) -> dict:
    """The context of ``templates/qa/field/_wall_field.html`` for one wall."""
    return wall_field_context(wall, job)
