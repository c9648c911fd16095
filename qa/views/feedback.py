"""Feedback where the action was: a message about one finding shows beside that finding's controls.

The write views tag a message with :func:`tag` (``extra_tags``); the page that the browser is sent
back to splits the queued messages with :func:`split`: those about a finding shown on the page go
beside it, every other message goes to the top of the page (nothing is lost when the finding has
left the list, e.g. after it was verified).
"""

from __future__ import annotations

from collections.abc import Iterable

from django.contrib import messages

_PREFIX = "at-finding-"
_FORM = "at-form-"


def tag(finding_pk) -> str:
    """``extra_tags`` value that ties a message to one finding."""
    return f"{_PREFIX}{finding_pk}"


def _finding_of(message) -> int | None:
    for word in (message.extra_tags or "").split():
        if word.startswith(_PREFIX) and word[len(_PREFIX) :].isdigit():
            return int(word[len(_PREFIX) :])
    return None


def split(request, shown: Iterable[int] = ()) -> tuple[list, dict[int, list]]:
    """(messages for the top of the page, {finding id: messages shown beside it})."""
    shown = set(shown)
    top: list = []
    beside: dict[int, list] = {}
    for m in messages.get_messages(request):
        fid = _finding_of(m)
        if fid in shown:
            beside.setdefault(fid, []).append(m)
        else:
            top.append(m)
    return top, beside


def form_tag(form: str) -> str:
    """``extra_tags`` value that ties a message to one form of a page (shown inside that form)."""
    return f"{_FORM}{form}"


def by_form(top: list, forms: Iterable[str]) -> tuple[list, dict[str, list]]:
    """Take the messages tied to ``forms`` out of ``top``: (the rest, {form: its messages})."""
    at: dict[str, list] = {f: [] for f in forms}
    rest: list = []
    for m in top:
        tags = (m.extra_tags or "").split()
        form = next((f for f in at if form_tag(f) in tags), None)
        (at[form] if form is not None else rest).append(m)
    return rest, at
