"""Findings API: /api/jobs/{job}/findings/ and the fix / verify / reopen steps.

The ladder: happy path, each validation rule, another job's object → 404, wrong method → 405,
each role exactly as the Roles table of DESIGN.md, then what the database holds afterwards.
Unit conversions: 1 in = 25.4 mm exactly (NIST SP 811, Appendix B).
"""

from __future__ import annotations

import uuid

import pytest

from qa.models import Event, Finding, SealPoint, Wall
from tests.qa.roles import EDIT, ROLES, SEE, as_role

pytestmark = pytest.mark.django_db

NOT_SIGNED_IN = "Authentication credentials were not provided."


def url(job, *rest) -> str:
    return "/".join([f"/api/jobs/{job.id}/findings", *map(str, rest)]) + "/"


def point_of(wall, fragment: str = "bottom") -> SealPoint:
    return next(p for p in wall.seal_points.all() if fragment in p.template_key)


def slit(world, **over) -> dict:
    """A 6 mm × 900 mm slit under face A, in the metric job's units (mm)."""
    body = {
        "wall": world.wall.id,
        "seal_point": point_of(world.wall).id,
        "kind": "slit",
        "face": "a",
        "width": 6,
        "length": 900,
        "depth": 15.9,
        "trade": "drywall",
        "note": "Bead missing under board",
    }
    body.update(over)
    return {k: v for k, v in body.items() if v is not ...}


def make_finding(world, trade="electrical", **over) -> Finding:
    fields = dict(
        job=world.job,
        wall=world.wall,
        kind="hole",
        face="a",
        diameter_m=0.012,
        trade=trade,
        created_by=world.inspector,
    )
    fields.update(over)
    return Finding.objects.create(**fields)


def events(verb: str) -> int:
    return Event.objects.filter(verb=verb).count()


# --- happy path -------------------------------------------------------------------------------


def test_inspector_records_a_slit_in_mm_stored_in_metres(world, api):
    point = point_of(world.wall)
    r = api(world.inspector).post(url(world.job), slit(world), format="json")
    assert r.status_code == 201, r.json()
    body = r.json()
    assert (body["width"], body["length"], body["depth"]) == (6, 900, 15.9)
    assert body["status"] == "open" and body["version"] == 1 and body["created_by"] == "insp"
    finding = Finding.objects.get(pk=body["id"])
    assert finding.width_m == pytest.approx(0.006, rel=1e-12)
    assert finding.length_m == pytest.approx(0.9, rel=1e-12)
    assert finding.depth_m == pytest.approx(0.0159, rel=1e-12)
    point.refresh_from_db()
    assert point.status == "defect" and point.version == 2
    event = Event.objects.get(verb="finding.created", target_id=str(finding.pk))
    assert event.actor == world.inspector and event.job == world.job
    assert event.data == {"wall": "2-01", "kind": "slit", "trade": "drywall", "version": 1}


def test_imperial_job_round_trips_inches(world, api):
    world.job.units = "imperial"
    world.job.save()
    r = api(world.inspector).post(
        url(world.job), slit(world, width=0.25, length=36, depth=...), format="json"
    )
    assert r.status_code == 201, r.json()
    finding = Finding.objects.get(pk=r.json()["id"])
    assert finding.width_m == pytest.approx(0.00635, rel=1e-12)  # 0.25 in × 25.4 mm/in
    assert finding.length_m == pytest.approx(0.9144, rel=1e-12)  # 36 in = 3 ft = 0.9144 m
    assert (r.json()["width"], r.json()["length"]) == (0.25, 36)
    got = api(world.inspector).get(url(world.job, finding.pk)).json()
    assert (got["width"], got["length"]) == (0.25, 36)


def test_open_area_may_be_wider_than_the_wall_is_thick(world, api):
    # The wall type is 120 mm thick; only an open area may have a 200 mm "gap".
    r = api(world.inspector).post(
        url(world.job), slit(world, kind="open_area", width=200, length=300), format="json"
    )
    assert r.status_code == 201, r.json()


