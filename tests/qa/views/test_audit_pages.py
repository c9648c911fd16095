"""Leak-audit pages: wall, job, crew list, mark fixed, check (verify/reopen), report and sign-off.

Ladder per page: happy path, validation, another job's object -> 404, wrong method -> 405, each role,
then what the database holds. Roles from DESIGN.md: owner signs; inspector verifies; crew marks fixed
only their own trade; non-member 404; member without the right 403; anonymous -> sign-in.
"""

from __future__ import annotations

import io

import pytest
from django.test import Client
from PIL import Image

from qa.models import Event, Finding, Photo


def client_for(user=None) -> Client:
    c = Client()
    if user is not None:
        c.force_login(user)
    return c


def jpeg() -> io.BytesIO:
    out = io.BytesIO()
    Image.new("RGB", (320, 240), (150, 120, 90)).save(out, "JPEG")
    out.seek(0)
    out.name = "fix.jpg"
    return out


@pytest.fixture
def finding(world):
    return Finding.objects.create(
        job=world.job,
        wall=world.wall,
        kind="slit",
        face="through",
        trade="electrical",
        width_m=0.008,
        length_m=1.5,
        created_by=world.inspector,
        seal_point=world.wall.seal_points.first(),
    )


def urls(world, finding):
    j, w, f = world.job.pk, world.wall.pk, finding.pk
    return {
        "job": f"/jobs/{j}/",
        "wall": f"/jobs/{j}/walls/{w}/",
        "crew": f"/jobs/{j}/crew/",
        "check": f"/jobs/{j}/check/",
        "report": f"/jobs/{j}/report/",
        "pdf": f"/jobs/{j}/report/handover.pdf",
        "csv": f"/jobs/{j}/report/punch-list.csv",
        "fix": f"/jobs/{j}/findings/{f}/fixed/",
        "verify": f"/jobs/{j}/findings/{f}/check/",
        "sign": f"/jobs/{j}/report/sign/",
    }


# page -> expected status per role (GET)
MATRIX = {
    "job": {"inspector": 200, "crew": 200, "owner": 200, "outsider": 404},
    "wall": {"inspector": 200, "crew": 200, "owner": 200, "outsider": 404},
    "crew": {"inspector": 200, "crew": 200, "owner": 403, "outsider": 404},
    "check": {"inspector": 200, "crew": 403, "owner": 403, "outsider": 404},
    "report": {"inspector": 200, "crew": 200, "owner": 200, "outsider": 404},
    "pdf": {"inspector": 200, "crew": 200, "owner": 200, "outsider": 404},
    "csv": {"inspector": 200, "crew": 200, "owner": 200, "outsider": 404},
}


@pytest.mark.parametrize("page", sorted(MATRIX))
def test_page_roles(world, finding, page):
    url = urls(world, finding)[page]
    for role, user in world.users().items():
        if role in MATRIX[page]:
            assert client_for(user).get(url).status_code == MATRIX[page][role], (page, role)
    anon = client_for().get(url)
    assert anon.status_code == 302 and "/login/" in anon["Location"]


def test_wall_page_shows_audit_chart_and_caution(world, finding):
    r = client_for(world.owner).get(urls(world, finding)["wall"])
    html = r.content.decode()
    assert 'class="tl-chart"' in html and "Frequency (Hz)" in html and "Transmission loss (dB)" in html
    assert "STC 50" in html and "Estimates, not a field test" in html
    assert f'data-finding="{finding.pk}"' in html
    assert " style=" not in html  # CSP style-src 'self' blocks inline style attributes
    assert "<script>" not in html


def test_job_page_filters_and_fix_first(world, finding):
    c = client_for(world.owner)
    html = c.get(urls(world, finding)["job"]).content.decode()
    assert 'data-wall-tag="2-01"' in html and f'data-finding="{finding.pk}"' in html
    assert 'data-below-count="1"' in html
    html = c.get(urls(world, finding)["job"] + "?trade=plumbing").content.decode()
    assert 'data-wall-tag="2-01"' not in html
    html = c.get(urls(world, finding)["job"] + "?trade=electrical&below=1&status=open").content.decode()
    assert 'data-wall-tag="2-01"' in html


def test_crew_marks_own_trade_fixed_with_photo(world, finding):
    r = client_for(world.electrician).post(
        urls(world, finding)["fix"], {"note": "Putty pad fitted", "photo": jpeg()}
    )
    assert r.status_code == 302
    finding.refresh_from_db()
    assert (
        finding.status == "fixed"
        and finding.fixed_by == world.electrician
        and finding.fix_note == "Putty pad fitted"
    )
    photo = Photo.objects.get(finding=finding)
    assert photo.purpose == "fix" and photo.uploaded_by == world.electrician
    verbs = set(Event.objects.filter(job=world.job).values_list("verb", flat=True))
    assert {"finding.fixed", "photo.added"} <= verbs


