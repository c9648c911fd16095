"""End to end in headless Chromium: the owner reads the audit and the report, a crew lead reports a fix
with a photo, the inspector verifies it, and the wall's current rating rises.

Runs at a phone viewport (390 x 844) and at desktop width (1280 x 800); screenshots of every view go to
test-artifacts/ for people to look at.
"""

from __future__ import annotations

import io
import re

import pytest

from tests.qa.pdftext import pdf_strings

pytestmark = [pytest.mark.e2e, pytest.mark.slow]

DEMO_PASSWORD = "walk-the-walls"  # the demo's invented users (qa/demo.py)
DESKTOP = {"viewport": {"width": 1280, "height": 800}}
# The phone of tests/conftest.py; tests/e2e/conftest.py now shadows the bare name "conftest".
PHONE = {
    "viewport": {"width": 390, "height": 844},
    "device_scale_factor": 2,
    "is_mobile": True,
    "has_touch": True,
}


def jpeg_bytes(colour=(120, 140, 160)) -> bytes:
    from PIL import Image

    out = io.BytesIO()
    Image.new("RGB", (640, 480), colour).save(out, "JPEG", quality=80)
    return out.getvalue()


def login(page, base_url: str, username: str) -> None:
    page.goto(base_url + "/login/")
    page.fill("#id_username", username)
    page.fill("#id_password", DEMO_PASSWORD)
    page.click("button[type=submit]")
    page.wait_for_load_state()


def pick_finding(job, trade: str):
    """An open finding of ``trade`` that is step 1 of its wall's fix-first order and buys points."""
    from qa.audit import audits_for_job, fix_steps
    from qa.models import Finding

    audits = audits_for_job(job)
    best = None
    for f in Finding.objects.live().filter(job=job, trade=trade, status="open").select_related("wall"):
        st = fix_steps(audits[f.wall_id]).get(f.pk)
        if st and st["step"] == 1 and st["buys"] > 0 and (best is None or st["buys"] > best[1]):
            best = (f, st["buys"])
    assert best is not None, f"the demo has no open {trade} finding that buys points first"
    return best[0]


@pytest.fixture
def demo_job(transactional_db):
    from qa.demo import load_demo

    job, _created = load_demo(photos=False)
    return job


@pytest.mark.parametrize("size", ["phone", "desktop"])
def test_owner_crew_inspector_flow(size, demo_job, browser, live_server, artifacts, tmp_path):
    from qa.models import Event, Finding

    ctx = browser.new_context(**(PHONE if size == "phone" else DESKTOP), accept_downloads=True)
    ctx.set_default_timeout(20000)
    page = ctx.new_page()
    errors = []
    page.on("console", lambda m: errors.append(m.text) if m.type == "error" else None)
    base, job = live_server.url, demo_job

    def shot(name):
        page.screenshot(path=str(artifacts / f"audit-{name}-{size}.png"), full_page=True)

    # The owner: walls below target and the fix-first list.
    login(page, base, "owner")
    page.goto(f"{base}/jobs/{job.id}/")
    below = int(page.locator("[data-below-count]").get_attribute("data-below-count"))
    assert below > 0
    assert page.locator("tr.below").count() == below
    assert page.locator(".fixlist li").count() > 0
    assert page.get_by_role("heading", name=re.compile("Fix first")).is_visible()
    shot("job")
    page.goto(f"{base}/jobs/{job.id}/?below=1&trade=drywall")
    shot("job-filtered")
    assert page.locator("tr.below").count() == page.locator(".walls-table tbody tr").count()

    finding = pick_finding(job, "drywall")
    wall = finding.wall
    page.goto(f"{base}/jobs/{job.id}/walls/{wall.id}/")
    assert page.locator("svg.tl-chart").is_visible()
    assert page.get_by_text("Frequency (Hz)").count() >= 1
    before = int(page.locator("[data-current-rating]").get_attribute("data-current-rating"))
    shot("wall")

    page.goto(f"{base}/jobs/{job.id}/report/")
    with page.expect_download() as dl:
        page.click("[data-download=pdf]")
    pdf = open(dl.value.path(), "rb").read()
    assert pdf.startswith(b"%PDF")
    text = pdf_strings(pdf)
    assert "Hand-over report: Harbourline Residences" in text
    assert wall.tag in text and finding.get_kind_display() in text
    assert "Estimates, not field tests" in text
    # The demo still has open items and unwalked walls: they are listed, and signing needs a confirmation.
    assert page.locator("[data-outstanding]").is_visible()
    page.click("text=Sign off this report")
    assert page.locator("[data-signoff=none]").is_visible()  # the browser refused the unticked form
    page.check("input[name=confirm]")
    page.click("text=Sign off this report")
    assert page.locator("[data-signoff=current]").is_visible()
    shot("report")
    signed = Event.objects.filter(job=job, verb="report.signed").latest("id")
    assert len(signed.data["sha256"]) == 64
    assert signed.data["confirmed_outstanding"] is True and signed.data["outstanding"]["open"]

    # A drywall crew lead marks the finding fixed with a photo.
    ctx.clear_cookies()
    login(page, base, "drywall")
    page.goto(f"{base}/jobs/{job.id}/crew/")
    shot("crew")
    item = page.locator(f"#finding-{finding.id}")
    photo = tmp_path / "fix.jpg"
    photo.write_bytes(jpeg_bytes())
    item.locator("input[type=file]").set_input_files(str(photo))
    item.locator("textarea").fill("Bead of acoustical sealant along the track, tooled.")
    # Wait for the form's answer: the live server shares the test's database connection, so the test
    # must not read the record while the server is still writing it.
    with page.expect_navigation():
        item.get_by_role("button", name="Mark fixed").click()
    page.wait_for_load_state()
    assert page.locator(".notice.success").is_visible()
    finding.refresh_from_db()
    assert finding.status == "fixed" and finding.photos.filter(purpose="fix").count() == 1

    # The inspector verifies it with a photo; the wall's current rating rises.
    ctx.clear_cookies()
    login(page, base, "inspector")
    page.goto(f"{base}/jobs/{job.id}/check/")
    shot("check")
    item = page.locator(f"#finding-{finding.id}")
    photo2 = tmp_path / "check.jpg"
    photo2.write_bytes(jpeg_bytes((90, 100, 80)))
    item.locator("input[type=file]").set_input_files(str(photo2))
    # Wait for the form's answer: the live server shares the test's database connection, so the test
    # must not read the record while the server is still writing it.
    with page.expect_navigation():
        item.get_by_role("button", name="Verify fixed").click()
    page.wait_for_load_state()
    finding.refresh_from_db()
    assert finding.status == "verified"
    page.goto(f"{base}/jobs/{job.id}/walls/{wall.id}/")
    after = int(page.locator("[data-current-rating]").get_attribute("data-current-rating"))
    assert after > before
    timeline = page.locator(".timeline").inner_text()
    assert "finding fixed" in timeline and "finding verified" in timeline
    shot("wall-after")

    # The owner sees that the signed report is now out of date.
    ctx.clear_cookies()
    login(page, base, "owner")
    page.goto(f"{base}/jobs/{job.id}/report/")
    assert page.locator("[data-signoff=stale]").is_visible()
    shot("report-stale")
    assert Finding.objects.filter(pk=finding.pk, status="verified").exists()
    assert not [e for e in errors if "Content Security Policy" in e], errors
    ctx.close()
