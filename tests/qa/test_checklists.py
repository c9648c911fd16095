"""Checklist templates and safety cautions, checked against the field-practice sources.

No database: these modules are plain data. Sources named beside each check:

- FP: the project's field-practice reference (§1.3 seal points, §1.4 boxes, §1.5 assembly
  checks, §1.6 doors, §3 cautions, §6 assemblies), which cites ASTM C919-19, IBC 2021 §1206.2,
  IBC §714.4.2, NFPA 80, NRC Canada CTU No. 1/13/27 and TSIB 50.501.
- Unit conversion: 1 in = 25.4 mm exactly (NIST SP 811, Appendix B).
"""

from __future__ import annotations

import json
import os
import re
import subprocess
import sys
from dataclasses import asdict
from pathlib import Path

import pytest

from qa.cautions import CAUTIONS, GENERAL_CAUTIONS, Caution, cautions_for
from qa.checklists import GAP_KEYS, LIGHT_FRAME, TEMPLATES, SealPointTemplate, channel_face, template_for
from qa.choices import AREA_KINDS, Construction, Face, GapKind, Trade

IN = 0.0254  # m, exact (NIST SP 811)
ALL_POINTS = [(kind, p) for kind, pts in TEMPLATES.items() for p in pts]
IDS = [f"{kind}:{p.key}" for kind, p in ALL_POINTS]
FIRESTOP = {"listed_firestop_systems", "fire_dampers"}


def keys_of(kind: str) -> set[str]:
    return {p.key for p in template_for(kind)}


# --- coverage -------------------------------------------------------------------------------


def test_every_construction_has_a_nonempty_template():
    assert set(TEMPLATES) == set(Construction.values)
    assert all(len(pts) >= 8 for pts in TEMPLATES.values())


def test_template_for_accepts_value_and_member_and_names_unknown_kind():
    assert template_for("door") is TEMPLATES["door"]
    # An enum member hashes by name; the lookup must still work.
    assert template_for(Construction.WOOD_STUD) is TEMPLATES["wood_stud"]
    with pytest.raises(ValueError, match=r"construction 'straw_bale' has no checklist template"):
        template_for("straw_bale")
    with pytest.raises(ValueError, match="construction"):
        template_for(None)  # type: ignore[arg-type]


@pytest.mark.parametrize("kind", list(TEMPLATES))
def test_keys_are_unique_slugs(kind):
    keys = [p.key for p in TEMPLATES[kind]]
    assert len(keys) == len(set(keys))
    assert all(re.fullmatch(r"[a-z0-9]+(-[a-z0-9]+)*", k) for k in keys)


@pytest.mark.parametrize("kind", [k.value for k in LIGHT_FRAME])
def test_light_frame_covers_the_common_seal_points(kind):
    """FP §1.3 rows 1-11 and §1.4: every stud-and-board demising wall has these points."""
    keys = keys_of(kind)
    required = {
        "bottom-perimeter-a",
        "bottom-perimeter-b",  # row 1, both faces (ASTM C919 example)
        "head",
        "vertical-perimeter-a",
        "track-to-floor",
        "board-joints-a",
        "cut-outs-a",  # rows 2-6
        "back-box-seal-a",
        "back-box-spacing",
        "box-cut-outs-a",  # row 7, §1.4
        "pipe-penetrations",
        "duct-penetrations",
        "recessed-items",
        "insulation",  # rows 8-11
    }
    assert required <= keys, required - keys
    faces = {p.face for p in template_for(kind) if p.key.startswith("bottom-perimeter")}
    assert faces == {"a", "b"}