def test_bridge_keeps_its_face(world, api):
    """A bridge between leaves is through the wall; a floated board touching the structure bridges one face
    (the resilient-channel template's edge check), so both are accepted as recorded."""
    for face in ("through", "a"):
        r = api(world.inspector).post(
            url(world.job),
            slit(world, kind="bridge", face=face, width=..., length=..., depth=...),
            format="json",
        )
        assert r.status_code == 201, r.json()
        assert Finding.objects.get(pk=r.json()["id"]).face == face


def test_list_filters_by_trade_status_wall_and_level(world, api):
    make_finding(world, "electrical")
    make_finding(world, "drywall", status="fixed")
    client = api(world.owner)
    assert client.get(url(world.job)).json()["count"] == 2
    assert [f["trade"] for f in client.get(url(world.job), {"trade": "drywall"}).json()["results"]] == [
        "drywall"
    ]
    assert client.get(url(world.job), {"status": "fixed"}).json()["count"] == 1
    assert client.get(url(world.job), {"level": "2"}).json()["count"] == 2
    assert client.get(url(world.job), {"level": "7"}).json()["count"] == 0
    assert client.get(url(world.job), {"wall": world.wall.id}).json()["count"] == 2
    assert client.get(url(world.job), {"wall": "abc"}).json()["count"] == 0


# --- validation -------------------------------------------------------------------------------

# (change to the body, field named in the answer, words of the rule)
RULES = [
    ({"width": -6}, "width", "greater than zero"),
    ({"width": 0}, "width", "greater than zero"),
    ({"width": 1e308}, "width", "not a plausible value"),
    ({"width": "NaN"}, "width", "valid number"),
    ({"width": "Infinity"}, "width", "valid number"),
    ({"width": True}, "width", "valid number"),
    ({"width": "six"}, "width", "valid number"),
    ({"width": [6]}, "width", "valid number"),
    ({"width": 0.001}, "width", "below 0.01 mm"),
    ({"width": 130}, "width", "wider than the wall is thick"),  # wall type is 120 mm thick
    ({"length": 17_500}, "length", "longer than the wall's perimeter"),  # 2 × (6 + 2.7) m = 17.4 m
    ({"width": ...}, "width", "required for a slit"),
    ({"depth": 1500}, "depth", "over 1 m"),
    ({"kind": "crack"}, "kind", "not a valid choice"),
    ({"face": "c"}, "face", "not a valid choice"),
    ({"trade": "roofing"}, "trade", "not a valid choice"),
    ({"trade": ...}, "trade", "required"),
    ({"fill": "foam"}, "fill", "not a valid choice"),
    ({"count": 0}, "count", "greater than or equal to 1"),
    ({"count": 501}, "count", "less than or equal to 500"),
    ({"count": "two"}, "count", "valid integer"),
    ({"note": "x" * 2001}, "note", "no more than 2000"),
    ({"client_id": "not-a-uuid"}, "client_id", "valid UUID"),
    ({"kind": "hole", "width": ..., "length": ..., "diameter": 700}, "diameter", "too large for a hole"),
    ({"kind": "ring", "length": ..., "diameter": 50, "width": 150}, "width", "wider than the wall is thick"),
    ({"kind": "missing_insulation", "width": ..., "length": ..., "area": 20}, "area", "larger than the wall"),
    ({"kind": "open_area", "width": 3000, "length": 6000}, "length", "open area larger than the wall"),
    ({"wall": 999_999}, "wall", "Invalid pk"),
    ({"wall": "two"}, "wall", "Incorrect type"),
    ({"seal_point": 999_999}, "seal_point", "Invalid pk"),
]


@pytest.mark.parametrize("change, field, rule", RULES, ids=[f"{f}-{i}" for i, (_, f, _) in enumerate(RULES)])
def test_bad_input_is_refused_naming_field_and_rule(world, api, change, field, rule):
    point = point_of(world.wall)
    r = api(world.inspector).post(url(world.job), slit(world, **change), format="json")
    assert r.status_code == 400, r.json()
    assert field in r.json(), r.json()
    assert rule in " ".join(r.json()[field]), r.json()
    assert Finding.objects.count() == 0
    assert events("finding.created") == 0
    point.refresh_from_db()
    assert point.status == "unchecked" and point.version == 1


