"""Versions (issue: hardening, round two, item 8): a version from the future is refused; a lifecycle
step (fix, verify, reopen) decided on a finding that changed since is kept as a conflict (sync) or
answered 409 (API), like any other stale edit — never applied over the newer version.

Also: resolving a conflict on a finding removed since never edits it (item 10).
"""

from __future__ import annotations

import uuid

import pytest

from qa.models import Conflict, Event, Finding, SealPoint

pytestmark = pytest.mark.django_db


def op(kind, payload, base=None) -> dict:
    return {
        "op_id": str(uuid.uuid4()),
        "kind": kind,
        "base_version": base,
        "payload": payload,
        "device_at": "2026-03-02T09:15:00+00:00",
    }


def sync(client, world, *ops) -> list[dict]:
    r = client.post(
        f"/api/jobs/{world.job.id}/sync/", {"device_id": "phone-1", "ops": list(ops)}, format="json"
    )
    assert r.status_code == 200, r.content[:300]
    return r.json()["results"]


def api_url(world, finding, *rest) -> str:
    return "/".join([f"/api/jobs/{world.job.id}/findings/{finding.pk}", *rest]) + "/"


@pytest.fixture
def finding(world):
    made = Finding.objects.create(
        job=world.job,
        wall=world.wall,
        kind="hole",
        diameter_m=0.02,
        trade="electrical",
        created_by=world.inspector,
    )
    assert made.version == 1
    return made


def state(finding) -> tuple:
    finding.refresh_from_db()
    return finding.status, finding.version, finding.note, finding.removed


# --- a version from the future ----------------------------------------------------------------------


@pytest.mark.parametrize(
    "kind, payload",
    [
        ("finding.update", {"changes": {"note": "from the future"}}),
        ("finding.fix", {"note": "done"}),
        ("finding.remove", {"note": "gone"}),
    ],
)
def test_sync_refuses_a_finding_version_above_the_servers(kind, payload, world, api, finding):
    before = state(finding)
    (answer,) = sync(
        api(world.inspector), world, op(kind, {"finding": str(finding.client_id), **payload}, base=2)
    )
    assert answer["status"] == "rejected"
    assert "ahead of the server's version 1" in answer["errors"]["base_version"][0]
    assert state(finding) == before and not Conflict.objects.exists() and not Event.objects.exists()


def test_sync_refuses_a_seal_point_version_above_the_servers(world, api):
    point = world.wall.seal_points.order_by("id").first()
    tick = op("seal_point.status", {"seal_point": point.id, "status": "pass"}, base=5)
    (answer,) = sync(api(world.inspector), world, tick)
    assert answer["status"] == "rejected" and "ahead of" in answer["errors"]["base_version"][0]
    point.refresh_from_db()
    assert (point.status, point.version) == ("unchecked", 1)


@pytest.mark.parametrize(
    "method, suffix, body",
    [
        ("patch", (), {"note": "from the future", "version": 2}),
        ("post", ("fix",), {"note": "done", "version": 2}),
        ("delete", (), {"note": "gone", "version": 2}),
    ],
)
def test_api_refuses_a_version_above_the_servers(method, suffix, body, world, api, finding):
    before = state(finding)
    r = getattr(api(world.inspector), method)(api_url(world, finding, *suffix), body, format="json")
    assert r.status_code == 400 and "ahead of the server's version 1" in r.json()["version"][0]
    assert state(finding) == before and not Event.objects.exists()


# --- lifecycle steps on a finding that changed since the device saw it ---------------------------------


def test_sync_fix_on_a_finding_edited_since_is_kept_as_a_conflict(world, api, finding):
    inspector = api(world.inspector)
    (edit,) = sync(
        inspector,
        world,
        op("finding.update", {"finding": str(finding.client_id), "changes": {"note": "x"}}, base=1),
    )
    assert edit["status"] == "applied"
    # The crew's phone saw version 1 and marks it fixed.
    fix = op("finding.fix", {"finding": str(finding.client_id), "note": "putty pad"}, base=1)
    (answer,) = sync(api(world.electrician), world, fix)
    assert answer["status"] == "conflict"
    assert state(finding) == ("open", 2, "x", False)
    conflict = Conflict.objects.get()
    assert conflict.device_version == {"step": "fix", "note": "putty pad"} and conflict.base_version == 1
    assert str(conflict.operation.op_id) == fix["op_id"]


