"""Rooms, junctions, building kind, field prediction and test plan APIs: the ladder of STYLE.md.

/api/jobs/{job}/walls/{wall}/rooms/, .../junctions/, .../field-prediction/, /api/jobs/{job}/test-plan/
(and test-plan.csv), /api/jobs/{job}/building-kind/, /api/jobs/{job}/field-targets/.
"""

from __future__ import annotations

import csv
import io

import pytest

from qa.field.inputs import CAUTION
from qa.field.plan import CSV_HEADER
from qa.models import Event, Finding, JunctionOverride, RoomPair, Wall
from tests.qa.roles import EDIT, ROLES, SEE, as_role

pytestmark = pytest.mark.django_db


def rooms_url(job, wall, *rest) -> str:
    return "/".join([f"/api/jobs/{job.id}/walls/{wall.id}/rooms", *map(str, rest)]) + "/"


def junctions_url(job, wall, *rest) -> str:
    return "/".join([f"/api/jobs/{job.id}/walls/{wall.id}/junctions", *map(str, rest)]) + "/"


def rooms(**over) -> dict:
    data = {
        "label": "Unit 201 to unit 202",
        "source_volume_m3": 48.0,
        "receiving_volume_m3": 40.0,
        "receiving_t_s": 0.6,
        "area_m2": 14.0,
    }
    data.update(over)
    return {k: v for k, v in data.items() if v is not ...}


def test_rooms_happy_path_and_prediction_follows(world, api):
    client = api(world.inspector)
    before = client.get(f"/api/jobs/{world.job.id}/walls/{world.wall.id}/field-prediction/").json()
    r = client.post(rooms_url(world.job, world.wall), rooms(), format="json")
    assert r.status_code == 201, r.json()
    pair = RoomPair.objects.get(pk=r.json()["id"])
    pair.refresh_from_db()
    assert (pair.receiving_volume_m3, pair.receiving_t_s, pair.area_m2) == (40.0, 0.6, 14.0)
    after = client.get(f"/api/jobs/{world.job.id}/walls/{world.wall.id}/field-prediction/").json()
    assert after["pairs"][0]["room_pair"] == pair.pk and before["pairs"][0]["room_pair"] is None
    assert after["pairs"][0]["rooms"]["defaults"] == []
    assert after["caution"] == CAUTION and "not a field test" in CAUTION
    r = client.patch(rooms_url(world.job, world.wall, pair.pk), {"receiving_t_s": 0.9}, format="json")
    assert r.status_code == 200
    pair.refresh_from_db()
    assert pair.receiving_t_s == 0.9 and pair.area_m2 == 14.0
    assert client.delete(rooms_url(world.job, world.wall, pair.pk)).status_code == 204
    assert not RoomPair.objects.exists()
    assert [e.verb for e in Event.objects.order_by("id")] == [
        "rooms.created",
        "rooms.changed",
        "rooms.removed",
    ]


ROOM_RULES = [
    ({"receiving_volume_m3": -40.0}, "receiving_volume_m3", "must be > 0 m³"),
    ({"source_volume_m3": 0}, "source_volume_m3", "must be > 0 m³"),
    ({"source_volume_m3": 2e5}, "source_volume_m3", "at most"),
    ({"receiving_t_s": 0}, "receiving_t_s", "reverberation time must be > 0 s"),
    ({"receiving_t_s": 25}, "receiving_t_s", "at most 20 s"),
    ({"receiving_t_s": "NaN"}, "receiving_t_s", "valid number"),
    ({"area_m2": 99.0}, "area_m2", "at most the wall's area"),
    ({"field_target": 45}, "field_target", "together"),
    ({"field_descriptor": "stc", "field_target": 45}, "field_descriptor", "not a valid choice"),
    ({"source_face": "c"}, "source_face", "not a valid choice"),
]