def test_crew_of_other_trade_and_owner_cannot_mark_fixed(world, finding):
    assert client_for(world.drywaller).post(urls(world, finding)["fix"], {"note": "x"}).status_code == 403
    assert client_for(world.owner).post(urls(world, finding)["fix"], {"note": "x"}).status_code == 403
    assert client_for(world.outsider).post(urls(world, finding)["fix"], {"note": "x"}).status_code == 404
    finding.refresh_from_db()
    assert finding.status == "open"


def test_fix_rejects_bad_photo_and_keeps_finding_open(world, finding):
    bad = io.BytesIO(b"not an image")
    bad.name = "x.jpg"
    r = client_for(world.electrician).post(
        urls(world, finding)["fix"], {"note": "", "photo": bad}, follow=True
    )
    assert "image:" in r.content.decode()
    finding.refresh_from_db()
    assert finding.status == "open" and not Photo.objects.exists()


def test_fix_view_is_post_only(world, finding):
    assert client_for(world.electrician).get(urls(world, finding)["fix"]).status_code == 405
    assert client_for(world.inspector).get(urls(world, finding)["verify"]).status_code == 405
    assert client_for(world.owner).get(urls(world, finding)["sign"]).status_code == 405


def test_inspector_verifies_and_reopens(world, finding):
    finding.mark_fixed(world.electrician)
    url = urls(world, finding)["verify"]
    assert client_for(world.electrician).post(url, {"action": "verify"}).status_code == 403
    assert client_for(world.owner).post(url, {"action": "verify"}).status_code == 403
    r = client_for(world.inspector).post(url, {"action": "verify", "photo": jpeg()})
    assert r.status_code == 302
    finding.refresh_from_db()
    assert finding.status == "verified" and Photo.objects.get(finding=finding).purpose == "verify"
    # Reopen needs a reason.
    client_for(world.inspector).post(url, {"action": "reopen", "note": ""})
    finding.refresh_from_db()
    assert finding.status == "verified"
    client_for(world.inspector).post(url, {"action": "reopen", "note": "Bead cracked at the corner"})
    finding.refresh_from_db()
    assert finding.status == "reopened"
    html = client_for(world.owner).get(urls(world, finding)["wall"]).content.decode()
    assert "finding verified" in html and "finding reopened" in html and "Bead cracked" in html


def test_verify_of_open_finding_is_refused(world, finding):
    r = client_for(world.inspector).post(urls(world, finding)["verify"], {"action": "verify"}, follow=True)
    assert "cannot be verified" in r.content.decode()
    finding.refresh_from_db()
    assert finding.status == "open"


def test_unsafe_next_is_ignored(world, finding):
    r = client_for(world.electrician).post(urls(world, finding)["fix"], {"next": "https://evil.example/x"})
    assert r["Location"].startswith("/jobs/")


def test_owner_signs_and_a_later_change_makes_it_stale(world, finding):
    c = client_for(world.owner)
    assert client_for(world.inspector).post(urls(world, finding)["sign"]).status_code == 403
    # An open item and a wall below target (its seal points unchecked) are outstanding: the page
    # lists them, with the wall's coverage, and asks to confirm.
    page = c.get(urls(world, finding)["report"]).content.decode()
    assert 'data-out="open"' in page and 'data-out="below"' in page and 'name="confirm"' in page
    assert f"0 of {world.wall.seal_points.count()} seal points checked" in page
    r = c.post(urls(world, finding)["sign"], follow=True)
    assert not Event.objects.filter(verb="report.signed").exists()
    body = r.content.decode()
    # The error sits in the sign-off form, beside the control, not in the notices at the top.
    form = body[body.index('class="stack sign-form"') :]
    assert "confirm: tick the box" in form[: form.index("</form>")]
    assert c.post(urls(world, finding)["sign"], {"confirm": "yes"}).status_code == 302
    ev = Event.objects.get(verb="report.signed")
    assert ev.data["confirmed_outstanding"] is True
    assert ev.data["outstanding"]["open"] == [finding.pk]
    assert ev.data["outstanding"]["below_target"] == [world.wall.tag]
    assert ev.actor == world.owner and len(ev.data["sha256"]) == 64
    assert 'data-signoff="current"' in c.get(urls(world, finding)["report"]).content.decode()
    finding.mark_fixed(world.electrician, "done")
    assert 'data-signoff="stale"' in c.get(urls(world, finding)["report"]).content.decode()
    # Signing against a hash that is no longer current is refused.
    c.post(urls(world, finding)["sign"], {"sha256": ev.data["sha256"], "confirm": "yes"})
    assert Event.objects.filter(verb="report.signed").count() == 1
