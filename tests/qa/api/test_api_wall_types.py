"""Wall types API: /api/jobs/{job}/wall-types/. The ladder of STYLE.md; roles as DESIGN.md.

FLAT_50 (tests/conftest.py) is an invented lab-type curve; its STC is 50 by ASTM E413 (the
contour sits at 50 with no deficiencies: common practice to build a curve this way, no source).
"""

from __future__ import annotations

import pytest

from qa.models import Event, WallType
from tests.qa.roles import EDIT, ROLES, SEE, as_role

pytestmark = pytest.mark.django_db


FLAT_50 = [18, 22, 26, 29, 32, 35, 38, 41, 44, 47, 48, 49, 50, 51, 52, 52, 52, 52, 52, 52, 52]


def url(job, *rest) -> str:
    return "/".join([f"/api/jobs/{job.id}/wall-types", *map(str, rest)]) + "/"


def body(**over) -> dict:
    data = {
        "code": "T2",
        "name": "Steel stud, two layers each face",
        "construction": "steel_stud",
        "tl": FLAT_50,
        "tl_source": "lab",
        "lab_reference": "Lab report 123 (invented)",
        "rating_scheme": "stc",
        "thickness": 150,
        "fire_rated": True,
    }
    data.update(over)
    return {k: v for k, v in data.items() if v is not ...}


def test_inspector_adds_a_lab_wall_type_and_gets_its_rating(world, api):
    r = api(world.inspector).post(url(world.job), body(), format="json")
    assert r.status_code == 201, r.json()
    wall_type = WallType.objects.get(pk=r.json()["id"])
    assert wall_type.thickness_m == pytest.approx(0.150) and r.json()["thickness"] == 150
    assert wall_type.tl == FLAT_50
    assert wall_type.design_rating == r.json()["design_rating"] == 50
    assert Event.objects.get(verb="walltype.created").data == {"code": "T2"}


def test_missing_bands_are_allowed_as_null(world, api):
    tl = [None] * 2 + FLAT_50[2:]  # 50 and 63 Hz not measured; STC needs only 125–4000 Hz
    r = api(world.inspector).post(url(world.job), body(tl=tl), format="json")
    assert r.status_code == 201, r.json()
    assert r.json()["tl"][:2] == [None, None] and r.json()["design_rating"] == 50


def test_imperial_thickness_in_inches(world, api):
    world.job.units = "imperial"
    world.job.save()
    r = api(world.inspector).post(url(world.job), body(thickness=4.875), format="json")
    assert r.status_code == 201, r.json()
    assert WallType.objects.get(pk=r.json()["id"]).thickness_m == pytest.approx(0.123825, rel=1e-12)


RULES = [
    ({"thickness": -120}, "thickness", "must be at least 20 mm"),
    ({"thickness": 0}, "thickness", "must be at least 20 mm"),
    ({"thickness": 5000}, "thickness", "must be at most 1000 mm"),
    ({"thickness": 1e308}, "thickness", "not a plausible value"),
    ({"thickness": ...}, "thickness", "required"),
    ({"tl": FLAT_50[:20]}, "tl", "needs 21 values"),
    ({"tl": [True] * 21}, "tl", "valid number"),
    ({"tl": ["loud"] * 21}, "tl", "valid number"),
    ({"tl": [5000] * 21}, "tl", "not a plausible value"),
    ({"tl": [200] * 21}, "tl", "outside"),
    ({"tl": "50"}, "tl", "list"),
    ({"tl": []}, "tl", "needs its TL curve"),
    ({"tl_source": "guess"}, "tl_source", "not a valid choice"),
    ({"tl_source": "predicted", "tl": ...}, "layers", "needs its layers"),
    ({"construction": "straw_bale"}, "construction", "not a valid choice"),
    ({"rating_scheme": "oitc"}, "rating_scheme", "not a valid choice"),
    ({"code": "T1"}, "code", "already used"),
    ({"code": ""}, "code", "may not be blank"),
]


@pytest.mark.parametrize("change, field, rule", RULES, ids=[f"{f}-{i}" for i, (_, f, _) in enumerate(RULES)])
def test_bad_input_is_refused_naming_field_and_rule(world, api, change, field, rule):
    r = api(world.inspector).post(url(world.job), body(**change), format="json")
    assert r.status_code == 400, r.json()
    assert rule in str(r.json()[field]), r.json()
    assert WallType.objects.filter(job=world.job).count() == 1
    assert not Event.objects.exists()


def test_nan_band_is_refused(world, api):
    r = api(world.inspector).post(url(world.job), body(tl=["NaN"] + FLAT_50[1:]), format="json")
    assert r.status_code == 400 and "tl" in r.json()


def test_same_code_on_another_job_is_fine(world, api):
    r = api(world.inspector).post(url(world.job), body(code="X1"), format="json")  # X1 exists on other_job
    assert r.status_code == 201


def test_update_recomputes_rating_and_bad_update_changes_nothing(world, api):
    client = api(world.inspector)
    louder = [v + 5 for v in FLAT_50]
    r = client.patch(url(world.job, world.wall_type.pk), {"tl": louder}, format="json")
    assert r.status_code == 200, r.json()
    world.wall_type.refresh_from_db()
    assert world.wall_type.design_rating == 55  # every band +5 dB moves the E413 contour by 5
    r = client.patch(url(world.job, world.wall_type.pk), {"thickness": -1, "name": "renamed"}, format="json")
    assert r.status_code == 400
    world.wall_type.refresh_from_db()
    assert world.wall_type.name == "Test stud wall" and world.wall_type.thickness_m == 0.12
    assert [e.verb for e in Event.objects.all()] == ["walltype.changed"]


def test_another_jobs_wall_type_is_404(world, api):
    theirs = world.other_wall.wall_type
    client = api(world.inspector)
    assert client.get(url(world.job, theirs.pk)).status_code == 404
    assert client.patch(url(world.job, theirs.pk), {"name": "mine"}, format="json").status_code == 404
    theirs.refresh_from_db()
    assert theirs.name == "Other"


@pytest.mark.parametrize(
    "method, on_item", [("put", False), ("delete", False), ("delete", True), ("post", True)]
)
def test_wrong_method_is_405(world, api, method, on_item):
    target = url(world.job, world.wall_type.pk) if on_item else url(world.job)
    assert getattr(api(world.inspector), method)(target, {}, format="json").status_code == 405
    assert WallType.objects.filter(pk=world.wall_type.pk).exists()


@pytest.mark.parametrize("role", ROLES)
def test_who_sees_wall_types(world, api, role):
    client = as_role(world, api, role)
    assert client.get(url(world.job)).status_code == SEE[role]
    assert client.get(url(world.job, world.wall_type.pk)).status_code == SEE[role]


@pytest.mark.parametrize("role", ROLES)
def test_who_adds_and_changes_wall_types(world, api, role):
    client = as_role(world, api, role)
    assert client.post(url(world.job), body(), format="json").status_code == (EDIT[role] or 201)
    assert client.patch(
        url(world.job, world.wall_type.pk), {"name": "renamed"}, format="json"
    ).status_code == (EDIT[role] or 200)
    world.wall_type.refresh_from_db()
    expected = 2 if role == "inspector" else 1
    assert WallType.objects.filter(job=world.job).count() == expected
    assert (world.wall_type.name == "renamed") is (role == "inspector")
    assert Event.objects.count() == (2 if role == "inspector" else 0)
