"""Where along the wall a defect is: a distance from a named end (job size units) and low / middle / high,
recorded through the API and the walk, shown on the wall page and printed in the punch-list CSV."""

from __future__ import annotations

import csv
import io
import uuid

import pytest

from qa.models import Finding
from qa.report import punch_list_csv

pytestmark = pytest.mark.django_db


def body(world, **extra):
    point = world.wall.seal_points.order_by("position").first()
    return {
        "wall": world.wall.id,
        "seal_point": point.id,
        "kind": "hole",
        "face": "a",
        "diameter": 20,
        "trade": "electrical",
        **extra,
    }


def url(world) -> str:
    return f"/api/jobs/{world.job.id}/findings/"


def test_position_is_stored_in_si_and_answered_in_the_jobs_units(world, api):
    r = api(world.inspector).post(
        url(world), body(world, along=1.25, along_from="end", height_band="low"), format="json"
    )
    assert r.status_code == 201, r.json()
    f = Finding.objects.get()
    assert (f.along_m, f.along_from, f.height_band) == (1.25, "end", "low")
    assert (r.json()["along"], r.json()["along_from"], r.json()["height_band"]) == (1.25, "end", "low")


def test_imperial_job_gives_the_distance_in_feet(world, api):
    world.job.units = "imperial"
    world.job.save()
    r = api(world.inspector).post(url(world), body(world, diameter=0.75, along=10), format="json")
    assert r.status_code == 201, r.json()
    f = Finding.objects.get()
    assert f.along_m == pytest.approx(3.048, rel=1e-12)  # 10 ft, 0.3048 m exact (1959 international foot)
    assert f.along_from == "start", "a distance with no end named is measured from the start"


@pytest.mark.parametrize("along", [-0.1, 6.01])
def test_a_distance_off_the_wall_is_refused_naming_the_field(world, api, along):
    r = api(world.inspector).post(url(world), body(world, along=along), format="json")
    assert r.status_code == 400 and "along" in r.json(), r.json()
    assert not Finding.objects.exists()


def test_a_height_band_outside_the_choices_is_refused(world, api):
    r = api(world.inspector).post(url(world), body(world, height_band="ceiling"), format="json")
    assert r.status_code == 400 and "height_band" in r.json()


def test_the_walk_can_move_a_defect_along_the_wall(world, api):
    client_id = str(uuid.uuid4())
    create = {
        "op_id": str(uuid.uuid4()),
        "kind": "finding.create",
        "payload": {**body(world), "client_id": client_id},
    }
    move = {
        "op_id": str(uuid.uuid4()),
        "kind": "finding.update",
        "base_version": 1,
        "payload": {"finding": client_id, "changes": {"along": 2.5, "height_band": "high"}},
    }
    r = api(world.inspector).post(f"/api/jobs/{world.job.id}/sync/", {"ops": [create, move]}, format="json")
    assert [a["status"] for a in r.json()["results"]] == ["applied", "applied"]
    f = Finding.objects.get()
    assert (f.along_m, f.along_from, f.height_band, f.version) == (2.5, "start", "high", 2)


def test_wall_page_and_csv_say_where_the_defect_is(world, api, client):
    api(world.inspector).post(url(world), body(world, along=1.5, height_band="middle"), format="json")
    client.force_login(world.inspector)
    page = client.get(f"/jobs/{world.job.id}/walls/{world.wall.id}/").content.decode()
    expected = f"1.5 m from the left end (seen from {world.wall.face_a_label}), middle"
    assert expected in page
    rows = list(csv.DictReader(io.StringIO(punch_list_csv(world.job).lstrip("\ufeff"))))
    assert rows[0]["position"] == expected
