"""Error answers: always JSON, always naming the field and the rule."""

from __future__ import annotations

from django.core.exceptions import PermissionDenied as DjangoPermissionDenied
from django.http import Http404
from rest_framework import exceptions
from rest_framework.views import exception_handler as drf_handler

from ..actions import Reject, Stale
from ..models.findings import TransitionError
from ..photos import PhotoError


def _field_error(exc: ValueError) -> dict:
    # Messages of our own domain errors start with "field: rule".
    text = str(exc)
    field, _, rule = text.partition(": ")
    return {field: [rule]} if rule else {"non_field_errors": [text]}


class Conflict409(exceptions.ValidationError):
    status_code = 409


def exception_handler(exc, context):
    if isinstance(exc, Stale):
        exc = Conflict409({"version": [f"is stale: the finding is now at version {exc.obj.version}"]})
    elif isinstance(exc, Reject):
        # A lifecycle step the status does not allow is a conflict with the object's state.
        exc = (Conflict409 if set(exc.errors) == {"status"} else exceptions.ValidationError)(exc.errors)
    elif isinstance(exc, (TransitionError, PhotoError)):
        exc = exceptions.ValidationError(_field_error(exc))
    elif isinstance(exc, DjangoPermissionDenied):
        exc = exceptions.PermissionDenied(str(exc) or None)
    elif isinstance(exc, Http404):
        exc = exceptions.NotFound(str(exc) or None)
    elif isinstance(exc, RecursionError):
        # A view with its own JSON parser met a body nested too deep: the client's fault, not ours.
        exc = exceptions.ParseError("JSON parse error - nested too deep")
    return drf_handler(exc, context)
