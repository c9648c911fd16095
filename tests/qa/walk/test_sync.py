"""POST /api/jobs/{job}/sync/: an outbox batch applied exactly once, stale edits kept as conflicts."""

from __future__ import annotations

import uuid

import pytest

from qa.models import Conflict, Event, Finding, SealPoint, SyncOperation

pytestmark = pytest.mark.django_db


def url(job) -> str:
    return f"/api/jobs/{job.id}/sync/"


def op(kind: str, payload: dict, base: int | None = None, **extra) -> dict:
    return {
        "op_id": str(uuid.uuid4()),
        "kind": kind,
        "base_version": base,
        "payload": payload,
        "device_at": "2026-03-02T09:15:00+00:00",
        **extra,
    }


def create_op(world, **fields) -> dict:
    point = world.wall.seal_points.first()
    payload = {
        "client_id": str(uuid.uuid4()),
        "wall": world.wall.id,
        "seal_point": point.id,
        "kind": "slit",
        "face": "a",
        "width": 6,
        "length": 1500,
        "trade": "drywall",
        "note": "bottom track gap",
    }
    payload.update(fields)
    return op("finding.create", payload)


def send(client, world, ops, device="phone-1"):
    return client.post(url(world.job), {"device_id": device, "ops": ops}, format="json")


def test_create_in_job_units_and_event_with_device_time(world, api):
    response = send(api(world.inspector), world, [create_op(world)])
    assert response.status_code == 200
    (answer,) = response.data["results"]
    assert answer["status"] == "applied"
    finding = Finding.objects.get()
    assert finding.width_m == pytest.approx(0.006)  # 6 mm in a metric job
    assert finding.length_m == pytest.approx(1.5)
    assert answer["finding"]["width"] == pytest.approx(6)
    assert finding.seal_point.status == "defect" and finding.seal_point.version == 2
    event = Event.objects.get(verb="finding.created")
    assert event.device_id == "phone-1" and event.device_at.isoformat() == "2026-03-02T09:15:00+00:00"


def test_replayed_batch_creates_no_twins_and_returns_same_answers(world, api):
    client = api(world.inspector)
    ops = [
        create_op(world),
        create_op(world, note="second"),
        op("seal_point.status", {"seal_point": world.wall.seal_points.last().id, "status": "pass"}, base=1),
    ]
    first = send(client, world, ops).data["results"]
    second = send(client, world, ops).data["results"]
    third = send(client, world, ops).data["results"]
    assert first == second == third
    assert Finding.objects.count() == 2
    assert SyncOperation.objects.count() == 3
    assert Event.objects.filter(verb="finding.created").count() == 2
    assert SealPoint.objects.get(pk=world.wall.seal_points.last().id).version == 2


def test_chain_of_edits_from_one_device_is_not_a_conflict(world, api):
    client = api(world.inspector)
    create = create_op(world)
    cid = create["payload"]["client_id"]
    ops = [
        create,
        op("finding.update", {"finding": cid, "changes": {"width": 8}}, base=1),
        op("finding.update", {"finding": cid, "changes": {"note": "wider"}}, base=2),
    ]
    results = send(client, world, ops).data["results"]
    assert [r["status"] for r in results] == ["applied"] * 3
    finding = Finding.objects.get()
    assert finding.version == 3 and finding.width_m == pytest.approx(0.008) and finding.note == "wider"


