"""Malformed input to the walk's endpoints is a 4xx, and one bad operation never blocks a device.

Each case was a server error once (issue: hardening, round two, item 2): impossible dates and
offsets, years whose conversion to UTC overflows, ids that ``str.isdigit`` accepts but ``int``
refuses, an operation ``kind`` that is a list or an object, bodies that are not objects, JSON nested
100 000 levels deep, notes of 100 KB. The rules checked: ISO 8601 calendar dates and UTC offsets
of at most ±23:59 (ISO 8601-1:2019 §4.3, from memory; Python's ``datetime`` refuses the same),
Unicode superscript two (U+00B2) is a digit to ``str.isdigit`` but not a decimal digit to ``int``
(Python documentation, str.isdigit / int).
"""

from __future__ import annotations

import hashlib
import json
import uuid

import pytest

from qa.api.parsers import MAX_DEPTH, json_depth_exceeds
from qa.models import Conflict, Event, Finding, PhotoUpload, SealPoint, SyncOperation

pytestmark = pytest.mark.django_db


def sync_url(world) -> str:
    return f"/api/jobs/{world.job.id}/sync/"


def op(kind, payload, base=None, **extra) -> dict:
    return {
        "op_id": str(uuid.uuid4()),
        "kind": kind,
        "base_version": base,
        "payload": payload,
        "device_at": "2026-03-02T09:15:00+00:00",
        **extra,
    }


def tick(world, status="pass", **extra) -> dict:
    point = world.wall.seal_points.order_by("id").first()
    return op("seal_point.status", {"seal_point": point.id, "status": status}, base=1, **extra)


def create(world, **fields) -> dict:
    payload = {
        "client_id": str(uuid.uuid4()),
        "wall": world.wall.id,
        "kind": "hole",
        "diameter": 20,
        "trade": "electrical",
    }
    payload.update(fields)
    return op("finding.create", payload)


def send(client, world, ops):
    return client.post(sync_url(world), {"device_id": "phone-1", "ops": ops}, format="json")


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


# --- the envelope of one operation -------------------------------------------------------------------

BAD_DEVICE_AT = {
    "30_february": "2024-02-30T10:00:00",
    "offset_25_hours": "2026-03-02T10:00:00+25:00",
    "year_9999_west_of_utc": "9999-12-31T23:59:59-05:00",
    "year_0001_east_of_utc": "0001-01-01T00:00:00+05:00",
    "year_9999_utc": "9999-01-01T00:00:00+00:00",
    "not_text": 1700000000,
    "too_long": "2026-03-02T10:00:00" + "0" * 100,
}


@pytest.mark.parametrize("label", list(BAD_DEVICE_AT))
def test_impossible_device_at_is_rejected_alone(label, world, api):
    bad = tick(world, device_at=BAD_DEVICE_AT[label])
    r = send(api(world.inspector), world, [bad])
    assert r.status_code == 200, r.content[:300]
    (answer,) = r.json()["results"]
    assert answer["status"] == "rejected" and "2000 and 2099" in answer["errors"]["device_at"][0]
    assert SealPoint.objects.filter(wall=world.wall, status="pass").count() == 0


@pytest.mark.parametrize("kind", [["finding.create"], {"kind": "finding.create"}, 7, None, "finding.explode"])
def test_kind_that_is_not_a_known_string_is_rejected(kind, world, api):
    bad = create(world)
    bad["kind"] = kind
    (answer,) = send(api(world.inspector), world, [bad]).json()["results"]
    assert answer["status"] == "rejected" and "must be one of" in answer["errors"]["kind"][0]
    assert not Finding.objects.exists()


SUPERSCRIPT_TWO = "\u00b2"  # "²": "²".isdigit() is True, int("²") raises ValueError


