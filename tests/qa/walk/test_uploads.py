"""Resumable photo uploads: /api/jobs/{job}/uploads/ (open), .../{id}/?offset=N (chunks), .../finish/."""

from __future__ import annotations

import hashlib
import io
import uuid

import pytest
from PIL import Image

from qa.models import Event, Finding, Photo, PhotoUpload

pytestmark = pytest.mark.django_db


def plain_jpeg() -> bytes:
    """A metadata-free JPEG like the walk's canvas output."""
    out = io.BytesIO()
    img = Image.effect_noise((900, 600), 60).convert("RGB")
    img.save(out, "JPEG", quality=88)
    return out.getvalue()


@pytest.fixture
def finding(world):
    return Finding.objects.create(
        job=world.job,
        wall=world.wall,
        kind="hole",
        diameter_m=0.02,
        trade="electrical",
        created_by=world.inspector,
    )


def base(world) -> str:
    return f"/api/jobs/{world.job.id}/uploads/"


def open_upload(client, world, target, data, **extra):
    body = {
        "id": str(uuid.uuid4()),
        "finding": str(target.client_id),
        "total_bytes": len(data),
        "sha256": hashlib.sha256(data).hexdigest(),
        "captured_at": "2026-03-02T10:00:00+00:00",
        **extra,
    }
    return client.post(base(world), body, format="json")


def put(client, world, photo_id, offset, chunk):
    return client.put(
        f"{base(world)}{photo_id}/?offset={offset}", data=chunk, content_type="application/octet-stream"
    )


def test_cut_off_upload_resumes_and_is_byte_identical(world, api, finding):
    client = api(world.inspector)
    data = plain_jpeg()
    opened = open_upload(client, world, finding, data)
    assert opened.status_code == 201 and opened.data["offset"] == 0
    pid = opened.data["id"]
    half = len(data) // 2
    assert put(client, world, pid, 0, data[:half]).data["offset"] == half
    # The phone lost the answer and does not know where the server is: it asks.
    assert client.get(f"{base(world)}{pid}/").data["offset"] == half
    assert open_upload(client, world, finding, data, id=pid).status_code == 200  # re-open: same session
    wrong = put(client, world, pid, 0, data[10:20])
    assert wrong.status_code == 409 and wrong.data["expected"] == half
    assert put(client, world, pid, 0, data[:half]).status_code == 200  # a repeated chunk is harmless
    assert put(client, world, pid, half, data[half:]).data["offset"] == len(data)
    done = client.post(f"{base(world)}{pid}/finish/")
    assert done.status_code == 201
    photo = Photo.objects.get()
    # Every stored photo is re-encoded (no metadata block survives); the bytes the phone sent are
    # identified by received_sha256.
    assert photo.received_sha256 == hashlib.sha256(data).hexdigest() != photo.sha256
    with photo.image.open("rb") as fh:
        assert hashlib.sha256(fh.read()).hexdigest() == photo.sha256
    assert photo.finding == finding and photo.captured_at.isoformat() == "2026-03-02T10:00:00+00:00"
    assert not PhotoUpload.objects.exists()
    assert Event.objects.filter(verb="photo.added").count() == 1
    assert client.post(f"{base(world)}{pid}/finish/").status_code == 200  # replay: the same photo
    assert open_upload(client, world, finding, data, id=pid).data["done"] is True
    assert Photo.objects.count() == 1


def test_wrong_hash_resets_the_upload(world, api, finding):
    client = api(world.inspector)
    data = plain_jpeg()
    pid = open_upload(client, world, finding, data, sha256="0" * 64).data["id"]
    put(client, world, pid, 0, data)
    answer = client.post(f"{base(world)}{pid}/finish/")
    assert answer.status_code == 400 and "sha256" in answer.data
    assert client.get(f"{base(world)}{pid}/").data["offset"] == 0


def test_incomplete_upload_cannot_finish(world, api, finding):
    client = api(world.inspector)
    data = plain_jpeg()
    pid = open_upload(client, world, finding, data).data["id"]
    put(client, world, pid, 0, data[:100])
    assert "offset" in client.post(f"{base(world)}{pid}/finish/").data
    assert put(client, world, pid, 100, data[100:] + b"extra").status_code == 400


@pytest.mark.parametrize(
    ("extra", "field"),
    [
        ({"id": "x"}, "id"),
        ({"total_bytes": 0}, "total_bytes"),
        ({"sha256": "abc"}, "sha256"),
        ({"purpose": "selfie"}, "purpose"),
        ({"finding": str(uuid.uuid4())}, "finding"),
        ({"captured_at": "noon"}, "captured_at"),
    ],
)
def test_each_rule_is_named(world, api, finding, extra, field):
    answer = open_upload(api(world.inspector), world, finding, b"xx", **extra)
    assert answer.status_code == 400 and field in answer.data


def test_roles(world, api, finding):
    data = plain_jpeg()
    assert open_upload(api(world.outsider), world, finding, data).status_code == 404
    assert open_upload(api(world.owner), world, finding, data).status_code == 403
    assert open_upload(api(world.drywaller), world, finding, data).status_code == 403  # not their trade
    crew = open_upload(api(world.electrician), world, finding, data)
    assert crew.status_code == 201
    assert PhotoUpload.objects.get(pk=crew.data["id"]).purpose == "fix"
    # Another user cannot write into this upload.
    assert put(api(world.inspector), world, crew.data["id"], 0, data).status_code == 404
