"""The walk and the desktop show the same number under the same word: "as found" is the wall with
every finding open, "current" counts only the fixes the inspector verified; fix-first gains say
whether they are "in order" or "alone"."""

from __future__ import annotations

import pytest

from tests.conftest import login
from tests.e2e.test_walk_offline import open_walk, open_wall

pytestmark = [pytest.mark.e2e, pytest.mark.django_db(transaction=True)]


def test_walk_audit_panel_uses_the_desktop_words_for_the_same_numbers(live_server, browser, world):
    from qa.audit import audit_summary
    from qa.audit.verdicts import RATINGS
    from qa.models import Finding

    common = {"job": world.job, "wall": world.wall, "created_by": world.inspector, "face": "through"}
    Finding.objects.create(kind="hole", diameter_m=0.05, trade="electrical", status="verified", **common)
    Finding.objects.create(kind="slit", width_m=0.0005, length_m=0.3, trade="drywall", **common)
    summary = audit_summary(world.wall)
    assert summary["walked"] != summary["as_found"], "the case needs as found and current to differ"

    ctx = browser.new_context(viewport={"width": 390, "height": 844})
    page = ctx.new_page()
    login(page, live_server.url, "insp")
    open_walk(page, live_server.url, world.job.id)
    open_wall(page, world.wall.tag)
    page.click("[data-audit] summary")
    shown = page.eval_on_selector_all(
        "[data-audit] dl.ratings > div",
        "els => els.map(e => [e.querySelector('dt').textContent, e.querySelector('dd').textContent])",
    )
    ratings = dict(shown)
    assert ratings[RATINGS["as_found"].word] == str(summary["walked"])
    assert ratings[RATINGS["current"].word] == str(summary["as_found"])
    assert "in order" in page.inner_text("[data-audit] .fix-first")
    # Colour means the same as on the desktop: only a rating short of its target is red.
    for cls, value in (("asfound", summary["walked"]), ("current", summary["as_found"])):
        below = "below" in page.get_attribute(f"[data-audit] dl.ratings > div.{cls}", "class")
        assert below == (value < summary["target"])
    # The predicted field rating now, as the job view shows it, with the caution that goes with it.
    from qa.field.prediction import field_for_walls
    from qa.field.presentation import FIELD_CAUTION, field_summary

    field = field_summary(field_for_walls([world.wall], world.job)[world.wall.pk])
    line = page.locator("[data-audit] .field-line")
    assert line.get_attribute("data-field-now") == str(field["now"])
    assert f"{field['descriptor']} {field['now']}" in line.inner_text()
    assert FIELD_CAUTION in line.inner_text()
    page.screenshot(path="test-artifacts/walk-audit-field-phone.png", full_page=True)
    ctx.close()