@pytest.mark.parametrize(
    "change, field, rule", ROOM_RULES, ids=[f"{f}-{i}" for i, (_, f, _) in enumerate(ROOM_RULES)]
)
def test_bad_rooms_are_refused_naming_field_and_rule(world, api, change, field, rule):
    r = api(world.inspector).post(rooms_url(world.job, world.wall), rooms(**change), format="json")
    assert r.status_code == 400, r.json()
    assert rule in str(r.json()[field]), r.json()
    assert not RoomPair.objects.exists() and not Event.objects.exists()


def test_junction_override_and_its_rules(world, api):
    client = api(world.inspector)
    r = client.post(
        junctions_url(world.job, world.wall),
        {"position": "floor", "kind": "rigid_cross", "element_from": "concrete_masonry"},
        format="json",
    )
    assert r.status_code == 201, r.json()
    j = JunctionOverride.objects.get()
    j.refresh_from_db()
    assert (j.position, j.kind, j.element_from) == ("floor", "rigid_cross", "concrete_masonry")
    pred = client.get(f"/api/jobs/{world.job.id}/walls/{world.wall.id}/field-prediction/").json()
    assert pred["pairs"][0]["junctions"]["floor"] == {
        "kind": "rigid_cross",
        "element": "concrete slab 200 mm",
    }
    again = client.post(
        junctions_url(world.job, world.wall), {"position": "floor", "kind": "rigid_t"}, format="json"
    )
    assert again.status_code == 400 and "already has a junction" in str(again.json()["position"])
    bad = client.post(
        junctions_url(world.job, world.wall), {"position": "roof", "kind": "rigid_t"}, format="json"
    )
    assert bad.status_code == 400 and "not a valid choice" in str(bad.json()["position"])
    assert JunctionOverride.objects.count() == 1


def test_building_kind_read_by_all_set_by_the_inspector(world, api):
    path = f"/api/jobs/{world.job.id}/building-kind/"
    assert api(world.owner).get(path).json() == {"building_kind": "wood_frame"}
    assert api(world.owner).put(path, {"building_kind": "clt"}, format="json").status_code == 403
    r = api(world.inspector).put(path, {"building_kind": "timber"}, format="json")
    assert r.status_code == 400 and "not a valid choice" in str(r.json()["building_kind"])
    assert api(world.inspector).put(path, {"building_kind": "clt"}, format="json").status_code == 200
    world.job.refresh_from_db()
    assert world.job.building_kind == "clt"
    pred = (
        api(world.inspector).get(f"/api/jobs/{world.job.id}/walls/{world.wall.id}/field-prediction/").json()
    )
    assert pred["building_kind"] == "clt"


def test_field_targets_read_by_all_set_by_the_inspector_and_used(world, api):
    path = f"/api/jobs/{world.job.id}/field-targets/"
    pred_path = f"/api/jobs/{world.job.id}/walls/{world.wall.id}/field-prediction/"
    assert api(world.owner).get(path).json() == {"field_targets": []}
    rules = {"field_targets": [{"wall_type": world.wall_type.code, "descriptor": "dnt_w", "value": 50}]}
    assert api(world.owner).put(path, rules, format="json").status_code == 403
    assert api(world.inspector).get(pred_path).json()["pairs"][0]["target"]["derived"] is True
    r = api(world.inspector).put(path, rules, format="json")
    assert r.status_code == 200 and r.json() == {"field_targets": rules["field_targets"]}
    target = api(world.inspector).get(pred_path).json()["pairs"][0]["target"]
    assert (target["descriptor"], target["value"], target["derived"]) == ("dnt_w", 50, False)
    assert Event.objects.filter(verb="job.field_targets").count() == 1