@pytest.mark.parametrize(
    ("kind", "checks"),
    [
        # FP §1.5 single stud: installed studs match the tested design (AWCI, -4 STC example).
        ("wood_stud", {"framing-as-designed"}),
        ("steel_stud", {"framing-as-designed"}),
        # FP §1.5 staggered: no stud touching both faces; no blocking spanning both rows.
        ("staggered_stud", {"stud-contact", "cross-blocking"}),
        # FP §1.5 double stud: gap clear, no shared blocking (NRC IRC-IR-754), no pipes tying rows.
        ("double_stud", {"row-gap", "shared-blocking", "services-between-rows"}),
        # FP §1.5 resilient channel: screws into studs, orientation, sandwiching, board at edges.
        ("resilient_channel", {"rc-screws", "rc-orientation", "rc-direct", "rc-edges", "rc-fixtures"}),
        # FP §1.5 masonry (NRC CTU No. 13 seal coat; the rest common practice).
        (
            "masonry",
            {
                "surface-seal-a",
                "surface-seal-b",
                "mortar-joints",
                "head",
                "pipe-penetrations",
                "back-box-spacing",
                "box-cut-outs-a",
                "box-cut-outs-b",
                "form-ties",
            },
        ),
        # FP §1.5 shaft walls: liner seated, J-runners sealed, shaft devices sealed.
        ("shaft_wall", {"liner-joints", "track-to-floor", "shaft-devices"}),
        # FP §1.6 doors: bottom, head and jamb seals, threshold, frame to wall, frame fill.
        (
            "door",
            {
                "door-bottom",
                "head-seal",
                "jamb-seals",
                "threshold",
                "frame-perimeter-a",
                "frame-perimeter-b",
                "frame-fill",
            },
        ),
    ],
)
def test_assembly_specific_checks_present(kind, checks):
    assert checks <= keys_of(kind), checks - keys_of(kind)


def test_rc_short_circuit_points_are_on_the_channel_face():
    """FP §1.5: the channel carries one face's board; a short circuit affects that face's area.
    With no layers the template puts the channel on face A."""
    rc = {p.key: p for p in template_for("resilient_channel")}
    assert rc["rc-screws"].gap_kind == GapKind.CHANNEL_SHORT
    assert rc["rc-screws"].face == "a"


@pytest.mark.parametrize(("leaf", "face"), [(0, "a"), (1, "b")])
def test_channel_checks_follow_the_channel_in_the_layers(leaf, face):
    """The channel checks sit on the face whose leaf carries the channel (acoustics.Assembly: leaf 0
    is face A, leaf 1 face B); every other point keeps its face."""
    layers = {"connection": {"type": "steel_stud", "resilient_channel": {"leaf": leaf, "spacing": 0.61}}}
    placed = template_for("resilient_channel", layers)
    stored = template_for("resilient_channel")
    channel = {p.key for p in stored if p.channel}
    assert channel == {"rc-screws", "rc-orientation", "rc-direct", "rc-edges", "rc-fixtures"}
    for p, q in zip(placed, stored, strict=True):
        assert p.face == (face if p.key in channel else q.face), p.key
    assert channel_face(layers) == face
    assert channel_face({"connection": {"type": "wood_stud"}}) is None
    assert channel_face(None) is None


@pytest.mark.parametrize(
    "kind", ["wood_stud", "steel_stud", "staggered_stud", "double_stud", "resilient_channel"]
)
def test_board_joints_boxes_and_cut_outs_on_both_faces(kind):
    """FP §1.3 rows 3, 5-7 and §1.4: both faces of a stud wall are board, with its own joints, boxes
    and cut-outs, so each face gets those checks."""
    faces: dict[str, set] = {}
    for p in template_for(kind):
        base = p.key.rsplit("-", 1)[0] if p.key.endswith(("-a", "-b")) else p.key
        faces.setdefault(base, set()).add(p.face)
    for base in ("vertical-perimeter", "board-joints", "cut-outs", "back-box-seal", "box-cut-outs"):
        assert faces[base] == {"a", "b"}, base


def test_shaft_side_has_no_board_face_checks():
    """A shaft wall's face B is liner panel in runners (FP §1.5, from memory): no board joints or boxes."""
    b_keys = {p.key for p in template_for("shaft_wall") if p.face == "b"}
    assert b_keys == {"bottom-perimeter-b", "liner-joints"}


# --- vocabularies and text -------------------------------------------------------------------


