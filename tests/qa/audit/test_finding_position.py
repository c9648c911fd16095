"""A finding's recorded position along the wall reaches the whole-wall model as ``x``.

Openings on opposite faces that face each other are joined by the direct field in the cavity as well as
its reverberant field (method notes Section 15.1; Craik 2003 for the reverberant frame, the direct term
derived in this project): recorded facing each other they cost more than when their positions
are unknown (the engine then takes them far apart and flags "position_unknown").
"""

from __future__ import annotations

from types import SimpleNamespace

import pytest

import acoustics
from qa.audit.finding_leaks import finding_spec, position_x

EMPTY = {
    "leaves": [{"layers": ["gypsum_15.9_x"]}, {"layers": ["gypsum_15.9_x"]}],
    "cavity": {"depth": 0.092},
    "connection": {"type": "steel_stud"},
}


def finding(pk, face, **kw):
    base = {
        "pk": pk,
        "kind": "hole",
        "face": face,
        "diameter_m": 0.1,
        "width_m": None,
        "length_m": None,
        "depth_m": None,
        "area_m2": None,
        "fill": "none",
        "at_edge": False,
        "count": 1,
        "status": "open",
        "seal_point": None,
        "get_kind_display": lambda: "Hole",
    }
    return SimpleNamespace(**(base | kw))


CTX = SimpleNamespace(wall=SimpleNamespace(length_m=6.0), door_index=None, single_leaf=False, area=16.2)


@pytest.mark.parametrize(
    ("along", "frm", "x"), [(None, "", None), (1.5, "start", 1.5), (1.5, "end", 4.5), (9.0, "start", 6.0)]
)
def test_position_is_measured_from_the_left_end_seen_from_face_a(along, frm, x):
    assert position_x(SimpleNamespace(along_m=along, along_from=frm), 6.0) == x


def test_a_finding_without_position_fields_has_no_x():
    assert "x" not in finding_spec(finding(1, "a"), CTX)


def test_facing_holes_on_opposite_faces_cost_more_than_far_apart():
    known = [
        finding(1, "a", along_m=2.0, along_from="start"),
        finding(2, "b", along_m=4.0, along_from="end"),  # 6 - 4 = 2 m from the left end: facing hole 1
    ]
    unknown = [finding(1, "a"), finding(2, "b")]
    specs = [finding_spec(f, CTX) for f in known]
    assert [s["x"] for s in specs] == [2.0, 2.0]

    def audit(fs):
        return acoustics.audit_wall(
            acoustics.wall_model(EMPTY, 16.2, height=2.7, findings=[finding_spec(f, CTX) for f in fs])
        )

    facing, far = audit(known), audit(unknown)
    assert "position_unknown" in far.model_flags and "position_unknown" not in facing.model_flags
    assert facing.as_found < far.as_found  # 38 vs 41 on this empty-cavity wall
    assert facing.designed == far.designed