@pytest.mark.parametrize(
    "rules, rule",
    [
        ([{"wall_type": "ZZ", "descriptor": "astc", "value": 45}], "is not a wall type of this job"),
        (
            [{"descriptor": "astc", "value": 45}, {"descriptor": "nnic", "value": 45}],
            "one target per kind of wall",
        ),
        ([{"descriptor": "stc", "value": 45}], "not a valid choice"),
        ([{"descriptor": "astc", "value": 400}], "less than or equal to 100"),
        ([{"descriptor": "astc"}], "required"),
        ("astc 45", "Expected a list"),
        ([{"descriptor": "astc", "value": 45}] * 101, "no more than 100 elements"),
    ],
)
def test_bad_field_targets_are_400s_naming_the_field_and_nothing_is_stored(world, api, rules, rule):
    path = f"/api/jobs/{world.job.id}/field-targets/"
    r = api(world.inspector).put(path, {"field_targets": rules}, format="json")
    assert r.status_code == 400 and "field_targets" in r.json(), r.json()
    assert rule in str(r.json()["field_targets"])
    world.job.refresh_from_db()
    assert world.job.field_targets == []


def test_test_plan_ranks_by_margin_then_by_the_walk(world, api):
    second = Wall.objects.create(
        job=world.job,
        wall_type=world.wall_type,
        tag="2-02",
        level="2",
        length_m=4.0,
        height_m=2.7,
        target_rating=50,
    )
    Finding.objects.create(
        job=world.job,
        wall=second,
        kind="slit",
        face="through",
        trade="drywall",
        width_m=0.01,
        length_m=2.7,
        created_by=world.inspector,
    )
    plan = api(world.owner).get(f"/api/jobs/{world.job.id}/test-plan/").json()
    assert [r["tag"] for r in plan["rows"]] == ["2-02", "2-01"]  # the slit costs 2-02 its margin
    first = plan["rows"][0]
    assert first["margin"] < plan["rows"][1]["margin"] and first["findings"] == 1 and first["walk_cost"] > 0
    assert first["descriptor"] == "ASTC" and first["target"] == 45 and first["target_derived"]
    assert plan["by_walk"][0] == second.pk and plan["caution"] == CAUTION
    r = api(world.electrician).get(f"/api/jobs/{world.job.id}/test-plan.csv")
    assert r.status_code == 200 and r["Content-Type"].startswith("text/csv")
    rows = list(csv.reader(io.StringIO(r.content.decode())))
    assert rows[0] == CSV_HEADER and [row[1] for row in rows[1:]] == ["2-02", "2-01"]


@pytest.mark.parametrize("role", ROLES)
def test_who_sees_and_who_edits(world, api, role):
    client = as_role(world, api, role)
    base = f"/api/jobs/{world.job.id}"
    for path in (
        rooms_url(world.job, world.wall),
        junctions_url(world.job, world.wall),
        f"{base}/walls/{world.wall.id}/field-prediction/",
        f"{base}/test-plan/",
        f"{base}/test-plan.csv",
        f"{base}/building-kind/",
    ):
        assert client.get(path).status_code == SEE[role], path
    r = client.post(rooms_url(world.job, world.wall), rooms(), format="json")
    assert r.status_code == (EDIT[role] or 201)
    r = client.post(
        junctions_url(world.job, world.wall), {"position": "end_a", "kind": "rigid_t"}, format="json"
    )
    assert r.status_code == (EDIT[role] or 201)
    assert RoomPair.objects.count() == JunctionOverride.objects.count() == (1 if role == "inspector" else 0)


def test_another_jobs_wall_is_404_everywhere(world, api):
    client = api(world.inspector)
    theirs = RoomPair.objects.create(wall=world.other_wall, receiving_volume_m3=30)
    assert client.get(rooms_url(world.job, world.other_wall)).status_code == 404
    assert client.get(rooms_url(world.job, world.wall, theirs.pk)).status_code == 404
    assert (
        client.patch(
            rooms_url(world.job, world.wall, theirs.pk), {"receiving_t_s": 1}, format="json"
        ).status_code
        == 404
    )
    assert (
        client.get(f"/api/jobs/{world.job.id}/walls/{world.other_wall.id}/field-prediction/").status_code
        == 404
    )
    assert client.get(f"/api/jobs/{world.other_job.id}/test-plan/").status_code == 404
    theirs.refresh_from_db()
    assert theirs.receiving_t_s is None