def test_stale_edit_keeps_both_versions_and_inspector_resolves(world, api):
    client = api(world.inspector)
    create = create_op(world)
    cid = create["payload"]["client_id"]
    send(client, world, [create])
    first = send(
        client,
        world,
        [op("finding.update", {"finding": cid, "changes": {"width": 10}}, base=1)],
        device="phone-1",
    ).data["results"][0]
    second = send(
        client,
        world,
        [op("finding.update", {"finding": cid, "changes": {"width": 3}}, base=1)],
        device="phone-2",
    ).data["results"][0]
    assert first["status"] == "applied"
    assert second["status"] == "conflict"
    finding = Finding.objects.get()
    assert finding.width_m == pytest.approx(0.010)  # not overwritten
    conflict = Conflict.objects.get()
    assert conflict.server_version["width"] == pytest.approx(10)
    assert conflict.device_version == {"changes": {"width": 3}}
    assert conflict.operation.op_id == uuid.UUID(second["op_id"])
    resolve = op("conflict.resolve", {"conflict": conflict.id, "keep": "device"})
    answer = send(client, world, [resolve]).data["results"][0]
    assert answer["status"] == "applied"
    finding.refresh_from_db()
    conflict.refresh_from_db()
    assert finding.width_m == pytest.approx(0.003) and finding.version == 3
    assert conflict.resolution == "device" and conflict.resolved_by == world.inspector
    again = send(client, world, [op("conflict.resolve", {"conflict": conflict.id, "keep": "server"})])
    assert again.data["results"][0]["status"] == "rejected"


def test_resolve_endpoint_keeps_server(world, api):
    client = api(world.inspector)
    create = create_op(world)
    cid = create["payload"]["client_id"]
    send(client, world, [create, op("finding.update", {"finding": cid, "changes": {"note": "a"}}, base=1)])
    send(client, world, [op("finding.update", {"finding": cid, "changes": {"note": "b"}}, base=1)])
    conflict = Conflict.objects.get()
    listed = client.get(f"/api/jobs/{world.job.id}/conflicts/?open=1").data["conflicts"]
    assert [c["id"] for c in listed] == [conflict.id]
    response = client.post(
        f"/api/jobs/{world.job.id}/conflicts/{conflict.id}/resolve/", {"keep": "server"}, format="json"
    )
    assert response.status_code == 200
    assert Finding.objects.get().note == "a"
    assert (
        api(world.electrician)
        .post(f"/api/jobs/{world.job.id}/conflicts/{conflict.id}/resolve/", {"keep": "server"}, format="json")
        .status_code
        == 403
    )


def test_crew_fixes_own_trade_only(world, api):
    inspector = api(world.inspector)
    elec = create_op(world, trade="electrical", kind="hole", diameter=20, width=None, length=None)
    dry = create_op(world, trade="drywall")
    send(inspector, world, [elec, dry])
    crew = api(world.electrician)
    ok = op("finding.fix", {"finding": elec["payload"]["client_id"], "note": "boxed in putty pad"}, base=1)
    no = op("finding.fix", {"finding": dry["payload"]["client_id"]}, base=1)
    results = send(crew, world, [ok, no]).data["results"]
    assert results[0]["status"] == "applied" and results[0]["finding"]["status"] == "fixed"
    assert results[1]["status"] == "rejected" and "own trade" in results[1]["errors"]["non_field_errors"][0]
    create = send(crew, world, [create_op(world)]).data["results"][0]
    assert create["status"] == "rejected"
    verify = op("finding.verify", {"finding": elec["payload"]["client_id"]}, base=2)
    assert send(inspector, world, [verify]).data["results"][0]["finding"]["status"] == "verified"


@pytest.mark.parametrize(
    ("change", "field"),
    [
        ({"op_id": "nope"}, "op_id"),
        ({"kind": "wall.paint"}, "kind"),
        ({"device_at": "yesterday"}, "device_at"),
        ({"base_version": 0}, "base_version"),
        ({"payload": {"client_id": "x"}}, "client_id"),
    ],
)
def test_each_rule_is_named(world, api, change, field):
    bad = create_op(world)
    bad.update(change)
    answer = send(api(world.inspector), world, [bad]).data["results"][0]
    assert answer["status"] == "rejected" and field in answer["errors"]


def test_geometry_rule_comes_from_the_serializer(world, api):
    answer = send(api(world.inspector), world, [create_op(world, width=500)]).data["results"][0]
    assert answer["status"] == "rejected" and "width" in answer["errors"]
    assert Finding.objects.count() == 0


def test_batch_limits_and_shape(world, api):
    client = api(world.inspector)
    assert client.post(url(world.job), {"ops": "x"}, format="json").status_code == 400
    assert client.post(url(world.job), {"ops": [{}] * 501}, format="json").status_code == 400


