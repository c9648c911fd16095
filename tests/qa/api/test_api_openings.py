"""Openings API: /api/jobs/{job}/walls/{wall}/openings/. The ladder of STYLE.md; roles as DESIGN.md."""

from __future__ import annotations

import pytest

from qa.checklists import template_for
from qa.models import Event, Opening
from tests.qa.roles import EDIT, ROLES, SEE, as_role

pytestmark = pytest.mark.django_db

DOOR_KEYS = {t.key for t in template_for("door")}


def url(job, wall, *rest) -> str:
    return "/".join([f"/api/jobs/{job.id}/walls/{wall.id}/openings", *map(str, rest)]) + "/"


def body(**over) -> dict:
    data = {"kind": "door", "label": "Entry", "width": 0.91, "height": 2.13, "rating": 30, "fire_rated": True}
    data.update(over)
    return {k: v for k, v in data.items() if v is not ...}


def door_points(wall) -> set[str]:
    return set(wall.seal_points.filter(template_key__in=DOOR_KEYS).values_list("template_key", flat=True))


def test_first_door_brings_the_door_checklist_once(world, api):
    client = api(world.inspector)
    assert door_points(world.wall) == set()
    r = client.post(url(world.job, world.wall), body(), format="json")
    assert r.status_code == 201, r.json()
    opening = Opening.objects.get(pk=r.json()["id"])
    assert (opening.width_m, opening.height_m, opening.rating) == (0.91, 2.13, 30)
    assert door_points(world.wall) == DOOR_KEYS
    count = world.wall.seal_points.count()
    assert client.post(url(world.job, world.wall), body(label="Second"), format="json").status_code == 201
    assert world.wall.seal_points.count() == count  # no twin checklist
    assert Event.objects.filter(verb="opening.created").count() == 2


def test_window_brings_no_door_checklist(world, api):
    r = api(world.inspector).post(
        url(world.job, world.wall), body(kind="window", rating=..., tl=[20.0] * 21), format="json"
    )
    assert r.status_code == 201, r.json()
    assert door_points(world.wall) == set()


def test_imperial_opening_in_feet(world, api):
    world.job.units = "imperial"
    world.job.save()
    r = api(world.inspector).post(url(world.job, world.wall), body(width=3, height=7), format="json")
    assert r.status_code == 201, r.json()
    opening = Opening.objects.get(pk=r.json()["id"])
    assert opening.width_m == pytest.approx(0.9144) and opening.height_m == pytest.approx(2.1336)


RULES = [
    ({"width": -0.9}, "width", "must be at least 0.05 m"),
    ({"width": 0}, "width", "must be at least 0.05 m"),
    ({"width": 50}, "width", "must be at most 20 m"),
    ({"height": 1e308}, "height", "not a plausible value"),
    ({"height": "Infinity"}, "height", "valid number"),
    ({"height": "tall"}, "height", "valid number"),
    ({"width": 6, "height": 2.7}, "width", "as large as the wall or larger"),  # wall is 6 × 2.7 m
    ({"width": 6.5}, "width", "wider than the wall"),
    ({"height": 2.8}, "height", "taller than the wall"),
    ({"rating": ...}, "rating", "give a TL curve or a rating"),
    ({"rating": 300}, "rating", "less than or equal to 100"),
    ({"kind": "hatch"}, "kind", "not a valid choice"),
    ({"tl": [20.0] * 5}, "tl", "needs 21 values"),
    ({"fire_rated": "maybe"}, "fire_rated", "valid boolean"),
]


@pytest.mark.parametrize("change, field, rule", RULES, ids=[f"{f}-{i}" for i, (_, f, _) in enumerate(RULES)])
def test_bad_input_is_refused_naming_field_and_rule(world, api, change, field, rule):
    points = world.wall.seal_points.count()
    r = api(world.inspector).post(url(world.job, world.wall), body(**change), format="json")
    assert r.status_code == 400, r.json()
    assert rule in str(r.json()[field]), r.json()
    assert not Opening.objects.exists()
    assert world.wall.seal_points.count() == points  # the door checklist was not half-added
    assert not Event.objects.exists()


def test_update_and_remove_write_events(world, api):
    opening = Opening.objects.create(wall=world.wall, width_m=0.9, height_m=2.1, rating=30)
    client = api(world.inspector)
    assert (
        client.patch(url(world.job, world.wall, opening.pk), {"rating": 35}, format="json").status_code == 200
    )
    r = client.patch(url(world.job, world.wall, opening.pk), {"width": -1, "label": "x"}, format="json")
    assert r.status_code == 400
    assert client.delete(url(world.job, world.wall, opening.pk)).status_code == 204
    opening.refresh_from_db()
    assert (opening.rating, opening.label, opening.removed) == (35, "", True)
    assert [e.verb for e in Event.objects.all()] == ["opening.changed", "opening.removed"]
    assert client.get(url(world.job, world.wall, opening.pk)).status_code == 404


def test_another_jobs_wall_and_opening_are_404(world, api):
    theirs = Opening.objects.create(wall=world.other_wall, width_m=0.9, height_m=2.1, rating=30)
    client = api(world.inspector)
    # Their wall through our job, and our job's URL with their opening under our wall.
    assert client.get(url(world.job, world.other_wall)).status_code == 404
    assert client.post(url(world.job, world.other_wall), body(), format="json").status_code == 404
    assert client.get(url(world.job, world.wall, theirs.pk)).status_code == 404
    assert client.delete(url(world.job, world.wall, theirs.pk)).status_code == 404
    theirs.refresh_from_db()
    assert not theirs.removed and Opening.objects.count() == 1


def test_removed_wall_is_404(world, api):
    world.wall.removed = True
    world.wall.save()
    assert api(world.inspector).get(url(world.job, world.wall)).status_code == 404


@pytest.mark.parametrize("method, on_item", [("put", False), ("delete", False), ("post", True)])
def test_wrong_method_is_405(world, api, method, on_item):
    opening = Opening.objects.create(wall=world.wall, width_m=0.9, height_m=2.1, rating=30)
    target = url(world.job, world.wall, opening.pk) if on_item else url(world.job, world.wall)
    assert getattr(api(world.inspector), method)(target, {}, format="json").status_code == 405


@pytest.mark.parametrize("role", ROLES)
def test_who_sees_openings(world, api, role):
    opening = Opening.objects.create(wall=world.wall, width_m=0.9, height_m=2.1, rating=30)
    client = as_role(world, api, role)
    assert client.get(url(world.job, world.wall)).status_code == SEE[role]
    assert client.get(url(world.job, world.wall, opening.pk)).status_code == SEE[role]


@pytest.mark.parametrize("role", ROLES)
def test_who_adds_changes_and_removes_openings(world, api, role):
    opening = Opening.objects.create(wall=world.wall, width_m=0.9, height_m=2.1, rating=30)
    client = as_role(world, api, role)
    assert client.post(url(world.job, world.wall), body(), format="json").status_code == (EDIT[role] or 201)
    assert client.patch(
        url(world.job, world.wall, opening.pk), {"rating": 40}, format="json"
    ).status_code == (EDIT[role] or 200)
    assert client.delete(url(world.job, world.wall, opening.pk)).status_code == (EDIT[role] or 204)
    opening.refresh_from_db()
    if role == "inspector":
        assert opening.rating == 40 and opening.removed and Opening.objects.count() == 2
    else:
        assert opening.rating == 30 and not opening.removed and Opening.objects.count() == 1
        assert not Event.objects.exists() and door_points(world.wall) == set()