def test_nan_literal_in_json_is_refused(world, api):
    body = f'{{"wall": {world.wall.id}, "kind": "slit", "width": NaN, "length": 900, "trade": "drywall"}}'
    r = api(world.inspector).post(url(world.job), body, content_type="application/json")
    assert r.status_code == 400 and "JSON parse error" in r.json()["detail"]
    assert Finding.objects.count() == 0


def test_seal_point_of_another_wall_is_refused(world, api):
    second = Wall.objects.create(
        job=world.job, wall_type=world.wall_type, tag="2-02", level="2", length_m=4, height_m=2.7
    )
    second.add_template_seal_points()
    r = api(world.inspector).post(url(world.job), slit(world, seal_point=point_of(second).id), format="json")
    assert r.status_code == 400 and r.json() == {"seal_point": ["belongs to another wall"]}
    assert Finding.objects.count() == 0


def test_wall_and_seal_point_of_another_job_are_refused(world, api):
    client = api(world.inspector)
    r = client.post(url(world.job), slit(world, wall=world.other_wall.id, seal_point=...), format="json")
    assert r.status_code == 400 and "Invalid pk" in r.json()["wall"][0]
    r = client.post(url(world.job), slit(world, seal_point=point_of(world.other_wall).id), format="json")
    assert r.status_code == 400 and "Invalid pk" in r.json()["seal_point"][0]
    assert Finding.objects.count() == 0


def test_edit_that_breaks_a_rule_changes_nothing(world, api):
    finding = make_finding(world, kind="slit", width_m=0.006, length_m=0.9, diameter_m=None)
    client = api(world.inspector)
    r = client.patch(url(world.job, finding.pk), {"length": 20_000, "note": "longer"}, format="json")
    assert r.status_code == 400 and "perimeter" in r.json()["length"][0]
    r = client.patch(url(world.job, finding.pk), {"wall": world.other_wall.id}, format="json")
    assert r.status_code == 400
    second = Wall.objects.create(
        job=world.job, wall_type=world.wall_type, tag="2-02", level="2", length_m=4, height_m=2.7
    )
    r = client.patch(url(world.job, finding.pk), {"wall": second.id}, format="json")
    assert r.status_code == 400 and r.json()["wall"] == ["a finding cannot move to another wall"]
    finding.refresh_from_db()
    assert (finding.length_m, finding.note, finding.version, finding.wall_id) == (0.9, "", 1, world.wall.id)
    assert events("finding.edited") == 0


def test_edit_writes_an_event_and_bumps_the_version(world, api):
    finding = make_finding(world, kind="slit", width_m=0.006, length_m=0.9, diameter_m=None)
    r = api(world.inspector).patch(url(world.job, finding.pk), {"width": 10, "version": 1}, format="json")
    assert r.status_code == 200, r.json()
    finding.refresh_from_db()
    assert finding.width_m == pytest.approx(0.010) and finding.version == 2
    assert Event.objects.get(verb="finding.edited").data == {"fields": ["width_m"], "version": 2}


def test_stale_edit_answers_409_and_changes_nothing(world, api):
    finding = make_finding(world, kind="slit", width_m=0.006, length_m=0.9, diameter_m=None, version=3)
    r = api(world.inspector).patch(url(world.job, finding.pk), {"width": 10, "version": 2}, format="json")
    assert r.status_code == 409 and "version 3" in r.json()["version"][0]
    finding.refresh_from_db()
    assert finding.width_m == 0.006 and finding.version == 3


# --- idempotency ------------------------------------------------------------------------------


def test_replayed_create_with_same_client_id_gives_one_finding(world, api):
    client_id = str(uuid.uuid4())
    client = api(world.inspector)
    first = client.post(url(world.job), slit(world, client_id=client_id), format="json")
    again = client.post(url(world.job), slit(world, client_id=client_id, note="replayed"), format="json")
    assert (first.status_code, again.status_code) == (201, 200)
    assert first.json()["id"] == again.json()["id"] and again.json()["note"] == "Bead missing under board"
    assert Finding.objects.filter(client_id=client_id).count() == 1
    assert events("finding.created") == 1


