"""Crew pages show each item's own caution and what fixed looks like; errors sit beside their control.

The cautions are the project's (qa/cautions.py, field-practice reference §3); the rules checked are the
product's own (issue 12, items 3 and 7).
"""

from __future__ import annotations

import re

import pytest
from django.contrib.auth.models import User
from django.test import Client

from qa.cautions import CAUTIONS
from qa.demo import load_demo
from qa.models import Finding


@pytest.fixture
def demo_job(db):
    job, _ = load_demo(photos=False)
    return job


def _client(username: str) -> Client:
    c = Client()
    c.force_login(User.objects.get(username=username))
    return c


def _items(page: str) -> dict[int, str]:
    return {
        int(m[1]): m[2]
        for m in re.finditer(r'<li class="finding[^"]*" id="finding-(\d+)"(.*?)</li>', page, re.S)
    }


def test_electrical_crew_sees_the_energised_box_caution_on_every_box_item(demo_job):
    page = _client("electrical").get(f"/jobs/{demo_job.pk}/crew/").content.decode()
    items = _items(page)
    mine = Finding.objects.live().filter(job=demo_job, trade="electrical", status__in=["open", "reopened"])
    assert set(items) == {f.pk for f in mine} and items
    text = CAUTIONS["energised_boxes"].text.replace("'", "&#x27;")
    for f in mine.select_related("seal_point"):
        body = items[f.pk]
        if f.seal_point and f.seal_point.caution == "energised_boxes":
            assert 'data-caution="energised_boxes"' in body and text in body
        if f.seal_point and f.seal_point.correct:
            assert "Fixed looks like:" in body
    # Other trades' items are not on the page, and the page's cautions include the item's.
    assert not Finding.objects.filter(pk__in=items).exclude(trade="electrical").exists()
    assert CAUTIONS["energised_boxes"].title in page.split('id="c-h"')[1]


def test_reopen_without_a_note_is_refused_and_the_error_shows_beside_the_finding(demo_job):
    f = Finding.objects.live().filter(job=demo_job, status="fixed").first()
    c = _client("inspector")
    r = c.post(
        f"/jobs/{demo_job.pk}/findings/{f.pk}/check/",
        {"action": "reopen", "note": "  ", "next": f"/jobs/{demo_job.pk}/check/"},
        follow=True,
    )
    f.refresh_from_db()
    assert f.status == "fixed"
    page = r.content.decode()
    body = _items(page)[f.pk]
    assert 'class="field-error"' in body and "say why the finding is reopened" in body
    assert '<div class="notices"' not in page  # not at the top of the page
    # The form asks for the note before it is sent; verifying needs none.
    assert re.search(r'<textarea id="check-note-\d+" name="note"[^>]*required', body)
    assert re.search(r'value="verify"[^>]*formnovalidate', body)
