"""The one write path: every change the product knows is one function here.

The REST API, the walk's sync handlers and the crew/check pages all call these functions, so a
finding created, ticked, edited, fixed, verified, reopened or removed — or a photo stored, or a
conflict settled — is written the same way whichever door it came through: the same rows, the
same version bump, the same :class:`~qa.models.Event`.

Callers validate and convert input first (the serializers, in the job's units → SI) and wrap a call
in a transaction; each function checks the actor's right, the object's state and its version.
"""

from __future__ import annotations

from .conflicts import keep_conflict, resolve_conflict
from .context import Actor, Reject, Stale
from .field_inputs import remove_field_input, save_field_input
from .field_tests import add_field_test, remove_field_test
from .findings import create_finding, edit_finding, finding_step, remove_finding
from .photos import store_photo
from .seal_points import tick_seal_point

__all__ = [
    "Actor",
    "add_field_test",
    "Reject",
    "Stale",
    "create_finding",
    "edit_finding",
    "finding_step",
    "keep_conflict",
    "remove_field_input",
    "remove_field_test",
    "remove_finding",
    "resolve_conflict",
    "save_field_input",
    "store_photo",
    "tick_seal_point",
]