def test_client_id_used_in_another_job_is_refused(world, api):
    theirs = Finding.objects.create(
        job=world.other_job,
        wall=world.other_wall,
        kind="hole",
        diameter_m=0.01,
        trade="electrical",
        created_by=world.outsider,
    )
    r = api(world.inspector).post(url(world.job), slit(world, client_id=str(theirs.client_id)), format="json")
    assert r.status_code == 400 and r.json() == {"client_id": ["is already used"]}
    assert Finding.objects.filter(job=world.job).count() == 0


# --- another job's object, wrong method --------------------------------------------------------


def test_another_jobs_finding_is_404_through_this_job(world, api):
    theirs = Finding.objects.create(
        job=world.other_job,
        wall=world.other_wall,
        kind="hole",
        diameter_m=0.01,
        trade="electrical",
        created_by=world.outsider,
    )
    client = api(world.inspector)
    assert client.get(url(world.job, theirs.pk)).status_code == 404
    assert client.patch(url(world.job, theirs.pk), {"note": "x"}, format="json").status_code == 404
    assert client.post(url(world.job, theirs.pk, "fix"), {}, format="json").status_code == 404
    assert client.delete(url(world.job, theirs.pk)).status_code == 404
    assert client.get(url(world.other_job)).status_code == 404  # not a member there
    theirs.refresh_from_db()
    assert (theirs.note, theirs.status, theirs.removed, theirs.version) == ("", "open", False, 1)


def test_unknown_finding_is_404(world, api):
    assert api(world.inspector).get(url(world.job, 999_999)).status_code == 404


@pytest.mark.parametrize(
    "method, path",
    [("put", ()), ("delete", ()), ("patch", ()), ("get", ("{f}", "fix")), ("put", ("{f}", "verify"))],
)
def test_wrong_method_is_405(world, api, method, path):
    finding = make_finding(world)
    target = url(world.job, *[p.format(f=finding.pk) for p in path])
    r = getattr(api(world.inspector), method)(target, {}, format="json")
    assert r.status_code == 405
    finding.refresh_from_db()
    assert finding.status == "open" and finding.version == 1


# --- roles (DESIGN.md, Roles) -----------------------------------------------------------------

# The finding is electrical; "crew" is the electrical crew lead, "crew_other_trade" the drywaller.
FIX = {
    "inspector": 200,
    "crew": 200,
    "crew_other_trade": 403,
    "owner": 403,
    "outsider": 404,
    "anonymous": 403,
}
VERIFY = {
    "inspector": 200,
    "crew": 403,
    "crew_other_trade": 403,
    "owner": 403,
    "outsider": 404,
    "anonymous": 403,
}


@pytest.mark.parametrize("role", ROLES)
def test_who_sees_findings(world, api, role):
    finding = make_finding(world)
    client = as_role(world, api, role)
    listing, one = client.get(url(world.job)), client.get(url(world.job, finding.pk))
    assert listing.status_code == one.status_code == SEE[role]
    if role == "anonymous":
        assert one.json()["detail"] == NOT_SIGNED_IN
    if SEE[role] == 200:
        assert [f["id"] for f in listing.json()["results"]] == [finding.pk]


@pytest.mark.parametrize("role", ROLES)
def test_who_records_findings(world, api, role):
    r = as_role(world, api, role).post(url(world.job), slit(world), format="json")
    assert r.status_code == (EDIT[role] or 201)
    assert Finding.objects.count() == (1 if role == "inspector" else 0)
    assert events("finding.created") == (1 if role == "inspector" else 0)


@pytest.mark.parametrize("role", ROLES)
def test_who_edits_and_removes_findings(world, api, role):
    finding = make_finding(world)
    client = as_role(world, api, role)
    r = client.patch(url(world.job, finding.pk), {"note": "edited"}, format="json")
    assert r.status_code == (EDIT[role] or 200)
    r = client.delete(url(world.job, finding.pk))
    assert r.status_code == (EDIT[role] or 204)
    finding.refresh_from_db()
    if role == "inspector":
        assert finding.note == "edited" and finding.removed and finding.version == 3
        assert events("finding.edited") == events("finding.removed") == 1
        assert client.get(url(world.job, finding.pk)).status_code == 404  # removed is gone from the API
    else:
        assert finding.note == "" and not finding.removed and finding.version == 1
        assert Event.objects.count() == 0


