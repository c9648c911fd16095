"""Unfinished walk uploads are bounded per person and per job (issue: hardening, round two, item 6).

A crew member once opened 200 uploads of 20 MB each in 14 s, all accepted. The limits are settings
(UPLOAD_MAX_OPEN_PER_USER, UPLOAD_MAX_OPEN_PER_JOB, UPLOAD_MAX_PENDING_BYTES_PER_USER,
UPLOAD_MAX_PENDING_BYTES_PER_JOB); past one, opening answers 429 with the field and the setting's
name, nothing is stored, and the device may go on once its open uploads finish. Sizes counted are
the ones declared when opening (the bytes wait in the database until the upload finishes).
"""

from __future__ import annotations

import hashlib
import uuid

import pytest

from qa.models import Finding, PhotoUpload

pytestmark = pytest.mark.django_db


@pytest.fixture
def findings(world):
    return {
        trade: Finding.objects.create(
            job=world.job,
            wall=world.wall,
            kind="hole",
            diameter_m=0.02,
            trade=trade,
            created_by=world.inspector,
        )
        for trade in ("electrical", "drywall")
    }


def open_one(client, world, finding, total=1000):
    body = {
        "id": str(uuid.uuid4()),
        "finding": str(finding.client_id),
        "total_bytes": total,
        "sha256": hashlib.sha256(b"x").hexdigest(),
    }
    return client.post(f"/api/jobs/{world.job.id}/uploads/", body, format="json"), body


def test_open_uploads_per_person_are_limited(world, api, findings, settings):
    settings.UPLOAD_MAX_OPEN_PER_USER = 3
    client = api(world.electrician)
    bodies = []
    for _ in range(3):
        r, body = open_one(client, world, findings["electrical"])
        assert r.status_code == 201
        bodies.append(body)
    r, _ = open_one(client, world, findings["electrical"])
    assert r.status_code == 429
    assert "UPLOAD_MAX_OPEN_PER_USER" in r.json()["uploads"][0] and "at most 3" in r.json()["uploads"][0]
    assert PhotoUpload.objects.count() == 3
    # Asking again for an upload already open is not a new one: it answers its offset.
    again = client.post(f"/api/jobs/{world.job.id}/uploads/", bodies[0], format="json")
    assert again.status_code == 200 and again.json()["offset"] == 0
    # Another person is not held back by this one's uploads.
    assert open_one(api(world.drywaller), world, findings["drywall"])[0].status_code == 201
    # One finished (or purged) frees a place.
    PhotoUpload.objects.filter(pk=bodies[0]["id"]).delete()
    assert open_one(client, world, findings["electrical"])[0].status_code == 201


def test_pending_bytes_per_person_are_limited(world, api, findings, settings):
    settings.UPLOAD_MAX_PENDING_BYTES_PER_USER = 2500
    client = api(world.electrician)
    assert open_one(client, world, findings["electrical"], total=2000)[0].status_code == 201
    r, _ = open_one(client, world, findings["electrical"], total=501)
    assert r.status_code == 429 and "UPLOAD_MAX_PENDING_BYTES_PER_USER" in r.json()["total_bytes"][0]
    assert open_one(client, world, findings["electrical"], total=500)[0].status_code == 201
    assert PhotoUpload.objects.count() == 2


def test_open_uploads_per_job_are_limited(world, api, findings, settings):
    settings.UPLOAD_MAX_OPEN_PER_JOB = 2
    assert open_one(api(world.electrician), world, findings["electrical"])[0].status_code == 201
    assert open_one(api(world.drywaller), world, findings["drywall"])[0].status_code == 201
    r, _ = open_one(api(world.inspector), world, findings["drywall"])
    assert r.status_code == 429 and "UPLOAD_MAX_OPEN_PER_JOB" in r.json()["uploads"][0]
    assert PhotoUpload.objects.count() == 2


def test_pending_bytes_per_job_are_limited(world, api, findings, settings):
    settings.UPLOAD_MAX_PENDING_BYTES_PER_JOB = 3000
    assert open_one(api(world.electrician), world, findings["electrical"], total=2000)[0].status_code == 201
    r, _ = open_one(api(world.drywaller), world, findings["drywall"], total=1001)
    assert r.status_code == 429 and "UPLOAD_MAX_PENDING_BYTES_PER_JOB" in r.json()["total_bytes"][0]
    assert PhotoUpload.objects.count() == 1


def test_default_limits_refuse_the_observed_flood(world, api, findings, settings):
    # The case seen: one person opening 20 MB uploads back to back. With the defaults (20 open,
    # 100 MB waiting per person) the sixth 20 MB upload is refused.
    client = api(world.electrician)
    size = settings.PHOTO_MAX_BYTES
    answers = [open_one(client, world, findings["electrical"], total=size)[0].status_code for _ in range(8)]
    allowed = settings.UPLOAD_MAX_PENDING_BYTES_PER_USER // size
    assert answers == [201] * allowed + [429] * (8 - allowed)
    assert PhotoUpload.objects.count() == allowed