def test_wrong_methods_are_405(world, api):
    client = api(world.inspector)
    assert (
        client.post(f"/api/jobs/{world.job.id}/walls/{world.wall.id}/field-prediction/", {}).status_code
        == 405
    )
    assert client.post(f"/api/jobs/{world.job.id}/test-plan/", {}).status_code == 405
    assert client.delete(f"/api/jobs/{world.job.id}/building-kind/").status_code == 405


# --------------------------------------------------------------------------- the wall page's rooms form
def rooms_page_post(world, user, **fields):
    from django.test import Client

    c = Client()
    c.force_login(user)
    data = {"label": "", "source_face": "a", "field_descriptor": "", **fields}
    return c.post(f"/jobs/{world.job.id}/walls/{world.wall.id}/rooms/", data, follow=True)


def test_rooms_form_saves_what_the_api_would_and_the_prediction_uses_it(world, api):
    """One write path: the form and the API store equal rooms and events; the prediction follows."""
    r = rooms_page_post(
        world, world.inspector, label="Unit 201 to unit 202", source_volume_m3="48", receiving_volume_m3="40",
        receiving_t_s="0.6", area_m2="14", field_target="50", field_descriptor="nnic",
    )  # fmt: skip
    html = r.content.decode()
    assert "Rooms saved" in html and 'value="Unit 201 to unit 202"' in html
    page = RoomPair.objects.get(wall=world.wall)
    second = Wall.objects.create(
        job=world.job, wall_type=world.wall_type, tag="2-09", level="2", length_m=world.wall.length_m,
        height_m=world.wall.height_m, target_rating=50,
    )  # fmt: skip
    body = rooms(field_target=50, field_descriptor="nnic")
    assert api(world.inspector).post(rooms_url(world.job, second), body, format="json").status_code == 201
    via_api = RoomPair.objects.get(wall=second)
    skip = {"_state", "id", "wall_id", "created_at", "updated_at"}
    assert {k: v for k, v in vars(page).items() if k not in skip} == {
        k: v for k, v in vars(via_api).items() if k not in skip
    }
    events = list(Event.objects.filter(verb="rooms.created").order_by("id"))
    assert len(events) == 2 and events[0].actor == events[1].actor
    pred = api(world.owner).get(f"/api/jobs/{world.job.id}/walls/{world.wall.id}/field-prediction/").json()
    assert pred["pairs"][0]["target"] == {
        "descriptor": "nnic", "value": 50, "derived": False, "basis": "entered for these rooms",
    }  # fmt: skip

    # Saving again changes the same pair; a blank number goes back to the default.
    rooms_page_post(world, world.inspector, label="Unit 201 to unit 202", receiving_t_s="")
    page.refresh_from_db()
    assert RoomPair.objects.filter(wall=world.wall).count() == 1 and page.receiving_t_s is None
    assert Event.objects.filter(verb="rooms.changed").count() == 1


def test_rooms_form_refuses_bad_input_beside_the_form_and_keeps_it(world):
    r = rooms_page_post(world, world.inspector, receiving_volume_m3="-5", label="Kept label")
    html = r.content.decode()
    note = html.split("data-rooms-messages>", 1)[1].split("</div>", 1)[0]
    assert "Rooms not saved" in note and "receiving_volume_m3" in note
    assert 'id="rooms-form" open' in html and 'value="Kept label"' in html and 'value="-5"' in html
    assert not RoomPair.objects.exists()


@pytest.mark.parametrize("role", ["owner", "crew", "outsider"])
def test_rooms_form_is_for_those_who_may_edit(world, role):
    user = {"owner": world.owner, "crew": world.electrician, "outsider": world.outsider}[role]
    r = rooms_page_post(world, user, source_volume_m3="40")
    assert r.status_code in (403, 404) and not RoomPair.objects.exists()