def test_superscript_digit_ids_are_rejected_in_every_id_field(world, api, finding):
    assert SUPERSCRIPT_TWO.isdigit()
    ops = [
        op("seal_point.status", {"seal_point": SUPERSCRIPT_TWO, "status": "pass"}, base=1),
        op("conflict.resolve", {"conflict": SUPERSCRIPT_TWO, "keep": "server"}),
        op("seal_point.status", {"seal_point": "1" * 19, "status": "pass"}, base=1),
        create(world, wall=SUPERSCRIPT_TWO),
        create(world, seal_point=SUPERSCRIPT_TWO),
    ]
    r = send(api(world.inspector), world, ops)
    assert r.status_code == 200
    answers = r.json()["results"]
    assert [a["status"] for a in answers] == ["rejected"] * 5
    assert "must be an id" in answers[0]["errors"]["seal_point"][0]
    assert "must be an id" in answers[1]["errors"]["conflict"][0]
    assert "must be an id" in answers[2]["errors"]["seal_point"][0]
    assert "wall" in answers[3]["errors"] and "seal_point" in answers[4]["errors"]
    assert Finding.objects.count() == 1


@pytest.mark.parametrize(
    "field, value",
    [
        ("op_id", SUPERSCRIPT_TWO),
        ("op_id", 12),
        ("base_version", SUPERSCRIPT_TWO),
        ("base_version", True),
        ("base_version", 2**40),
        ("payload", ["seal_point", 1]),
    ],
)
def test_bad_envelope_field_is_named(field, value, world, api):
    bad = tick(world)
    bad[field] = value
    (answer,) = send(api(world.inspector), world, [bad]).json()["results"]
    assert answer["status"] == "rejected" and field in answer["errors"], answer


def test_batch_valid_bad_valid_applies_both_valid_and_rejects_the_bad_one(world, api):
    points = list(world.wall.seal_points.order_by("id")[:2])
    first = op("seal_point.status", {"seal_point": points[0].id, "status": "pass"}, base=1)
    bad = op("seal_point.status", {"seal_point": points[1].id, "status": "pass"}, base=1)
    bad["device_at"] = "2024-02-30T10:00:00"
    third = create(world)
    client = api(world.inspector)
    answers = send(client, world, [first, bad, third]).json()["results"]
    assert [a["status"] for a in answers] == ["applied", "rejected", "applied"]
    assert [a["op_id"] for a in answers] == [first["op_id"], bad["op_id"], third["op_id"]]
    points[0].refresh_from_db()
    points[1].refresh_from_db()
    assert (points[0].status, points[1].status) == ("pass", "unchecked")
    assert Finding.objects.filter(client_id=third["payload"]["client_id"]).count() == 1
    # The device sends the same batch again (its answer was lost): same answers, nothing doubled,
    # and the bad one stays rejected instead of being retried for ever.
    again = send(client, world, [first, bad, third]).json()["results"]
    assert again == answers
    assert Finding.objects.count() == 1 and SyncOperation.objects.count() == 3


def test_a_batch_that_is_not_a_list_or_not_an_object_is_a_400(world, api):
    client = api(world.inspector)
    for body in ([], "x", {"ops": {"op_id": "x"}}, {"ops": "x"}):
        r = client.post(sync_url(world), body, format="json")
        assert r.status_code == 400 and "ops" in r.json(), (body, r.content[:200])


# --- JSON depth ----------------------------------------------------------------------------------------


def deep(levels: int, leaf: str = "1") -> str:
    return "[" * levels + leaf + "]" * levels


def test_json_nested_100000_levels_is_a_400_on_every_json_endpoint(world, api, finding):
    client = api(world.inspector)
    body = '{"ops": ' + deep(100_000) + "}"
    conflict = Conflict.objects.create(
        finding=finding, base_version=1, server_version={}, device_version={}, created_by=world.inspector
    )
    urls = [
        sync_url(world),
        f"/api/jobs/{world.job.id}/uploads/",
        f"/api/jobs/{world.job.id}/conflicts/{conflict.id}/resolve/",
        f"/api/jobs/{world.job.id}/findings/",
        f"/api/jobs/{world.job.id}/findings/{finding.id}/fix/",
        f"/api/jobs/{world.job.id}/walls/",
        "/api/auth/token/",
    ]
    for target in urls:
        r = client.post(target, data=body, content_type="application/json")
        assert r.status_code == 400, (target, r.status_code, r.content[:200])
        assert "nested deeper than 64" in r.json()["detail"], target
    r = client.patch(
        f"/api/jobs/{world.job.id}/findings/{finding.id}/", data=body, content_type="application/json"
    )
    assert r.status_code == 400
    finding.refresh_from_db()
    assert finding.version == 1 and conflict.resolution == "" and not PhotoUpload.objects.exists()


