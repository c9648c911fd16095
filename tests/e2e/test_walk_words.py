"""The walk and the desktop show the same number under the same word: "as found" is the wall with
every finding open, "current" counts only the fixes the inspector verified; fix-first gains say
whether they are "in order" or "alone"."""

from __future__ import annotations

import pytest

from tests.conftest import login
from tests.e2e.test_walk_offline import go_offline, open_walk, open_wall

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


def test_walk_wall_list_shows_the_desktop_verdict_and_marks_it_last_known(live_server, browser, world):
    """A wall with every finding reported fixed but none verified reads "Below target by N" on the
    desktop; the walk's wall list says the same (no open chip must not read as done), and offline,
    with a change kept on this phone, the verdict is marked as the last known one."""
    from qa.audit.verdicts import verdicts_for_walls
    from qa.models import Finding, Wall

    common = {"job": world.job, "wall": world.wall, "created_by": world.inspector, "face": "through"}
    Finding.objects.create(kind="hole", diameter_m=0.06, trade="plumbing", status="fixed", **common)
    walls = list(Wall.objects.filter(job=world.job).select_related("wall_type"))
    desk = verdicts_for_walls(walls)

    ctx = browser.new_context(viewport={"width": 390, "height": 844})
    page = ctx.new_page()
    login(page, live_server.url, "insp")
    open_walk(page, live_server.url, world.job.id)
    for w in walls:
        v = desk[w.pk]
        chip = page.locator(f"[data-wall='{w.tag}'] .chip.verdict")
        words = f"{v['word']} by {v['shortfall']}" if v["state"] == "below" else v["word"]
        assert chip.inner_text() == words
        assert f"tone-{v['tone']}" in chip.get_attribute("class")
    assert desk[world.wall.pk]["state"] == "below", "the fixed hole still costs until it is verified"
    row = page.locator(f"[data-wall='{world.wall.tag}']")
    assert row.locator(".chip.warn").count() == 0, "no finding is open"
    assert "verdict-bad" in row.get_attribute("class"), "the stripe follows the verdict, not the open count"
    page.screenshot(path="test-artifacts/walk-wall-list-verdicts-phone.png")

    go_offline(ctx, page)
    open_wall(page, world.wall.tag)
    page.locator("[data-points] .seal .pass").first.click()  # a tick kept on this phone, not counted yet
    page.goto(f"{live_server.url}/walk/#/j/{world.job.id}")
    page.wait_for_selector("[data-wall-list]")
    marked = page.locator(f"[data-wall='{world.wall.tag}'] .chip.verdict")
    assert marked.inner_text().endswith("· last known") and "last-known" in marked.get_attribute("class")
    ctx.close()
