"""Walls API: /api/jobs/{job}/walls/. The ladder of STYLE.md; roles as DESIGN.md's table.

Unit conversions: 1 ft = 0.3048 m exactly (NIST SP 811, Appendix B).
"""

from __future__ import annotations

import pytest

from qa.checklists import template_for
from qa.models import Event, SealPoint, Wall
from tests.qa.roles import EDIT, ROLES, SEE, as_role

pytestmark = pytest.mark.django_db


def url(job, *rest) -> str:
    return "/".join([f"/api/jobs/{job.id}/walls", *map(str, rest)]) + "/"


def body(world, **over) -> dict:
    data = {
        "tag": "2-02",
        "level": "2",
        "location": "between 202 and 203",
        "face_a_label": "Unit 202",
        "face_b_label": "Unit 203",
        "length": 7.5,
        "height": 2.7,
        "target_rating": 50,
        "rating_scheme": "stc",
        "wall_type": world.wall_type.id,
    }
    data.update(over)
    return {k: v for k, v in data.items() if v is not ...}


def test_inspector_creates_a_wall_with_its_template_seal_points(world, api):
    r = api(world.inspector).post(url(world.job), body(world), format="json")
    assert r.status_code == 201, r.json()
    wall = Wall.objects.get(pk=r.json()["id"])
    assert (wall.tag, wall.length_m, wall.height_m, wall.version) == ("2-02", 7.5, 2.7, 1)
    keys = list(wall.seal_points.order_by("position").values_list("template_key", flat=True))
    assert keys == [t.key for t in template_for("wood_stud")]
    assert Event.objects.get(verb="wall.created").data == {"tag": "2-02"}


def test_list_has_counts_and_filters(world, api):
    point = world.wall.seal_points.first()
    point.status = "pass"
    point.save()
    client = api(world.owner)
    results = client.get(url(world.job)).json()["results"]
    assert [w["tag"] for w in results] == ["2-01"]
    assert results[0]["seal_points_total"] == world.wall.seal_points.count()
    assert results[0]["seal_points_checked"] == 1 and results[0]["findings_open"] == 0
    assert client.get(url(world.job), {"level": "3"}).json()["count"] == 0
    assert client.get(url(world.job), {"wall_type": world.wall_type.id}).json()["count"] == 1
    assert client.get(url(world.job), {"wall_type": "x"}).json()["count"] == 0


def test_imperial_job_takes_feet(world, api):
    world.job.units = "imperial"
    world.job.save()
    r = api(world.inspector).post(url(world.job), body(world, length=25, height=9), format="json")
    assert r.status_code == 201, r.json()
    wall = Wall.objects.get(pk=r.json()["id"])
    assert wall.length_m == pytest.approx(7.62, rel=1e-12)  # 25 ft × 0.3048
    assert wall.height_m == pytest.approx(2.7432, rel=1e-12)
    assert (r.json()["length"], r.json()["height"]) == (25, 9)


def test_imperial_bound_is_told_in_feet(world, api):
    world.job.units = "imperial"
    world.job.save()
    r = api(world.inspector).post(url(world.job), body(world, length=0.2), format="json")
    assert r.status_code == 400 and r.json()["length"] == ["must be at least 0.328 ft"]


RULES = [
    ({"length": -3}, "length", "must be at least 0.1 m"),
    ({"length": 0}, "length", "must be at least 0.1 m"),
    ({"length": 5000}, "length", "must be at most 1000 m"),
    ({"length": 1e308}, "length", "not a plausible value"),
    ({"length": "NaN"}, "length", "valid number"),
    ({"length": False}, "length", "valid number"),
    ({"height": 0}, "height", "must be at least 0.1 m"),
    ({"height": 250}, "height", "must be at most 100 m"),
    ({"height": ...}, "height", "required"),
    ({"target_rating": 250}, "target_rating", "less than or equal to 100"),
    ({"target_rating": "fifty"}, "target_rating", "valid integer"),
    ({"rating_scheme": "nic"}, "rating_scheme", "not a valid choice"),
    ({"tag": "2-01"}, "tag", "already used by another wall of this job"),
    ({"tag": ""}, "tag", "may not be blank"),
    ({"tag": "x" * 31}, "tag", "no more than 30"),
    ({"wall_type": 999_999}, "wall_type", "Invalid pk"),
]


