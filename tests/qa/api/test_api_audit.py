"""Wall audit API: GET /api/jobs/{job}/walls/{wall}/audit/. The ladder of STYLE.md; roles as DESIGN.md.

The body must equal the wall's audit as the engine computes it directly on the same inputs
(:func:`acoustics.audit_wall` on :func:`acoustics.wall_model`), so the API, the pages and the report
say the same thing. Composite of wall and openings by area: Hopkins (2007), Eq. 4.92.
"""

from __future__ import annotations

import pytest

import acoustics
from qa.audit import summary
from qa.audit.wall_json import FINDING_KEYS
from qa.models import Finding
from tests.qa.roles import ROLES, SEE, as_role

pytestmark = pytest.mark.django_db


def url(job, wall) -> str:
    return f"/api/jobs/{job.id}/walls/{wall.id}/audit/"


def add(world, **kw) -> Finding:
    base = {
        "job": world.job,
        "wall": world.wall,
        "kind": "slit",
        "face": "through",
        "trade": "drywall",
        "created_by": world.inspector,
        "width_m": 0.006,
        "length_m": 1.0,
    }
    base.update(kw)
    return Finding.objects.create(**base)


def test_audit_of_a_wall_matches_the_engine(world, api):
    gap = add(world)
    hole = add(world, kind="hole", face="a", width_m=None, length_m=None, diameter_m=0.1, trade="electrical")
    fixed = add(world, kind="hole", face="b", width_m=None, length_m=None, diameter_m=0.1, status="fixed")
    add(world, kind="slit", status="verified", width_m=0.01, length_m=2.0)
    r = api(world.owner).get(url(world.job, world.wall))
    assert r.status_code == 200, r.content
    body = r.json()
    inputs, meta = summary.wall_inputs(world.wall)  # the findings still costing the wall (not verified)
    direct = acoustics.audit_wall(acoustics.wall_model(**inputs), rating="stc", target=50)
    ids = meta["finding_ids"]
    assert ids == [gap.pk, hole.pk, fixed.pk]
    assert body["designed"] == direct.designed == 50  # FLAT_50 test curve rates STC 50 (tests/conftest.py)
    assert body["now"] == direct.as_found
    assert body["if_reported_fixes_hold"] == direct.if_reported_fixed  # the fixed hole counts as fixed
    assert body["as_found"] <= body["now"] <= body["if_reported_fixes_hold"] <= body["designed"]
    assert body["order"] == [ids[k] for k in direct.order]
    assert body["after"] == [int(v) for v in direct.after]
    assert body["needed"] == [ids[k] for k in direct.needed]
    rows = {f["id"]: f for f in body["findings"]}
    assert list(rows) == ids and all(set(f) == set(FINDING_KEYS) for f in body["findings"])
    for k, fid in enumerate(ids):
        assert rows[fid]["cost_alone"] == int(direct.gain[k])
        assert rows[fid]["path"] == direct.paths[k]
    # Costs in order add up to what the whole fix-first order buys back.
    assert sum(f["cost_in_order"] for f in body["findings"]) == body["designed"] - body["now"]
    assert rows[hole.pk]["path"].startswith("one face: leaf A")
    assert rows[gap.pk]["path_kind"] == "straight"
    # The two one-face holes on opposite faces leak together through the cavity.
    assert [sorted(i["findings"]) for i in body["interactions"]] == [[hole.pk, fixed.pk]]
    assert body["engine_version"] == acoustics.wall_audit.ENGINE_VERSION
    assert body["audit_version"] and body["error"] is None
    assert set(body["flags"]) <= set(body["flag_text"]) and "lab_curve_split" in body["flags"]
    assert "cavity_fill_unknown" in body["flags"]  # a lab-curve wall type without layers: empty cavity taken


def test_other_jobs_wall_is_404(world, api):
    r = api(world.inspector).get(url(world.job, world.other_wall))
    assert r.status_code == 404
    r = api(world.inspector).get(f"/api/jobs/{world.other_job.id}/walls/{world.other_wall.id}/audit/")
    assert r.status_code == 404  # not a member of the other job


def test_removed_or_unknown_wall_is_404(world, api):
    assert api(world.inspector).get(f"/api/jobs/{world.job.id}/walls/999999/audit/").status_code == 404
    world.wall.removed = True
    world.wall.save()
    assert api(world.inspector).get(url(world.job, world.wall)).status_code == 404


def test_outsider_gets_404(world, api):
    assert api(world.outsider).get(url(world.job, world.wall)).status_code == 404


@pytest.mark.parametrize("method", ["post", "put", "patch", "delete"])
def test_writes_are_not_allowed(world, api, method):
    r = getattr(api(world.inspector), method)(url(world.job, world.wall), {}, format="json")
    assert r.status_code == 405


@pytest.mark.parametrize("role", ROLES)
def test_each_role(world, api, role):
    add(world)
    r = as_role(world, api, role).get(url(world.job, world.wall))
    assert r.status_code == SEE[role]
    if r.status_code == 200:
        body = r.json()
        assert body["wall"] == world.wall.pk and len(body["findings"]) == 1
        assert body["now"] < body["designed"]


def test_wall_without_curve_answers_the_reason(world, api):
    world.wall_type.tl = []
    world.wall_type.save()
    body = api(world.inspector).get(url(world.job, world.wall)).json()
    assert body["designed"] is None and "no TL curve" in body["error"] and body["findings"] == []
