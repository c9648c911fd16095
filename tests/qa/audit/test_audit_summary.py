"""The adapter between the record and the engine (qa/audit/summary.py).

Checks: a wall's audit equals a direct ``acoustics.audit`` on the same inputs; each finding kind maps
to the engine model named in DESIGN.md; openings enter the designed curve by area (Hopkins 2007,
Eq. 4.92); the cache is invalidated by every kind of change; fixed vs verified views.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

import acoustics
from qa.audit import cache, curves, finding_leaks, summary
from qa.models import Finding, Opening, Wall

LAYERS = {
    "leaves": [{"layers": ["gypsum_15.9_x"]}, {"layers": ["gypsum_15.9_x"]}],
    "cavity": {"depth": 0.140, "absorber": {"thickness": 0.089, "flow_resistivity": 10000}},
    "connection": {"type": "staggered_studs", "spacing": 0.406},
}


def add(world, **kw):
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


def key(wall):
    return cache.audit_keys([wall])[wall.pk]


def test_wall_audit_equals_direct_engine_audit(world):
    add(world)
    add(world, kind="hole", width_m=None, length_m=None, diameter_m=0.012, count=3, trade="electrical")
    add(world, kind="ring", diameter_m=0.022, width_m=0.006, length_m=None, trade="plumbing")
    add(world, kind="slit", at_edge=True, fill="fibre", width_m=0.004, length_m=2.0)
    add(world, kind="open_area", width_m=None, length_m=None, area_m2=0.002, face="a")
    wall = world.wall
    tl, area, leaks, meta = summary.wall_inputs(wall)
    direct = acoustics.audit(tl, area, leaks, rating="stc", target=50)
    s = summary.audit_summary(wall)
    assert s["designed"] == direct.designed == 50  # FLAT_50 test curve rates STC 50 (tests/conftest.py)
    assert s["as_found"] == direct.as_found
    assert s["order"] == [meta["finding_ids"][i] for i in direct.order]
    assert s["after"] == [int(v) for v in direct.after]
    assert [r["gain"] for r in s["rows"]] == [int(g) for g in direct.gain]
    np.testing.assert_allclose([r["power_share"] for r in s["rows"]], direct.power_share, rtol=1e-12)
    np.testing.assert_allclose([r["open_area_500"] for r in s["rows"]], direct.open_area_500, rtol=1e-12)
    assert area == pytest.approx(6.0 * 2.7)
    json.dumps(s)  # JSON-serialisable for the cache, the API and the report


def test_kinds_map_to_engine_models(world):
    """Each kind goes to its engine model with SI inputs; unrecorded depth = wall type thickness."""
    wall, t = world.wall, world.wall_type.thickness_m
    cases = [
        (add(world, at_edge=True), acoustics.slit(0.006, 1.0, t, edge=True)),
        (
            add(world, kind="hole", width_m=None, length_m=None, diameter_m=0.01, count=2),
            acoustics.hole(0.01, t).times(2),
        ),
        (
            add(world, kind="ring", width_m=0.005, length_m=None, diameter_m=0.05),
            acoustics.ring_gap(0.05, 0.005, t),
        ),
        (
            add(world, kind="open_area", width_m=None, length_m=None, area_m2=0.003),
            acoustics.open_area(0.003),
        ),
        (
            add(world, fill="skin"),
            acoustics.skin_gap(0.006, 1.0, t, surface_density=finding_leaks.SKIN_SURFACE_DENSITY),
        ),
        (
            add(world, kind="hole", face="a", width_m=None, length_m=None, diameter_m=0.02),
            acoustics.one_face_gap_from_lab(
                np.array(world.wall_type.tl, float), acoustics.hole(0.02, finding_leaks.DEFAULT_BOARD_M)
            ),
        ),
    ]
    _tl, _area, leaks, meta = summary.wall_inputs(wall)
    by_id = dict(zip(meta["finding_ids"], leaks, strict=True))
    for finding, expected in cases:
        np.testing.assert_allclose(by_id[finding.pk].area, expected.area, rtol=1e-12, err_msg=finding.kind)


def test_predicted_wall_type_uses_layers_and_lab_type_cannot_model_a_bridge(world):
    bridge = add(world, kind="bridge", width_m=None, length_m=None, count=2)
    s = summary.audit_summary(world.wall)
    assert s["unmodelled"] == [{"finding": bridge.pk, "reason": s["unmodelled"][0]["reason"]}]
    assert "layers" in s["unmodelled"][0]["reason"] and "not_modelled" in s["flags"]
    wt = world.wall_type
    wt.layers, wt.tl_source, wt.thickness_m = LAYERS, "predicted", 0.172
    wt.tl = curves.predict_curve(LAYERS)
    wt.save()
    one_face = add(world, kind="hole", face="b", width_m=None, length_m=None, diameter_m=0.02)
    wall = Wall.objects.select_related("wall_type").get(pk=world.wall.pk)
    _tl, _a, leaks, meta = summary.wall_inputs(wall)
    by_id = dict(zip(meta["finding_ids"], leaks, strict=True))
    asm = acoustics.Assembly.from_dict(LAYERS)
    expected = acoustics.one_face_gap(asm, 1, acoustics.hole(0.02, asm.leaves[1].thickness))
    np.testing.assert_allclose(by_id[one_face.pk].area, expected.area, rtol=1e-12)
    np.testing.assert_allclose(by_id[bridge.pk].area, acoustics.rigid_bridge(asm, points=2).area, rtol=1e-12)
    # A one-face gap costs far less than the same gap through the wall (DESIGN.md, engine contract).
    through = acoustics.hole(0.02, 0.172).area
    assert by_id[one_face.pk].area.sum() < 0.5 * through.sum()


def test_door_known_by_rating_enters_as_contour(world):
    """Composite of wall and door by area (Hopkins 2007, Eq. 4.92); the door curve is the STC contour."""
    Opening.objects.create(wall=world.wall, kind="door", width_m=0.9, height_m=2.1, rating=30)
    tl, area, _leaks, meta = summary.wall_inputs(world.wall)
    door = acoustics.contour("stc", 30)
    expected = acoustics.composite(
        [area - 1.89, 1.89], np.vstack([np.array(world.wall_type.tl, float), door])
    )
    np.testing.assert_allclose(tl, expected, equal_nan=True)
    assert "opening_rating_contour" in meta["flags"]
    s = summary.audit_summary(world.wall)
    assert s["designed"] < 50  # an STC 30 door pulls an STC 50 wall down


@pytest.mark.parametrize(
    "change", ["add", "edit", "fix", "verify", "reopen", "remove", "opening", "wall", "wall_type"]
)
def test_cache_invalidated_by_each_change(world, change):
    f = add(world, status="open")
    if change in ("verify", "reopen"):
        f.mark_fixed(world.drywaller)
        if change == "reopen":
            f.verify(world.inspector)
    before_key = key(world.wall)
    before = summary.audit_summary(world.wall)
    assert (
        summary.audit_summary(world.wall) is not None and key(world.wall) == before_key
    )  # stable when unchanged
    if change == "add":
        add(world, width_m=0.01)
    elif change == "edit":
        f.width_m = 0.012
        f.save()
    elif change == "fix":
        f.mark_fixed(world.drywaller)
    elif change == "verify":
        f.verify(world.inspector)
    elif change == "reopen":
        f.reopen(world.inspector, "bead cracked")
    elif change == "remove":
        f.remove(world.inspector)
    elif change == "opening":
        Opening.objects.create(wall=world.wall, kind="door", width_m=0.9, height_m=2.1, rating=25)
    elif change == "wall":
        world.wall.target_rating = 45
        world.wall.save()
    else:
        world.wall_type.tl = [v - 5 for v in world.wall_type.tl]
        world.wall_type.save()
    wall = Wall.objects.select_related("wall_type").get(pk=world.wall.pk)
    assert key(wall) != before_key
    after = summary.audit_summary(wall)
    changed = {
        "add": after["as_found"] < before["as_found"],
        "edit": after["as_found"] < before["as_found"],
        "fix": after["reported"]["as_found"] > before["reported"]["as_found"],
        "verify": after["as_found"] > before["as_found"],
        "reopen": after["as_found"] < before["as_found"],
        "remove": after["as_found"] > before["as_found"],
        "opening": after["designed"] < before["designed"],
        "wall": after["target"] == 45,
        "wall_type": after["designed"] == before["designed"] - 5,
    }
    assert changed[change], (before, after)


def test_fixed_counts_as_reported_not_as_verified(world):
    f = add(world, width_m=0.01, length_m=2.0)
    s = summary.audit_summary(world.wall)
    assert s["as_found"] == s["walked"] == s["reported"]["as_found"] < s["designed"]
    f.mark_fixed(world.drywaller, "sealed")
    s = summary.audit_summary(world.wall)
    assert s["reported"]["as_found"] == s["designed"]  # as reported: the only leak is gone
    assert s["as_found"] == s["walked"] < s["designed"]  # as verified: it still costs
    assert [r["finding"] for r in s["rows"]] == [f.pk] and s["rows"][0]["status"] == "fixed"
    f.verify(world.inspector)
    s = summary.audit_summary(world.wall)
    assert s["as_found"] == s["designed"] and s["walked"] < s["designed"] and s["rows"] == []


def test_warm_audit_needs_no_query(world, django_assert_num_queries):
    add(world)
    summary.audit_summary(world.wall)
    with django_assert_num_queries(0):
        summary.audit_summary(world.wall)


def test_wall_without_curve_reports_an_error_not_a_crash(world):
    world.wall_type.tl = []
    world.wall_type.save()
    s = summary.audit_summary(world.wall)
    assert s["designed"] is None and "no TL curve" in s["error"]


def test_rw_wall_names_c_and_ctr(world):
    world.wall.rating_scheme = "rw"
    world.wall.save()
    s = summary.audit_summary(world.wall)
    assert s["rating_name"] == "Rw" and set(s["designed_terms"]) == {"c", "ctr"}
    r = acoustics.rw(np.array(world.wall_type.tl, float))
    assert s["designed"] == r.rw and s["designed_terms"] == {"c": r.c, "ctr": r.ctr}