def test_json_within_the_depth_limit_still_parses(world, api):
    # A payload 60 levels deep is accepted by the parser (and refused by the rules, not the parser).
    bad = create(world, note=json.loads(deep(MAX_DEPTH - 5)))
    r = send(api(world.inspector), world, [bad])
    assert r.status_code == 200
    assert r.json()["results"][0]["status"] == "rejected"


@pytest.mark.parametrize(
    "body, deeper",
    [
        (deep(64).encode(), False),
        (deep(65).encode(), True),
        (b'{"a": "' + b"[" * 500 + b'"}', False),  # brackets inside a string do not nest
        (b'["\\"' + b"[" * 100 + b'"]', False),  # an escaped quote does not end the string
        (b"{" * 70, True),  # malformed, but the depth is already too much
        (b'{"a": [' + b"1," * 5000 + b"1]}", False),
    ],
)
def test_depth_scan_counts_brackets_outside_strings(body, deeper):
    assert json_depth_exceeds(body) is deeper


# --- upload open ----------------------------------------------------------------------------------------


def upload_body(world, target, **extra) -> dict:
    data = b"\xff\xd8" + b"x" * 100
    body = {
        "id": str(uuid.uuid4()),
        "finding": str(target.client_id),
        "total_bytes": len(data),
        "sha256": hashlib.sha256(data).hexdigest(),
        "captured_at": "2026-03-02T10:00:00+00:00",
    }
    body.update(extra)
    return body


@pytest.mark.parametrize("body", [[], "x", 1, None, [{"id": str(uuid.uuid4())}]])
def test_upload_open_body_that_is_not_an_object_is_a_400(body, world, api):
    r = api(world.inspector).post(f"/api/jobs/{world.job.id}/uploads/", body, format="json")
    assert r.status_code == 400, r.content[:200]
    assert not PhotoUpload.objects.exists()


@pytest.mark.parametrize(
    "field, value",
    [
        ("captured_at", "2024-02-30T10:00:00"),
        ("captured_at", "2026-03-02T10:00:00+25:00"),
        ("captured_at", "9999-12-31T23:59:59-05:00"),
        ("captured_at", ["2026-03-02"]),
        ("wall", SUPERSCRIPT_TWO),
        ("wall", {"id": 1}),
        ("id", SUPERSCRIPT_TWO),
        ("finding", ["x"]),
        ("sha256", {"a": 1}),
        ("purpose", ["defect"]),
        ("caption", "x" * 201),
    ],
)
def test_upload_open_with_an_impossible_field_is_a_400_naming_it(field, value, world, api, finding):
    body = upload_body(world, finding, **{field: value})
    if field == "wall":
        body.pop("finding")
    r = api(world.inspector).post(f"/api/jobs/{world.job.id}/uploads/", body, format="json")
    assert r.status_code == 400, r.content[:200]
    assert field in r.json(), r.json()
    assert not PhotoUpload.objects.exists()


def test_chunk_offset_with_a_superscript_digit_is_a_400(world, api, finding):
    client = api(world.inspector)
    body = upload_body(world, finding)
    assert client.post(f"/api/jobs/{world.job.id}/uploads/", body, format="json").status_code == 201
    r = client.put(
        f"/api/jobs/{world.job.id}/uploads/{body['id']}/?offset={SUPERSCRIPT_TWO}",
        data=b"\xff\xd8",
        content_type="application/octet-stream",
    )
    assert r.status_code == 400 and "offset" in r.json()


# --- conflict resolve -------------------------------------------------------------------------------------


