"""The wall's field prediction: equal to a direct engine call, cached, and refreshed when its inputs change.

The engine itself is checked against the published worked examples in tests/acoustics (ISO 12354-1
Annex L, EN 12354-1 Annex H); here the adapter must hand the engine the record faithfully.
"""

from __future__ import annotations

import numpy as np
import pytest

from acoustics import rate
from acoustics.building_kinds import default_junctions, predict_wall
from acoustics.field_inputs import Junction, Room
from qa.audit import audit_summary
from qa.field.inputs import DEFAULT_DEPTH_M, FURNISHED_T_S, field_target
from qa.field.prediction import field_prediction, headline, state_leaks, wall_curves
from qa.models import Finding, JunctionOverride, RoomPair

pytestmark = pytest.mark.django_db


def add_slit(world, width=0.006, length=2.0):
    point = world.wall.seal_points.first()
    return Finding.objects.create(
        job=world.job,
        wall=world.wall,
        seal_point=point,
        kind="slit",
        face="through",
        trade="drywall",
        width_m=width,
        length_m=length,
        created_by=world.inspector,
    )


def direct(world, summary, src, rcv, *, area=None, kind="wood_frame", junctions=None):
    curves = np.array(
        [
            summary["designed_tl"],
            summary["views"]["walked"]["as_found_tl"],
            summary["views"]["verified"]["as_found_tl"],
        ]
    )
    s = area if area is not None else world.wall.length_m * world.wall.height_m
    tau = 10 ** (-curves / 10)
    leaks = np.maximum(s * (tau - tau[0]), 0)
    return predict_wall(
        np.repeat(curves[:1], 3, axis=0),
        world.wall.length_m,
        world.wall.height_m,
        src,
        rcv,
        building_kind=kind,
        area=area,
        junctions=junctions or {},
        leaks=leaks,
        wall_mass=25.0,  # a stud wall: lightweight whatever the building kind
        wall_kind="light",
    )


def test_default_rooms_equal_a_direct_engine_call(world):
    add_slit(world)
    res = field_prediction(world.wall)
    assert res["error"] is None and len(res["pairs"]) == 1
    pair = res["pairs"][0]
    volume = world.wall.length_m * DEFAULT_DEPTH_M * world.wall.height_m
    assert pair["rooms"]["receiving_volume_m3"] == pytest.approx(volume, abs=0.01)
    assert pair["rooms"]["receiving_t_s"] == FURNISHED_T_S
    p = direct(world, audit_summary(world.wall), Room(volume), Room(volume))
    for i, state in enumerate(("designed", "walked", "now")):
        got = pair["states"][state]
        assert got["astc"] == int(p.astc[i])
        assert got["nnic"] == int(p.nnic[i])
        assert got["r_prime_w"]["value"] == int(p.r_prime_w.rw[i])
        assert got["dnt_w"]["ctr"] == int(p.dnt_w.ctr[i])
    # The slit is open: the walked and current states carry a findings path, the designed none.
    assert pair["states"]["designed"]["share_by_route"]["findings"] == 0
    assert pair["states"]["now"]["share_by_route"]["findings"] > 0.05
    assert pair["states"]["now"]["astc"] < pair["states"]["designed"]["astc"]


def test_entered_rooms_and_junction_and_building_kind_reach_the_engine(world):
    world.job.building_kind = "concrete_masonry"
    world.job.save()
    RoomPair.objects.create(
        wall=world.wall,
        label="201 to 202",
        source_volume_m3=50,
        receiving_volume_m3=35,
        receiving_t_s=0.8,
        area_m2=12.0,
    )
    JunctionOverride.objects.create(wall=world.wall, position="floor", kind="rigid_t")
    res = field_prediction(world.wall)
    assert res["error"] is None and res["building_kind"] == "concrete_masonry"
    floor = next(j for j in default_junctions("concrete_masonry") if j.position == "floor")
    p = direct(
        world,
        audit_summary(world.wall),
        Room(50),
        Room(35, t=0.8),
        area=12.0,
        kind="concrete_masonry",
        junctions={"floor": Junction("floor", "rigid_t", floor.flank)},
    )
    now = res["pairs"][0]["states"]["now"]
    assert now["dnt_w"]["value"] == int(p.dnt_w.rw[2]) and now["astc"] == int(p.astc[2])
    assert res["pairs"][0]["junctions"]["floor"]["kind"] == "rigid_t"


