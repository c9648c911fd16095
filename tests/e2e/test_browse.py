"""Browse the demo job in a real headless Chromium at phone size: sign in as the demo inspector,
open the job, open a wall, see its seal points. Then the same pages at 360 px must not scroll
sideways (DESIGN.md, "works at 360 px wide")."""

from __future__ import annotations

import re

import pytest

from tests.conftest import login

pytestmark = [pytest.mark.e2e, pytest.mark.django_db(transaction=True)]

DEMO_PASSWORD = "walk-the-walls"


@pytest.fixture
def demo_job(transactional_db):
    from qa.demo import load_demo

    job, _ = load_demo(photos=False)
    return job


def test_inspector_browses_to_a_walls_seal_points(live_server, phone, artifacts, demo_job):
    from qa.models import SealPoint, Wall

    wall = Wall.objects.get(job=demo_job, tag="2-D1")
    labels = list(
        SealPoint.objects.filter(wall=wall, removed=False)
        .order_by("position")
        .values_list("label", flat=True)
    )
    page = phone.new_page()
    errors: list[str] = []
    page.on("pageerror", lambda exc: errors.append(str(exc)))

    login(page, live_server.url, "inspector", DEMO_PASSWORD)
    assert page.url.rstrip("/") == live_server.url, page.url  # signed in, on the job list
    page.get_by_role("link", name=re.compile("Harbourline Residences")).first.click()
    page.wait_for_url(re.compile(rf"/jobs/{demo_job.id}/$"))
    body = page.inner_text("body")
    assert "Harbourline Residences" in body and "2-D1" in body and "4-L1" in body

    page.get_by_role("link", name=re.compile(r"\b2-D1\b")).first.click()
    page.wait_for_url(re.compile(rf"/jobs/{demo_job.id}/walls/{wall.id}/$"))
    text = page.inner_text("body")
    missing = [label for label in labels if label not in text]
    assert labels and not missing, f"seal points not shown: {missing}"
    first = page.get_by_text(labels[0], exact=True).first
    first.scroll_into_view_if_needed()
    assert first.is_visible()
    page.screenshot(path=str(artifacts / "browse-wall-390.png"), full_page=False)
    assert errors == []


@pytest.mark.parametrize("width", [360])
def test_pages_do_not_scroll_sideways_at_360_px(live_server, browser, artifacts, demo_job, width):
    from qa.models import Wall

    ctx = browser.new_context(
        viewport={"width": width, "height": 780}, device_scale_factor=2, is_mobile=True, has_touch=True
    )
    ctx.set_default_timeout(15000)
    try:
        page = ctx.new_page()
        page.goto(live_server.url + "/login/")
        overflow = {}
        overflow["login"] = page.evaluate("() => document.documentElement.scrollWidth")
        login(page, live_server.url, "inspector", DEMO_PASSWORD)
        corridor = Wall.objects.get(job=demo_job, tag="2-CN")  # the longest labels: doors and corridor
        for name, path in [
            ("jobs", "/"),
            ("job", f"/jobs/{demo_job.id}/"),
            ("wall", f"/jobs/{demo_job.id}/walls/{corridor.id}/"),
            ("docs", "/api/docs/"),
        ]:
            page.goto(live_server.url + path)
            overflow[name] = page.evaluate("() => document.documentElement.scrollWidth")
            if name == "wall":
                page.screenshot(path=str(artifacts / f"browse-wall-{width}.png"), full_page=True)
        too_wide = {k: v for k, v in overflow.items() if v > width}
        assert not too_wide, f"pages wider than {width} px: {too_wide}"
    finally:
        ctx.close()