@pytest.mark.parametrize(
    "step, start, note", [("verify", "fixed", ""), ("reopen", "fixed", "still open at the top")]
)
def test_sync_inspector_step_on_a_finding_changed_since_is_kept_as_a_conflict(
    step, start, note, world, api, finding
):
    finding.mark_fixed(world.electrician, "done")  # version 2
    assert (finding.status, finding.version) == (start, 2)
    (answer,) = sync(
        api(world.inspector),
        world,
        op(f"finding.{step}", {"finding": str(finding.client_id), "note": note}, base=1),
    )
    assert answer["status"] == "conflict", answer
    assert state(finding)[:2] == ("fixed", 2)
    assert Conflict.objects.get().device_version["step"] == step


def test_sync_stale_fix_of_an_already_fixed_finding_is_a_conflict_not_a_status_error(world, api, finding):
    # Two crew phones saw version 1; the first fix lands, the second is stale.
    first = op("finding.fix", {"finding": str(finding.client_id), "note": "first"}, base=1)
    second = op("finding.fix", {"finding": str(finding.client_id), "note": "second"}, base=1)
    answers = sync(api(world.electrician), world, first, second)
    assert [a["status"] for a in answers] == ["applied", "conflict"]
    finding.refresh_from_db()
    assert (finding.status, finding.fix_note, finding.version) == ("fixed", "first", 2)


def test_step_conflict_settled_by_keeping_the_device_takes_the_step(world, api, finding):
    inspector = api(world.inspector)
    sync(
        inspector,
        world,
        op("finding.update", {"finding": str(finding.client_id), "changes": {"note": "x"}}, base=1),
    )
    sync(
        api(world.electrician),
        world,
        op("finding.fix", {"finding": str(finding.client_id), "note": "pad"}, base=1),
    )
    conflict = Conflict.objects.get()
    r = inspector.post(
        f"/api/jobs/{world.job.id}/conflicts/{conflict.id}/resolve/", {"keep": "device"}, format="json"
    )
    assert r.status_code == 200, r.content[:300]
    finding.refresh_from_db()
    assert (finding.status, finding.fix_note, finding.note, finding.version) == ("fixed", "pad", "x", 3)


@pytest.mark.parametrize("step", ["fix", "verify", "reopen"])
def test_api_step_on_a_finding_changed_since_is_409(step, world, api, finding):
    if step != "fix":
        finding.mark_fixed(world.electrician, "done")  # version 2, now fixed
    else:
        Finding.objects.filter(pk=finding.pk).update(note="edited", version=2)
    before = state(finding)
    r = api(world.inspector).post(api_url(world, finding, step), {"note": "why", "version": 1}, format="json")
    assert r.status_code == 409 and "version 2" in r.json()["version"][0]
    assert state(finding) == before


# --- conflicts on a finding removed since -----------------------------------------------------------------


def make_conflict(world, finding, device_version) -> Conflict:
    return Conflict.objects.create(
        finding=finding,
        base_version=1,
        server_version={},
        device_version=device_version,
        created_by=world.electrician,
    )


@pytest.mark.parametrize(
    "device_version",
    [{"changes": {"note": "device note"}}, {"step": "fix", "note": "pad"}, {"removed": True}],
)
def test_resolving_a_conflict_on_a_removed_finding_does_not_edit_it(device_version, world, api, finding):
    conflict = make_conflict(world, finding, device_version)
    finding.remove(world.inspector, "duplicate")
    before = state(finding)
    client = api(world.inspector)
    url = f"/api/jobs/{world.job.id}/conflicts/{conflict.id}/resolve/"
    r = client.post(url, {"keep": "device"}, format="json")
    assert r.status_code == 400 and "removed" in r.json()["keep"][0]
    (answer,) = sync(client, world, op("conflict.resolve", {"conflict": conflict.id, "keep": "device"}))
    assert answer["status"] == "rejected" and "removed" in answer["errors"]["keep"][0]
    assert state(finding) == before
    conflict.refresh_from_db()
    assert conflict.resolution == ""
    # Keeping the server's version settles it, still without touching the finding.
    assert client.post(url, {"keep": "server"}, format="json").status_code == 200
    conflict.refresh_from_db()
    assert conflict.resolution == "server" and state(finding) == before


def test_resolving_a_conflict_on_a_removed_walls_finding_does_not_edit_it(world, api, finding):
    conflict = make_conflict(world, finding, {"changes": {"note": "device note"}})
    api(world.inspector).delete(f"/api/jobs/{world.job.id}/walls/{world.wall.id}/")
    r = api(world.inspector).post(
        f"/api/jobs/{world.job.id}/conflicts/{conflict.id}/resolve/", {"keep": "device"}, format="json"
    )
    assert r.status_code == 400
    finding.refresh_from_db()
    assert finding.note == "" and finding.version == 1
    assert SealPoint.objects.filter(wall=world.wall, status="defect").count() == 0
