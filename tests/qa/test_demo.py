"""``manage.py demo``: the invented demo job loads once, with the size the issue asks for."""

from __future__ import annotations

import io

import pytest
from django.core.management import call_command
from PIL import Image

from qa.models import Event, Finding, Job, Member, Opening, Photo, SealPoint, Wall, WallType

pytestmark = pytest.mark.django_db(transaction=False)

JOB = "Harbourline Residences"


def counts() -> dict:
    return {
        m.__name__: m.objects.count()
        for m in (Job, Member, WallType, Wall, Opening, SealPoint, Finding, Photo, Event)
    }


def demo(*extra: str) -> str:
    out = io.StringIO()
    call_command("demo", "--no-serve", *extra, stdout=out)
    return out.getvalue()


def test_demo_loads_once_and_twice_changes_nothing():
    first = demo("--no-photos")
    after_first = counts()
    second = demo("--no-photos")
    assert counts() == after_first
    assert "Loaded" in first and "Already loaded" in second
    assert "inspector" in first and "walk-the-walls" in first

    job = Job.objects.get(name=JOB)
    walls = Wall.objects.filter(job=job)
    assert walls.count() == 24
    assert walls.values("level").distinct().count() >= 3
    assert WallType.objects.filter(job=job).count() >= 4
    assert Opening.objects.filter(wall__job=job, kind="door").exists()
    findings = Finding.objects.filter(job=job)
    assert findings.count() >= 35
    assert findings.values("trade").distinct().count() >= 5
    assert set(findings.values_list("status", flat=True)) >= {"open", "fixed", "verified"}
    assert set(Member.objects.filter(job=job).values_list("role", flat=True)) == {
        "inspector",
        "crew",
        "owner",
    }
    # Every finding sits on a wall of the job and, when tied to a seal point, to one of that wall.
    for f in findings.select_related("seal_point"):
        assert f.seal_point is None or f.seal_point.wall_id == f.wall_id
    # Every wall type has a design rating from its predicted curve.
    assert all(wt.design_rating for wt in WallType.objects.filter(job=job))
    assert Photo.objects.count() == 0


@pytest.mark.slow
def test_demo_with_photos():
    demo()
    photos = Photo.objects.filter(job__name=JOB)
    assert photos.count() >= 10
    photo = photos.first()
    with photo.image.open("rb") as fh:
        img = Image.open(io.BytesIO(fh.read()))
        assert img.format == "JPEG" and img.size == (photo.width, photo.height)
    assert photo.captured_at is not None and photo.finding is not None