@pytest.mark.parametrize(("kind", "point"), ALL_POINTS, ids=IDS)
def test_point_uses_valid_choices_and_plain_strings(kind, point):
    assert point.face in Face.values
    assert point.trade in Trade.values
    assert point.gap_kind in GapKind.values
    # Plain str, so the data serialises without Django's enum types.
    assert type(point.face) is str and type(point.trade) is str and type(point.gap_kind) is str
    assert point.caution == "" or point.caution in CAUTIONS
    assert 3 <= len(point.label) <= 40
    assert point.correct.strip() and point.usual_defect.strip()
    json.dumps(asdict(point))


@pytest.mark.parametrize(("kind", "point"), ALL_POINTS, ids=IDS)
def test_no_text_suggests_sealant_as_a_fire_fix(kind, point):
    """FP §3.1 (ASTM C919-19 §1.3): never "add acoustical sealant" at a rated penetration/joint."""
    text = f"{point.correct} {point.usual_defect}".lower()
    assert "add acoustical sealant" not in text
    if point.caution == "listed_firestop_systems":
        # Every penetration or joint that may be rated points to the listed system.
        assert "listed" in point.correct.lower()


# --- geometry --------------------------------------------------------------------------------

REQUIRED = {
    GapKind.SLIT: {"width_m", "depth_m"},
    GapKind.HOLE: {"diameter_m", "depth_m"},
    GapKind.RING: {"diameter_m", "width_m", "depth_m"},
    GapKind.OPEN_AREA: {"area_m2", "depth_m"},
    GapKind.BACK_TO_BACK: {"area_m2", "depth_m"},
    GapKind.MISSING_INSULATION: {"area_m2"},
    GapKind.CHANNEL_SHORT: {"area_m2"},
    GapKind.MISSING_LAYER: {"area_m2"},
    GapKind.BRIDGE: set(),
}


@pytest.mark.parametrize(("kind", "point"), ALL_POINTS, ids=IDS)
def test_geometry_keys_and_si_magnitudes(kind, point):
    """Sizes within FP §1.3 "typical size" ranges, converted to SI; sanity bounds are our own."""
    gap = point.gap
    assert set(gap) <= GAP_KEYS
    assert REQUIRED[GapKind(point.gap_kind)] <= set(gap)
    assert all(isinstance(v, (int, float)) and v > 0 for v in gap.values())
    if point.gap_kind == GapKind.SLIT:
        assert ("length_m" in gap) != ("length_fraction" in gap), "slit needs one length"
    if point.gap_kind == GapKind.BRIDGE:
        assert {"count", "length_m", "length_fraction"} & set(gap)
    if "width_m" in gap:
        assert 0.5e-3 <= gap["width_m"] <= 50e-3  # 0.5-50 mm
    if "diameter_m" in gap:
        assert 5e-3 <= gap["diameter_m"] < 1.0
    if "depth_m" in gap:
        assert 10e-3 <= gap["depth_m"] <= 0.3
    if "length_m" in gap:
        assert 0.1 <= gap["length_m"] <= 5.0
    if "length_fraction" in gap:
        assert 0 < gap["length_fraction"] <= 1
    if "count" in gap:
        assert gap["count"] == int(gap["count"]) and 1 <= gap["count"] <= 50
    if "area_m2" in gap:
        if point.gap_kind in AREA_KINDS:
            assert 0.05 <= gap["area_m2"] <= 10.0  # a patch of wall, up to a few sheets
        else:
            assert 1e-4 <= gap["area_m2"] <= 0.05  # a leak: 0.15 in^2 to ~75 in^2


@pytest.mark.parametrize(("kind", "point"), ALL_POINTS, ids=IDS)
def test_depth_follows_the_air_path(kind, point):
    """A one-face gap is as deep as its board (12.7, 15.9 mm board, 25.4 mm liner, ~32 mm block
    face shell); a through path is at least a door leaf (44.5 mm, FP §1.6) deep."""
    depth = point.gap.get("depth_m")
    if depth is None:
        return
    if point.face in ("a", "b"):
        assert depth <= 0.035
    else:
        assert depth >= 0.044