@pytest.mark.parametrize("change, field, rule", RULES, ids=[f"{f}-{i}" for i, (_, f, _) in enumerate(RULES)])
def test_bad_input_is_refused_naming_field_and_rule(world, api, change, field, rule):
    before = SealPoint.objects.count()
    r = api(world.inspector).post(url(world.job), body(world, **change), format="json")
    assert r.status_code == 400, r.json()
    assert rule in " ".join(r.json()[field]), r.json()
    assert Wall.objects.filter(job=world.job).count() == 1
    assert SealPoint.objects.count() == before
    assert not Event.objects.exists()


def test_wall_type_of_another_job_is_refused(world, api):
    other_type = world.other_wall.wall_type
    r = api(world.inspector).post(url(world.job), body(world, wall_type=other_type.id), format="json")
    assert r.status_code == 400 and "Invalid pk" in r.json()["wall_type"][0]
    assert Wall.objects.filter(job=world.job).count() == 1


def test_update_bumps_version_and_records_fields(world, api):
    r = api(world.inspector).patch(url(world.job, world.wall.pk), {"height": 3.0}, format="json")
    assert r.status_code == 200, r.json()
    world.wall.refresh_from_db()
    assert world.wall.height_m == 3.0 and world.wall.version == 2
    assert Event.objects.get(verb="wall.changed").data == {"fields": ["height_m"]}


def test_bad_update_changes_nothing(world, api):
    r = api(world.inspector).patch(
        url(world.job, world.wall.pk), {"height": -1, "location": "moved"}, format="json"
    )
    assert r.status_code == 400
    world.wall.refresh_from_db()
    assert (world.wall.height_m, world.wall.location, world.wall.version) == (2.7, "between 201 and 202", 1)


def test_another_jobs_wall_is_404(world, api):
    client = api(world.inspector)
    theirs = world.other_wall
    assert client.get(url(world.job, theirs.pk)).status_code == 404
    assert client.patch(url(world.job, theirs.pk), {"height": 3}, format="json").status_code == 404
    assert client.delete(url(world.job, theirs.pk)).status_code == 404
    assert client.get(url(world.other_job)).status_code == 404
    theirs.refresh_from_db()
    assert theirs.height_m == 2.7 and not theirs.removed


@pytest.mark.parametrize(
    "method, on_item", [("put", False), ("delete", False), ("patch", False), ("post", True)]
)
def test_wrong_method_is_405(world, api, method, on_item):
    target = url(world.job, world.wall.pk) if on_item else url(world.job)
    assert getattr(api(world.inspector), method)(target, {}, format="json").status_code == 405


@pytest.mark.parametrize("role", ROLES)
def test_who_sees_walls(world, api, role):
    client = as_role(world, api, role)
    assert client.get(url(world.job)).status_code == SEE[role]
    assert client.get(url(world.job, world.wall.pk)).status_code == SEE[role]


@pytest.mark.parametrize("role", ROLES)
def test_who_adds_changes_and_removes_walls(world, api, role):
    client = as_role(world, api, role)
    assert client.post(url(world.job), body(world), format="json").status_code == (EDIT[role] or 201)
    assert client.patch(url(world.job, world.wall.pk), {"location": "here"}, format="json").status_code == (
        EDIT[role] or 200
    )
    assert client.delete(url(world.job, world.wall.pk)).status_code == (EDIT[role] or 204)
    world.wall.refresh_from_db()
    if role == "inspector":
        assert world.wall.removed and world.wall.location == "here" and world.wall.version == 3
        assert [e.verb for e in Event.objects.all()] == ["wall.created", "wall.changed", "wall.removed"]
        assert client.get(url(world.job, world.wall.pk)).status_code == 404
        assert world.wall.seal_points.exists()  # kept in the record, not deleted
    else:
        assert not world.wall.removed and world.wall.version == 1
        assert Wall.objects.filter(job=world.job).count() == 1
        assert not Event.objects.exists()