def test_roles_and_other_job(world, api):
    assert send(api(world.outsider), world, [create_op(world)]).status_code == 404
    assert send(api(world.owner), world, [create_op(world)]).status_code == 403
    assert send(api(), world, [create_op(world)]).status_code in (401, 403)
    assert api(world.inspector).get(url(world.job)).status_code == 405


def test_op_id_of_another_user_is_not_replayed_to_them(world, api):
    ops = [create_op(world)]
    send(api(world.inspector), world, ops)
    answer = send(api(world.electrician), world, ops).data["results"][0]
    assert answer["status"] == "rejected" and "op_id" in answer["errors"]


def test_stale_seal_point_tick_does_not_overwrite(world, api):
    client = api(world.inspector)
    point = world.wall.seal_points.first()
    send(client, world, [op("seal_point.status", {"seal_point": point.id, "status": "pass"}, base=1)])
    answer = send(
        client,
        world,
        [op("seal_point.status", {"seal_point": point.id, "status": "na"}, base=1)],
        device="phone-2",
    ).data["results"][0]
    assert answer["status"] == "conflict"
    point.refresh_from_db()
    assert point.status == "pass" and point.version == 2


def test_stale_remove_is_a_conflict(world, api):
    client = api(world.inspector)
    create = create_op(world)
    cid = create["payload"]["client_id"]
    send(client, world, [create, op("finding.update", {"finding": cid, "changes": {"count": 2}}, base=1)])
    answer = send(client, world, [op("finding.remove", {"finding": cid}, base=1)]).data["results"][0]
    assert answer["status"] == "conflict"
    assert not Finding.objects.get().removed


def test_creates_in_one_batch_are_each_checked_on_their_own(world, api):
    """One serializer serves a batch's creates: nothing of one payload or its refusal reaches the next."""
    ops = [
        create_op(world, width=6, note="first"),
        create_op(world, width=None, note="second, no width"),
        create_op(world, kind="hole", width=None, length=None, diameter=20, note="third", trade="plumbing"),
        create_op(world, width=3, length=800, wall=world.other_wall.id, note="fourth, another job's wall"),
    ]
    answers = send(api(world.inspector), world, ops).data["results"]
    assert [a["status"] for a in answers] == ["applied", "rejected", "applied", "rejected"]
    assert "width" in str(answers[1]) and "wall" in str(answers[3])
    assert "width" not in str(answers[3])
    stored = {f.note: f for f in Finding.objects.all()}
    assert set(stored) == {"first", "third"}
    assert stored["first"].kind == "slit" and stored["first"].width_m == pytest.approx(0.006)
    third = stored["third"]
    assert (third.kind, third.trade, third.width_m) == ("hole", "plumbing", None)
    assert third.diameter_m == pytest.approx(0.020)
    assert answers[2]["finding"]["diameter"] == pytest.approx(20) and answers[2]["finding"]["note"] == "third"


def test_a_create_racing_its_twin_answers_with_the_stored_finding(world, api, monkeypatch):
    """The client id was stored through another door after the batch looked (a unique-index race)."""
    from qa.walk import sync

    create = create_op(world, note="from the phone")
    twin = Finding.objects.create(
        job=world.job,
        wall=world.wall,
        client_id=create["payload"]["client_id"],
        kind="slit",
        width_m=0.006,
        length_m=1.5,
        trade="drywall",
        note="through the API",
        created_by=world.inspector,
    )
    looked = sync._prefetch

    def before_the_twin(job, ops):
        batch = looked(job, ops)
        batch.existing = set()  # as if the twin were committed a moment after this look
        return batch

    monkeypatch.setattr(sync, "_prefetch", before_the_twin)
    events = Event.objects.count()
    answers = send(api(world.inspector), world, [create, create_op(world, note="next")]).data["results"]
    assert [a["status"] for a in answers] == ["applied", "applied"]
    assert answers[0]["finding"]["id"] == twin.id and answers[0]["finding"]["note"] == "through the API"
    assert Finding.objects.filter(client_id=twin.client_id).count() == 1
    assert Finding.objects.filter(note="next").count() == 1, "the batch goes on after the race"
    assert Event.objects.count() - events == 1, "one event: the next finding's; the twin had its own"
