"""Seal points API: /api/jobs/{job}/walls/{wall}/seal-points/. The ladder of STYLE.md; roles as DESIGN.md."""

from __future__ import annotations

import pytest

from qa.models import Event, SealPoint
from tests.qa.roles import EDIT, ROLES, SEE, as_role

pytestmark = pytest.mark.django_db


def url(job, wall, *rest) -> str:
    return "/".join([f"/api/jobs/{job.id}/walls/{wall.id}/seal-points", *map(str, rest)]) + "/"


def body(**over) -> dict:
    data = {
        "label": "Sprinkler pipe at head",
        "face": "through",
        "trade": "plumbing",
        "gap_kind": "ring",
        "correct": "Annular space sealed both faces",
        "usual_defect": "Open ring",
    }
    data.update(over)
    return {k: v for k, v in data.items() if v is not ...}


def first_point(world) -> SealPoint:
    return world.wall.seal_points.order_by("position").first()


def test_list_is_the_template_in_order(world, api):
    r = api(world.owner).get(url(world.job, world.wall))
    assert r.status_code == 200
    positions = [p["position"] for p in r.json()["results"]]
    assert positions == sorted(positions) and len(positions) == world.wall.seal_points.count()
    assert all(p["status"] == "unchecked" for p in r.json()["results"])


def test_inspector_adds_a_seal_point_at_the_end(world, api):
    last = world.wall.seal_points.order_by("-position").first().position
    r = api(world.inspector).post(url(world.job, world.wall), body(), format="json")
    assert r.status_code == 201, r.json()
    point = SealPoint.objects.get(pk=r.json()["id"])
    assert point.position == last + 1 and point.wall == world.wall and point.template_key == ""
    assert Event.objects.get(verb="sealpoint.added").data == {"label": "Sprinkler pipe at head"}


def test_ticking_a_seal_point_records_who_and_when(world, api):
    point = first_point(world)
    r = api(world.inspector).patch(url(world.job, world.wall, point.pk), {"status": "pass"}, format="json")
    assert r.status_code == 200, r.json()
    point.refresh_from_db()
    assert (point.status, point.checked_by, point.version) == ("pass", world.inspector, 2)
    assert point.checked_at is not None
    event = Event.objects.get(verb="sealpoint.checked")
    assert event.data == {"from": "unchecked", "to": "pass", "version": 2}


RULES = [
    ({"status": "maybe"}, "status", "not a valid choice"),
    ({"face": "c"}, "face", "not a valid choice"),
    ({"trade": "roofing"}, "trade", "not a valid choice"),
    ({"gap_kind": "crack"}, "gap_kind", "not a valid choice"),
    ({"label": ""}, "label", "may not be blank"),
    ({"label": "x" * 81}, "label", "no more than 80"),
    ({"position": -1}, "position", "greater than or equal to 0"),
    ({"position": "first"}, "position", "valid integer"),
    ({"at_edge": "sometimes"}, "at_edge", "valid boolean"),
]


@pytest.mark.parametrize("change, field, rule", RULES, ids=[f"{f}-{i}" for i, (_, f, _) in enumerate(RULES)])
def test_bad_input_is_refused_naming_field_and_rule(world, api, change, field, rule):
    before = world.wall.seal_points.count()
    r = api(world.inspector).post(url(world.job, world.wall), body(**change), format="json")
    assert r.status_code == 400, r.json()
    assert rule in str(r.json()[field]), r.json()
    assert world.wall.seal_points.count() == before
    assert not Event.objects.exists()


def test_bad_tick_changes_nothing(world, api):
    point = first_point(world)
    r = api(world.inspector).patch(
        url(world.job, world.wall, point.pk), {"status": "ok", "label": "renamed"}, format="json"
    )
    assert r.status_code == 400
    point.refresh_from_db()
    assert point.status == "unchecked" and point.label != "renamed" and point.version == 1


def test_read_only_fields_are_ignored(world, api):
    point = first_point(world)
    r = api(world.inspector).patch(
        url(world.job, world.wall, point.pk),
        {"wall": world.other_wall.id, "version": 99, "template_key": "x"},
        format="json",
    )
    assert r.status_code == 200
    point.refresh_from_db()
    assert point.wall == world.wall and point.version == 2 and point.template_key != "x"


def test_remove_keeps_it_in_the_record(world, api):
    point = first_point(world)
    client = api(world.inspector)
    assert client.delete(url(world.job, world.wall, point.pk)).status_code == 204
    point.refresh_from_db()
    assert point.removed and point.version == 2
    assert client.get(url(world.job, world.wall, point.pk)).status_code == 404
    assert Event.objects.get(verb="sealpoint.removed").target_id == str(point.pk)


def test_seal_point_of_another_wall_or_job_is_404(world, api):
    client = api(world.inspector)
    theirs = world.other_wall.seal_points.first()
    assert client.get(url(world.job, world.wall, theirs.pk)).status_code == 404
    assert (
        client.patch(url(world.job, world.wall, theirs.pk), {"status": "pass"}, format="json").status_code
        == 404
    )
    assert client.get(url(world.job, world.other_wall)).status_code == 404
    assert client.get(url(world.job, world.other_wall, theirs.pk)).status_code == 404
    theirs.refresh_from_db()
    assert theirs.status == "unchecked"


@pytest.mark.parametrize("method, on_item", [("put", False), ("delete", False), ("post", True)])
def test_wrong_method_is_405(world, api, method, on_item):
    target = url(world.job, world.wall, first_point(world).pk) if on_item else url(world.job, world.wall)
    assert getattr(api(world.inspector), method)(target, {}, format="json").status_code == 405


@pytest.mark.parametrize("role", ROLES)
def test_who_sees_seal_points(world, api, role):
    client = as_role(world, api, role)
    assert client.get(url(world.job, world.wall)).status_code == SEE[role]
    assert client.get(url(world.job, world.wall, first_point(world).pk)).status_code == SEE[role]


@pytest.mark.parametrize("role", ROLES)
def test_who_adds_ticks_and_removes_seal_points(world, api, role):
    point = first_point(world)
    before = world.wall.seal_points.count()
    client = as_role(world, api, role)
    assert client.post(url(world.job, world.wall), body(), format="json").status_code == (EDIT[role] or 201)
    assert client.patch(
        url(world.job, world.wall, point.pk), {"status": "pass"}, format="json"
    ).status_code == (EDIT[role] or 200)
    assert client.delete(url(world.job, world.wall, point.pk)).status_code == (EDIT[role] or 204)
    point.refresh_from_db()
    if role == "inspector":
        assert point.status == "pass" and point.removed and world.wall.seal_points.count() == before + 1
        assert Event.objects.count() == 3
    else:
        assert point.status == "unchecked" and not point.removed and world.wall.seal_points.count() == before
        assert not Event.objects.exists()