@pytest.mark.parametrize("body", [[], "x", {"keep": ["device"]}, {"keep": {"a": 1}}, {}])
def test_conflict_resolve_body_that_is_not_a_choice_is_a_400(body, world, api, finding):
    conflict = Conflict.objects.create(
        finding=finding,
        base_version=1,
        server_version={},
        device_version={"changes": {"note": "device"}},
        created_by=world.inspector,
    )
    r = api(world.inspector).post(
        f"/api/jobs/{world.job.id}/conflicts/{conflict.id}/resolve/", body, format="json"
    )
    assert r.status_code == 400 and "keep" in r.json(), r.content[:200]
    conflict.refresh_from_db()
    assert conflict.resolution == "" and not Event.objects.filter(verb="conflict.resolved").exists()


# --- the size of free text ---------------------------------------------------------------------------------

HUNDRED_KB = "n" * 100_000


def test_removal_note_of_100_kb_is_refused_in_sync(world, api, finding):
    ops = [
        op("finding.remove", {"finding": str(finding.client_id), "note": HUNDRED_KB}, base=1),
        op("finding.fix", {"finding": str(finding.client_id), "note": HUNDRED_KB}, base=1),
        create(world, note=HUNDRED_KB),
        op("finding.update", {"finding": str(finding.client_id), "changes": {"note": HUNDRED_KB}}, base=1),
    ]
    answers = send(api(world.inspector), world, ops).json()["results"]
    assert [a["status"] for a in answers] == ["rejected"] * 4
    assert all("note" in a["errors"] for a in answers), answers
    assert "2000 characters" in answers[0]["errors"]["note"][0]
    finding.refresh_from_db()
    assert (finding.removed, finding.status, finding.note, finding.version) == (False, "open", "", 1)
    assert Finding.objects.count() == 1 and not Event.objects.exists()


def test_removal_note_of_100_kb_is_refused_by_the_api_delete(world, api, finding):
    client = api(world.inspector)
    target = f"/api/jobs/{world.job.id}/findings/{finding.id}/"
    r = client.delete(target, {"note": HUNDRED_KB}, format="json")
    assert r.status_code == 400 and "2000" in r.json()["note"][0]
    finding.refresh_from_db()
    assert not finding.removed and not Event.objects.exists()
    # A short note is kept with the removal.
    assert client.delete(target, {"note": "recorded twice"}, format="json").status_code == 204
    finding.refresh_from_db()
    assert finding.removed
    assert Event.objects.get(verb="finding.removed").data["note"] == "recorded twice"


@pytest.mark.parametrize("step", ["fix", "reopen"])
def test_step_note_of_100_kb_is_refused_by_the_api(step, world, api, finding):
    r = api(world.inspector).post(
        f"/api/jobs/{world.job.id}/findings/{finding.id}/{step}/", {"note": HUNDRED_KB}, format="json"
    )
    assert r.status_code == 400 and "note" in r.json()
    finding.refresh_from_db()
    assert finding.version == 1


@pytest.mark.parametrize("field", ["correct", "usual_defect"])
def test_seal_point_text_is_bounded(field, world, api):
    point = world.wall.seal_points.order_by("id").first()
    r = api(world.inspector).patch(
        f"/api/jobs/{world.job.id}/walls/{world.wall.id}/seal-points/{point.id}/",
        {field: HUNDRED_KB},
        format="json",
    )
    assert r.status_code == 400 and "2000" in r.json()[field][0]
    point.refresh_from_db()
    assert len(getattr(point, field)) < 2000


def test_wall_type_layers_are_bounded(world, api):
    r = api(world.inspector).patch(
        f"/api/jobs/{world.job.id}/wall-types/{world.wall_type.id}/",
        {"layers": {"note": HUNDRED_KB}},
        format="json",
    )
    assert r.status_code == 400 and "20000 characters" in r.json()["layers"][0]
    world.wall_type.refresh_from_db()
    assert world.wall_type.layers == {}


def test_photo_caption_is_bounded_on_the_write_path_itself(world, finding):
    # Whatever door a photo comes through, the write path refuses a caption over 200 characters
    # before anything is cleaned or stored.
    from qa import actions
    from qa.models import Member, Photo

    actor = actions.Actor(Member.objects.get(job=world.job, user=world.inspector))
    with pytest.raises(actions.Reject) as caught:
        actions.store_photo(actor, b"not even decoded", wall=world.wall, caption="c" * 201)
    assert "200 characters" in caught.value.errors["caption"][0]
    assert not Photo.objects.exists()