# --------------------------------------------------------------------------- the wall page's junctions form
def junctions_page_post(world, user, **fields):
    from django.test import Client

    c = Client()
    c.force_login(user)
    data = {f"{k}_{p}": "" for p in ("floor", "ceiling", "end_a", "end_b") for k in ("kind", "from")}
    data.update(fields)
    return c.post(f"/jobs/{world.job.id}/walls/{world.wall.id}/junctions/", data, follow=True)


def prediction(world, api) -> dict:
    return api(world.owner).get(f"/api/jobs/{world.job.id}/walls/{world.wall.id}/field-prediction/").json()


def test_junctions_form_saves_what_the_api_would_and_the_prediction_uses_it(world, api):
    before = prediction(world, api)
    r = junctions_page_post(
        world,
        world.inspector,
        kind_floor="rigid_t",
        from_floor="concrete_masonry",
        kind_end_a="light_interrupted",
    )
    html = r.content.decode()
    assert "Junctions saved" in html
    stored = {j.position: (j.kind, j.element_from) for j in JunctionOverride.objects.filter(wall=world.wall)}
    assert stored == {"floor": ("rigid_t", "concrete_masonry"), "end_a": ("light_interrupted", "")}
    assert Event.objects.filter(verb="junction.created").count() == 2
    assert '<option value="rigid_t" selected>' in html, "the form shows what is stored"
    after = prediction(world, api)
    assert after != before, "the prediction uses the entered junctions"
    # The same junction through the API leaves an equal row (one write path).
    second = Wall.objects.create(
        job=world.job, wall_type=world.wall_type, tag="2-09", level="2", length_m=world.wall.length_m,
        height_m=world.wall.height_m, target_rating=50,
    )  # fmt: skip
    body = {"position": "floor", "kind": "rigid_t", "element_from": "concrete_masonry"}
    assert api(world.inspector).post(junctions_url(world.job, second), body, format="json").status_code == 201
    via_api = JunctionOverride.objects.get(wall=second)
    assert (via_api.position, via_api.kind, via_api.element_from) == ("floor", "rigid_t", "concrete_masonry")

    # Back to "default": the entered junction goes, with its event; the other stays.
    junctions_page_post(world, world.inspector, kind_floor="rigid_t", from_floor="concrete_masonry")
    assert set(JunctionOverride.objects.filter(wall=world.wall).values_list("position", flat=True)) == {
        "floor"
    }
    removed = Event.objects.get(verb="junction.removed")
    assert removed.data["was"]["kind"] == "light_interrupted"


def test_junctions_form_refuses_bad_input_beside_the_form_and_stores_none_of_it(world):
    JunctionOverride.objects.create(wall=world.wall, position="ceiling", kind="rigid_t")
    r = junctions_page_post(
        world, world.inspector, kind_floor="rigid_t", kind_end_b="bolted_on", from_end_b="wood_frame"
    )
    html = r.content.decode()
    note = html.split("data-junctions-messages>", 1)[1].split("</div>", 1)[0]
    assert "Junctions not saved" in note and "End B" in note and "kind" in note
    assert 'id="junctions-form" open' in html
    stored = {j.position: j.kind for j in JunctionOverride.objects.filter(wall=world.wall)}
    assert stored == {"ceiling": "rigid_t"}, "nothing half-stored: no floor, and the ceiling not removed"
    assert '<option value="rigid_t" selected>' in html, "what was typed comes back"


@pytest.mark.parametrize("role", ["owner", "crew", "outsider"])
def test_junctions_form_is_for_those_who_may_edit(world, role):
    user = {"owner": world.owner, "crew": world.electrician, "outsider": world.outsider}[role]
    r = junctions_page_post(world, user, kind_floor="rigid_t")
    assert r.status_code in (403, 404) and not JunctionOverride.objects.exists()