def test_bottom_perimeter_default_matches_the_quarter_inch_gap():
    """FP §1.3 row 1 and §1.7: 1/4 in (6.35 mm) gap left for sealant; tolerance 0.5 mm.
    The 25 % length is our own default for a broken bead (common practice, no source)."""
    for kind in LIGHT_FRAME:
        for key in ("bottom-perimeter-a", "bottom-perimeter-b"):
            p = next(p for p in template_for(kind) if p.key == key)
            assert p.gap_kind == GapKind.SLIT and p.at_edge
            assert p.gap["width_m"] == pytest.approx(0.25 * IN, abs=0.5e-3)
            assert p.gap["length_fraction"] == pytest.approx(0.25)


def test_pipe_ring_and_box_leak_defaults():
    """FP §1.3 row 8: annular gap 1/4-1 in, so 6 mm sits at the low end (tolerance 0.5 mm);
    FP §1.1: 1 in^2 at a back-box (6.4516e-4 m^2 exactly) and ~6 in^2 for an open single-gang cut-out."""
    wall = {p.key: p for p in template_for("wood_stud")}
    ring = wall["pipe-penetrations"].gap
    assert ring["width_m"] == pytest.approx(0.25 * IN, abs=0.5e-3)
    assert ring["diameter_m"] == pytest.approx(0.022, abs=1e-3)  # 3/4 in copper, 22 mm OD
    for face in ("a", "b"):
        assert wall[f"back-box-seal-{face}"].gap["area_m2"] == pytest.approx(IN**2, rel=1e-3)
        assert wall[f"box-cut-outs-{face}"].gap["area_m2"] == pytest.approx(6 * IN**2, rel=1e-3)


def test_door_defaults_within_nfpa80_clearances():
    """NFPA 80 §4.8.4 / §6.3.1.7 via FP §1.6: bottom at most 3/4 in (19.05 mm); head and jambs
    1/8 in ± 1/16 in (3.175 ± 1.5875 mm)."""
    door = {p.key: p for p in template_for("door")}
    assert door["door-bottom"].gap["width_m"] <= 0.75 * IN
    for key in ("head-seal", "jamb-seals"):
        assert door[key].gap["width_m"] == pytest.approx(IN / 8, abs=IN / 16)


# --- cautions on the points ------------------------------------------------------------------

PENETRATION_OR_JOINT = re.compile(r"penetrations|perimeter|^head$|track-to-floor|wall-ends|sleeves|flutes")


@pytest.mark.parametrize(("kind", "point"), ALL_POINTS, ids=IDS)
def test_penetrations_and_perimeter_joints_carry_a_firestop_caution(kind, point):
    """FP §3.1 (IBC §714, §715; ASTM E814, E1966); ducts point to the damper caution (FP §3.3)."""
    if point.key.startswith("vertical-perimeter") or PENETRATION_OR_JOINT.search(point.key):
        assert point.caution in FIRESTOP | {"fire_doors"}
        if kind != "door":
            assert point.caution in FIRESTOP
    if point.key == "duct-penetrations":
        assert point.caution == "fire_dampers"
    if point.key == "pipe-penetrations":
        assert point.caution == "listed_firestop_systems"


def test_boxes_carry_the_energised_box_caution():
    """FP §3.2: do not open energised boxes (NFPA 70E principle); IBC §714.4.2 box rules."""
    for kind, pts in TEMPLATES.items():
        for p in pts:
            if p.key.startswith(("back-box", "box-")):
                assert p.caution == "energised_boxes", (kind, p.key)


def test_door_template_carries_the_fire_door_caution():
    """FP §3.4: NFPA 80 clearances, listed gasketing, no field changes outside the label."""
    door = {p.key: p for p in template_for("door")}
    for key in ("door-bottom", "head-seal", "jamb-seals", "threshold", "frame-fill"):
        assert door[key].caution == "fire_doors"


def test_assembly_changes_go_to_the_designer():
    """FP §3.5: changes to stud gauge/spacing, channel, blocking go to the engineer of record."""
    for kind, key in [
        ("steel_stud", "framing-as-designed"),
        ("double_stud", "shared-blocking"),
        ("staggered_stud", "cross-blocking"),
        ("resilient_channel", "rc-direct"),
    ]:
        assert next(p for p in template_for(kind) if p.key == key).caution == "rated_assembly_changes"


# --- the cautions themselves -----------------------------------------------------------------