@pytest.mark.parametrize("role", ROLES)
def test_who_marks_fixed(world, api, role):
    finding = make_finding(world, "electrical")
    user = world.users()[role] if role != "anonymous" else None
    r = as_role(world, api, role).post(
        url(world.job, finding.pk, "fix"), {"note": "Putty pad fitted"}, format="json"
    )
    assert r.status_code == FIX[role]
    finding.refresh_from_db()
    if FIX[role] == 200:
        assert r.json()["status"] == "fixed" and r.json()["fix_note"] == "Putty pad fitted"
        assert (finding.status, finding.fixed_by, finding.version) == ("fixed", user, 2)
        event = Event.objects.get(verb="finding.fixed")
        assert event.actor == user and event.data == {"version": 2, "note": "Putty pad fitted"}
    else:
        assert (finding.status, finding.fixed_by, finding.version) == ("open", None, 1)
        assert Event.objects.count() == 0


@pytest.mark.parametrize("role", ROLES)
@pytest.mark.parametrize(
    "step, start, after",
    [("verify", "fixed", "verified"), ("reopen", "fixed", "reopened"), ("reopen", "verified", "reopened")],
)
def test_who_verifies_and_reopens(world, api, role, step, start, after):
    finding = make_finding(world, "electrical", status=start)
    body = {"note": "the bead is broken again"} if step == "reopen" else {}
    r = as_role(world, api, role).post(url(world.job, finding.pk, step), body, format="json")
    assert r.status_code == VERIFY[role]
    finding.refresh_from_db()
    if VERIFY[role] == 200:
        assert finding.status == after and finding.version == 2
        assert Event.objects.filter(verb=f"finding.{after}").count() == 1
        if after == "verified":
            assert finding.verified_by == world.inspector and finding.verified_at is not None
    else:
        assert finding.status == start and finding.version == 1
        assert Event.objects.count() == 0


@pytest.mark.parametrize(
    "step, start",
    [("verify", "open"), ("fix", "fixed"), ("fix", "verified"), ("reopen", "open"), ("verify", "verified")],
)
def test_step_the_status_does_not_allow_is_409(world, api, step, start):
    finding = make_finding(world, status=start)
    r = api(world.inspector).post(url(world.job, finding.pk, step), {}, format="json")
    assert r.status_code == 409 and f"a finding that is {start} cannot be" in r.json()["status"][0]
    finding.refresh_from_db()
    assert finding.status == start and finding.version == 1
    assert Event.objects.count() == 0


def test_step_with_stale_version_is_409(world, api):
    finding = make_finding(world, version=4)
    r = api(world.electrician).post(url(world.job, finding.pk, "fix"), {"version": 3}, format="json")
    assert r.status_code == 409
    finding.refresh_from_db()
    assert finding.status == "open" and finding.version == 4


def test_full_lifecycle_leaves_an_audit_trail(world, api):
    finding = make_finding(world)
    assert (
        api(world.electrician).post(url(world.job, finding.pk, "fix"), {}, format="json").status_code == 200
    )
    assert (
        api(world.inspector)
        .post(url(world.job, finding.pk, "reopen"), {"note": "still open at top"}, format="json")
        .status_code
        == 200
    )
    assert (
        api(world.electrician)
        .post(url(world.job, finding.pk, "fix"), {"version": 3}, format="json")
        .status_code
        == 200
    )
    assert (
        api(world.inspector).post(url(world.job, finding.pk, "verify"), {}, format="json").status_code == 200
    )
    finding.refresh_from_db()
    assert finding.status == "verified" and finding.version == 5
    verbs = list(Event.objects.filter(target_id=str(finding.pk)).values_list("verb", "actor__username"))
    assert verbs == [
        ("finding.fixed", "elec"),
        ("finding.reopened", "insp"),
        ("finding.fixed", "elec"),
        ("finding.verified", "insp"),
    ]