def test_no_flanking_gives_less_than_the_wall_alone(world):
    """Analytic invariant: flanking only adds transmitted power, so R'w <= Rw of the designed curve
    (ISO 12354-1 Clause 4: tau' is a sum of positive path terms)."""
    res = field_prediction(world.wall)
    rw = rate(np.array(audit_summary(world.wall)["designed_tl"]), "rw")
    assert res["pairs"][0]["states"]["designed"]["r_prime_w"]["value"] <= rw


def test_cache_refreshes_when_rooms_or_findings_change(world):
    first = field_prediction(world.wall)["pairs"][0]["states"]["now"]["dnt_w"]["value"]
    RoomPair.objects.create(wall=world.wall, receiving_volume_m3=200.0)
    bigger = field_prediction(world.wall)["pairs"][0]["states"]["now"]["dnt_w"]["value"]
    assert bigger > first  # DnT grows with 10 lg V (ISO 12354-1 Formula 5b)
    add_slit(world, width=0.01, length=2.7)
    assert field_prediction(world.wall)["pairs"][0]["states"]["now"]["dnt_w"]["value"] < bigger


def test_field_target_derived_from_stc_and_entered(world):
    t = field_target(world.wall)
    assert t["descriptor"] == "astc" and t["value"] == 45 and t["derived"]
    pair = RoomPair(wall=world.wall, field_target=50, field_descriptor="nnic")
    assert field_target(world.wall, pair) == {
        "descriptor": "nnic",
        "value": 50,
        "derived": False,
        "basis": "entered for these rooms",
    }
    res = field_prediction(world.wall)
    head = headline(res)
    assert head["states"]["now"]["margin"] == head["states"]["now"]["astc"] - 45


def test_job_rule_set_targets_per_kind_of_wall(world):
    """Precedence: the rooms' own target, then the job's rule for the wall type, then its rule for every
    wall, then the derived one; a change of the job's targets reaches the cached prediction."""
    rules = [
        {"wall_type": None, "descriptor": "dnt_w", "value": 48},
        {"wall_type": world.wall_type.code, "descriptor": "astc", "value": 47},
    ]
    t = field_target(world.wall, None, rules)
    assert (t["descriptor"], t["value"], t["derived"]) == ("astc", 47, False)
    assert "wall type" in t["basis"]
    t = field_target(world.wall, None, rules[:1])
    assert (t["descriptor"], t["value"]) == ("dnt_w", 48) and "every wall" in t["basis"]
    pair = RoomPair(wall=world.wall, field_target=50, field_descriptor="nnic")
    assert field_target(world.wall, pair, rules)["descriptor"] == "nnic"

    before = headline(field_prediction(world.wall))["target"]
    assert before["derived"]
    world.job.field_targets = rules[:1]
    world.job.save()
    world.wall.refresh_from_db()
    head = headline(field_prediction(world.wall))
    assert head["target"]["descriptor"] == "dnt_w" and head["target"]["value"] == 48
    assert head["states"]["now"]["margin"] == head["states"]["now"]["dnt_w"]["value"] - 48


def test_missing_band_is_an_error_not_a_number(world):
    world.wall_type.tl = [None] + world.wall_type.tl[1:]
    world.wall_type.save()
    res = field_prediction(world.wall)
    assert res["pairs"] == [] and "lacks bands" in res["error"]


def test_findings_path_never_negative():
    curves = np.array([[40.0] * 21, [38.0] * 21, [41.0] * 21])
    leaks, clipped = state_leaks(curves, 10.0)
    assert clipped and np.all(leaks >= 0) and np.all(leaks[2] == 0)
    assert leaks[1] == pytest.approx(10 * (10**-3.8 - 10**-4.0))
    assert wall_curves({"error": "x"}) == (None, "x")


def test_masonry_wall_is_heavy_and_stud_wall_light(world):
    """The wall's structure follows its construction (concrete-masonry block, 220 kg/m^2, heavy)."""
    from qa.field.inputs import wall_structure

    assert wall_structure(world.wall) == {"wall_mass": 25.0, "wall_kind": "light", "wall_fc": None}
    world.wall_type.construction = "masonry"
    world.wall_type.save()
    world.wall.refresh_from_db()
    assert wall_structure(world.wall) == {"wall_mass": 220.0, "wall_kind": "heavy", "wall_fc": 120.0}
    res = field_prediction(world.wall)
    assert res["error"] is None and "separating_leaf_estimated" not in res["pairs"][0]["flags"]