def test_caution_set_is_complete_and_sourced():
    """FP §3 items 1-9, each with its basis."""
    expected = {
        "sealant_not_firestop",
        "listed_firestop_systems",
        "energised_boxes",
        "fire_dampers",
        "fire_doors",
        "rated_assembly_changes",
        "site_safety",
        "estimates_not_tests",
        "local_codes_ahj",
        "records",
    }
    assert set(CAUTIONS) == expected
    for key, c in CAUTIONS.items():
        assert isinstance(c, Caution) and c.key == key
        assert c.title.strip() and c.text.strip() and c.basis.strip()
    assert "C919" in CAUTIONS["sealant_not_firestop"].basis
    assert "NFPA 80" in CAUTIONS["fire_doors"].basis
    assert "E336" in CAUTIONS["estimates_not_tests"].text
    assert "16283-1" in CAUTIONS["estimates_not_tests"].text
    assert "AHJ" in CAUTIONS["local_codes_ahj"].text
    assert "not mean code compliant" in CAUTIONS["records"].text
    listed = CAUTIONS["listed_firestop_systems"].text.lower()
    assert "listed" in listed and "submittal" in listed


def test_general_cautions_are_known_and_ordered():
    assert len(GENERAL_CAUTIONS) == len(set(GENERAL_CAUTIONS))
    assert set(GENERAL_CAUTIONS) <= set(CAUTIONS)
    assert GENERAL_CAUTIONS[0] == "estimates_not_tests"
    assert {"local_codes_ahj", "sealant_not_firestop", "records"} <= set(GENERAL_CAUTIONS)


def test_cautions_for_keeps_order_drops_repeats_and_blanks():
    got = cautions_for(["fire_doors", "", "energised_boxes", "fire_doors"])
    assert [c.key for c in got] == ["fire_doors", "energised_boxes"]
    assert [c.key for c in cautions_for("records")] == ["records"]
    assert cautions_for([]) == []
    wall_keys = [p.caution for p in template_for("wood_stud")]
    assert {c.key for c in cautions_for(wall_keys)} == {k for k in wall_keys if k}


def test_cautions_for_names_an_unknown_key():
    with pytest.raises(ValueError, match=r"caution key 'hard_hat' is not known"):
        cautions_for(["records", "hard_hat"])


# --- construction-time validation ------------------------------------------------------------


def _point(**changes):
    base = dict(
        key="x",
        label="X",
        face="a",
        trade="drywall",
        correct="c",
        usual_defect="d",
        gap_kind="slit",
        gap={"width_m": 0.006, "length_fraction": 0.5, "depth_m": 0.0159},
    )
    base.update(changes)
    return SealPointTemplate(**base)


@pytest.mark.parametrize(
    ("changes", "message"),
    [
        ({"face": "c"}, r"face 'c' is not one of"),
        ({"trade": "masonry"}, r"trade 'masonry' is not one of"),
        ({"gap_kind": "crack"}, r"gap_kind 'crack' is not one of"),
        ({"gap": {"width_m": 0.006, "length_m": "wall"}}, r"gap\['length_m'\] must be a positive number"),
        ({"gap": {"width_mm": 6}}, r"gap keys \['width_mm'\] not allowed"),
        ({"gap": {"width_m": -0.006}}, r"gap\['width_m'\] must be a positive number"),
        ({"gap": {"length_fraction": 1.5}}, r"length_fraction'\] must be at most 1"),
    ],
)
def test_bad_template_data_is_refused_naming_the_field(changes, message):
    with pytest.raises(ValueError, match=message):
        _point(**changes)


def test_modules_import_without_django_settings():
    """The templates are plain data: importable with no settings module and no database."""
    root = Path(__file__).resolve().parents[2]
    env = {k: v for k, v in os.environ.items() if k != "DJANGO_SETTINGS_MODULE"}
    code = "import qa.checklists, qa.cautions; from django.conf import settings; print(settings.configured)"
    out = subprocess.run(
        [sys.executable, "-c", code], cwd=root, env=env, capture_output=True, text=True, check=True
    )
    assert out.stdout.strip() == "False"
