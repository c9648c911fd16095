"""Predicted STC against published laboratory STC of generic assemblies.

Sources (method notes 9.2, field-practice section 6), each named beside its row:
SH = Rossing (ed.) (2014) *Springer Handbook of Acoustics* 2nd ed., Table 11.4 [TR];
AS = ASHRAE (2019) *Handbook - HVAC Applications* Ch. 49 Table 40 [TR];
HA = Harris (ed.) *Handbook of Acoustical Measurements and Noise Control* 3rd ed. (Spanish ed.), Table 31.2,
     values labelled approximate, 13 mm board [TR];
FP = field-practice note section 6 typical values (rows marked "from memory, unverified" there).
Construction details the tables do not state are assumptions written in the row: 38 x 89 mm wood studs at
406 mm, steel studs at 610 mm, staggered studs on a 140 mm plate, "insulation"/"absorption" = batt
of the stated or full stud depth (flow resistivity 10 kPa s/m^2, from memory).

Acceptance (issue 13), strict for every row: mean absolute error <= 2.0 points over all rows, no row off by
more than 5 points, and no construction family (wood stud, steel stud, channel, double/staggered,
masonry/concrete, glass, damped) biased by more than +-2 points on average. Empty cavities rely on the damped
mass-air-mass resonance of the wall model (resonance_factor); without it the empty steel-stud rows were 8
points high. Assemblies never used to tune the model are checked in test_published_assemblies_heldout.py.
"""

from __future__ import annotations

import numpy as np
import pytest

from acoustics.ratings import stc
from acoustics.walls import predict

G12, G16 = "gypsum_12.7", "gypsum_15.9_x"


def _dbl(a, b, depth, conn, fill=0.0, rc=None):
    c: dict = {"type": conn}
    if rc is not None:
        c["resilient_channel"] = {"leaf": rc}
    return {
        "leaves": [{"layers": a}, {"layers": b}],
        "cavity": {"depth": depth, "absorber": {"thickness": fill}},
        "connection": c,
    }


CMU = {"leaves": [{"layers": ["cmu_190"]}]}
# (label, source, spec, published STC, published octave TL 125..4000 Hz or None)
ASSEMBLIES = [
    (
        "wood stud, 1/2 in board each side",
        "SH Table 11.4",
        _dbl([G12], [G12], 0.089, "wood_stud"),
        33,
        [17, 31, 33, 40, 38, 36],
    ),
    (
        "wood stud, 1/2 in board, 2 in insulation",
        "SH Table 11.4",
        _dbl([G12], [G12], 0.089, "wood_stud", 0.051),
        37,
        [15, 30, 34, 44, 46, 41],
    ),
    (
        "wood stud, 2 x 1/2 in board each side",
        "SH Table 11.4",
        _dbl([G12] * 2, [G12] * 2, 0.089, "wood_stud"),
        41,
        [25, 34, 41, 51, 48, 50],
    ),
    (
        "staggered wood studs, 1/2 in board",
        "SH Table 11.4",
        _dbl([G12], [G12], 0.140, "staggered_studs"),
        39,
        [23, 28, 39, 46, 54, 44],
    ),
    (
        "staggered wood studs, 1/2 in board, 2 in insulation",
        "SH Table 11.4",
        _dbl([G12], [G12], 0.140, "staggered_studs", 0.051),
        48,
        [29, 38, 45, 52, 58, 50],
    ),
    (
        "steel stud 92 mm, 1/2 in board",
        "SH Table 11.4",
        _dbl([G12], [G12], 0.092, "steel_stud"),
        39,
        [22, 27, 43, 47, 37, 46],
    ),
    (
        "steel stud 92 mm, 1/2 in board, 2 in insulation",
        "SH Table 11.4",
        _dbl([G12], [G12], 0.092, "steel_stud", 0.051),
        45,
        [26, 41, 52, 54, 45, 51],
    ),
    ("CMU 200 mm", "SH Table 11.4", CMU, 53, [36, 44, 50, 54, 58, 56]),
    (
        "steel stud 92 mm, 16 mm board each side",
        "AS Table 40",
        _dbl([G16], [G16], 0.092, "steel_stud"),
        38,
        [16, 33, 47, 55, 43, 47],
    ),
    (
        "steel stud 92 mm, 16 mm board, fibreglass",
        "AS Table 40",
        _dbl([G16], [G16], 0.092, "steel_stud", 0.089),
        49,
        [23, 44, 58, 64, 52, 53],
    ),
    (
        "steel stud 92 mm, 2 x 16 mm each side, fibreglass",
        "AS Table 40",
        _dbl([G16] * 2, [G16] * 2, 0.092, "steel_stud", 0.089),
        56,
        [32, 50, 62, 67, 58, 63],
    ),
    (
        "double steel studs 92 mm, 25 mm apart, 2 x 16 mm each side, fibreglass",
        "AS Table 40",
        _dbl([G16] * 2, [G16] * 2, 0.209, "double_studs", 0.089),
        64,
        [40, 54, 62, 71, 69, 74],
    ),
    ("CMU 200 mm", "AS Table 40", CMU, 50, [35, 41, 44, 50, 57, 64]),
    (
        "CMU 200 mm + 16 mm board on 19 mm furring",
        "AS Table 40",
        {**_dbl(["cmu_190"], [G16], 0.019, "furring")},
        53,
        [32, 44, 50, 56, 59, 65],
    ),
    (
        "concrete 150 mm",
        "AS Table 40",
        {"leaves": [{"layers": ["concrete_150"]}]},
        53,
        [40, 40, 49, 58, 67, 76],
    ),
]
for _n, (_lay, _s) in {
    "1/1": ([G12], [G12]),
    "1/2": ([G12], [G12] * 2),
    "2/2": ([G12] * 2, [G12] * 2),
}.items():
    _i = ["1/1", "1/2", "2/2"].index(_n)
    for _kind, _depth, _conn, _rc, _pub in [
        ("wood studs 38x89", 0.089, "wood_stud", None, ((33, 41, 43), (36, 44, 46))),
        ("steel studs 65 mm", 0.065, "steel_stud", None, ((36, 44, 46), (44, 48, 52))),
        ("steel studs 90 mm", 0.092, "steel_stud", None, ((39, 45, 50), (45, 49, 56))),
        ("wood studs, resilient channel one side", 0.089, "wood_stud", 1, ((40, 44, 52), (48, 52, 56))),
        ("staggered wood studs", 0.140, "staggered_studs", None, ((41, 47, 52), (50, 53, 55))),
    ]:
        for _abs in (0, 1):
            _fill = min(_depth, 0.089) if _abs else 0.0
            ASSEMBLIES.append(
                (
                    f"{_kind}, 13 mm board {_n}{', absorption' if _abs else ''}",
                    "HA Table 31.2",
                    _dbl(list(_lay), list(_s), _depth, _conn, _fill, _rc),
                    _pub[_abs][_i],
                    None,
                )
            )
ASSEMBLIES += [
    (
        "wood stud, resilient channel one side, 5/8 in Type X each side, batt",
        "FP row D",
        _dbl([G16], [G16], 0.089, "wood_stud", 0.089, 1),
        50,
        None,
    ),
    (
        "staggered wood studs on 2x6 plate, 5/8 in Type X, batt",
        "FP row F (from memory)",
        _dbl([G16], [G16], 0.140, "staggered_studs", 0.089),
        47,
        None,
    ),
    (
        "double wood studs, 1 in gap, 5/8 in Type X, batt",
        "FP row G (from memory)",
        _dbl([G16], [G16], 0.203, "double_studs", 0.089),
        58,
        None,
    ),
]

# Rows added for issue 13 (single and laminated glass, concrete, block with and without linings, heavy-gauge
# steel studs, damped board, double and staggered studs with one and two layers). Sources:
# IR761 = Halliwell, Nightingale, Warnock & Birta (1998) *Gypsum Board Walls: Transmission Loss Data*, NRC
#   Canada IRC-IR-761 (values from memory of its tables, rounded; marked so);
# Q82 = Quirt, J. D. (1982) Sound transmission through windows I. Single and double glazing, JASA 72(3)
#   834-844 (monolithic and laminated glass STC by thickness; from memory);
# B12354 = ISO 12354-1:2017 Annex B empirical mass law for heavy walls, Rw = 37.5 lg m' - 42 (m' >= 150
#   kg/m^2; from memory), STC taken equal to Rw for heavy homogeneous walls (common practice, no source);
# TEK = NCMA TEK 13-1C (2012) *Sound Transmission Class Ratings for Concrete Masonry Walls*, STC = 20.6 lg W
#   + 12.9, W wall weight in lb/ft^2 (equation from memory);
# DMP = published laboratory tests of damped laminated gypsum board (viscoelastic core) on studs, generic
#   manufacturers' data sheets (from memory, unverified).
G13X = "gypsum_12.7_x"
STEEL_HEAVY = 5.0e7  # N/m per m: 1.37 mm (16 ga) studs, near rigid (order of magnitude, from memory)


def _single(material, thickness=None):
    layer = {"material": material} if thickness is None else {"material": material, "thickness": thickness}
    return {"leaves": [{"layers": [layer]}]}


ASSEMBLIES += [
    *[
        (f"float glass {mm} mm", "Q82 (from memory)", _single("glass_6", mm / 1000), pub, None)
        for mm, pub in ((3, 28), (4, 29), (5, 30), (6, 31), (12, 35), (19, 37))
    ],
    *[
        (
            f"laminated glass {mm} mm (PVB interlayer)",
            "Q82 (from memory)",
            _single("laminated_glass_6.4", mm / 1000),
            pub,
            None,
        )
        for mm, pub in ((6.4, 35), (12.8, 38))
    ],
    *[
        (f"concrete {mm} mm", "B12354", _single("concrete_150", mm / 1000), pub, None)
        for mm, pub in ((100, 46), (125, 50), (200, 58), (250, 61))
    ],
    ("calcium silicate masonry 200 mm", "B12354", _single("calcium_silicate_200"), 54, None),
    ("CMU 140 mm hollow", "TEK (from memory)", _single("cmu_140"), 44, None),
    ("CMU 190 mm fully grouted", "TEK (from memory)", _single("cmu_190_grouted"), 52, None),
    ("CMU 290 mm hollow", "TEK (from memory)", _single("cmu_290"), 50, None),
    (
        "CMU 190 mm + 16 mm board on independent 41 mm steel studs 25 mm off the block, 38 mm batt",
        "IR761-type lining (from memory)",
        _dbl(["cmu_190"], [G16], 0.066, "none", 0.038),
        59,
        None,
    ),
    (
        "heavy-gauge steel studs 92 mm at 406 mm, 16 mm board 1/1, batt",
        "IR761 (from memory)",
        {
            **_dbl([G16], [G16], 0.092, "steel_stud", 0.089),
            "connection": {"type": "steel_stud", "spacing": 0.406, "stiffness": STEEL_HEAVY},
        },
        40,
        None,
    ),
    (
        "heavy-gauge steel studs 92 mm at 406 mm, 16 mm board 2/2, batt",
        "IR761 (from memory)",
        {
            **_dbl([G16] * 2, [G16] * 2, 0.092, "steel_stud", 0.089),
            "connection": {"type": "steel_stud", "spacing": 0.406, "stiffness": STEEL_HEAVY},
        },
        48,
        None,
    ),
    (
        "wood studs 38x89, 16 mm Type X 1/1, batt",
        "IR761 (from memory)",
        _dbl([G16], [G16], 0.089, "wood_stud", 0.089),
        36,
        None,
    ),
    (
        "wood studs 38x89, damped board one side, 16 mm Type X other side, batt",
        "DMP (from memory)",
        _dbl(["damped_gypsum_12.7"], [G16], 0.089, "wood_stud", 0.089),
        46,
        None,
    ),
    (
        "wood studs 38x89, damped board both sides, batt",
        "DMP (from memory)",
        _dbl(["damped_gypsum_12.7"], ["damped_gypsum_12.7"], 0.089, "wood_stud", 0.089),
        50,
        None,
    ),
    (
        "steel studs 92 mm, damped board one side, 16 mm Type X other side, batt",
        "DMP (from memory)",
        _dbl(["damped_gypsum_12.7"], [G16], 0.092, "steel_stud", 0.089),
        52,
        None,
    ),
    (
        "steel studs 92 mm, damped board both sides, batt",
        "DMP (from memory)",
        _dbl(["damped_gypsum_12.7"], ["damped_gypsum_12.7"], 0.092, "steel_stud", 0.089),
        55,
        None,
    ),
    (
        "double wood studs, 25 mm gap, 16 mm Type X 2/2, batt",
        "IR761 (from memory)",
        _dbl([G16] * 2, [G16] * 2, 0.203, "double_studs", 0.089),
        63,
        None,
    ),
    (
        "double wood studs, 25 mm gap, 16 mm Type X 1/2, batt",
        "IR761 (from memory)",
        _dbl([G16], [G16] * 2, 0.203, "double_studs", 0.089),
        60,
        None,
    ),
    (
        "staggered wood studs on 2x6 plate, 16 mm Type X 2/2, batt",
        "IR761 (from memory)",
        _dbl([G16] * 2, [G16] * 2, 0.140, "staggered_studs", 0.089),
        55,
        None,
    ),
    (
        "wood studs, resilient channel one side, 16 mm Type X 2/2, batt",
        "IR761 (from memory)",
        _dbl([G16] * 2, [G16] * 2, 0.089, "wood_stud", 0.089, 1),
        58,
        None,
    ),
]

# Curve shape known to miss (strict xfail, so a model fix shows up): above 1 kHz the model lets steel-stud
# walls climb with the cavity path (TL1 + TL2 + 6), while measured curves flatten near 50-60 dB and dip
# hard at coincidence; the CMU plateau of the Springer row is not modelled (Sharp above fc keeps rising).
SHAPE_WEAK = {
    "steel stud 92 mm, 1/2 in board",
    "steel stud 92 mm, 1/2 in board, 2 in insulation",
    "CMU 200 mm|SH Table 11.4",
    "steel stud 92 mm, 16 mm board each side",
    "steel stud 92 mm, 16 mm board, fibreglass",
    "steel stud 92 mm, 2 x 16 mm each side, fibreglass",
}


def octave(tl: np.ndarray) -> np.ndarray:
    """Octave-band TL 125...4000 Hz from the three thirds of each octave (energy mean of tau)."""
    tau = 10 ** (-tl[3:21] / 10)
    return -10 * np.log10(tau.reshape(6, 3).mean(axis=1))


FAMILIES = ("wood stud", "steel stud", "channel", "double/staggered", "masonry/concrete", "glass", "damped")


def family(spec: dict) -> str:
    """The construction family a row is judged in (issue 13 checks)."""
    layers = [
        lay if isinstance(lay, str) else lay["material"] for lf in spec["leaves"] for lay in lf["layers"]
    ]
    conn = spec.get("connection", {})
    if any("damped" in m for m in layers):
        return "damped"
    if any("glass" in m for m in layers):
        return "glass"
    if any(m.startswith(("cmu", "concrete", "calcium")) for m in layers):
        return "masonry/concrete"
    if "resilient_channel" in conn:
        return "channel"
    if conn.get("type") in ("double_studs", "staggered_studs"):
        return "double/staggered"
    return "steel stud" if conn.get("type") == "steel_stud" else "wood stud"


def table(rows: list = ASSEMBLIES) -> list[tuple[str, str, str, int, int]]:
    """(label, source, family, published STC, predicted STC) for every row."""
    return [(lab, src, family(spec), pub, int(stc(predict(spec).tl))) for lab, src, spec, pub, *_ in rows]


ROWS = table()


def test_enough_rows_from_named_sources():
    assert len(ROWS) >= 70 and all(src for _, src, _, _, _ in ROWS)
    assert {r[2] for r in ROWS} == set(FAMILIES)


def test_mean_absolute_error_at_most_2():
    """Issue 13: mean absolute error <= 2.0 STC over all rows."""
    err = np.array([pred - pub for _, _, _, pub, pred in ROWS])
    assert np.abs(err).mean() <= 2.0, err


@pytest.mark.parametrize("fam", FAMILIES)
def test_no_family_biased_more_than_2(fam):
    """Issue 13: the mean signed error of each construction family lies within +-2 STC."""
    err = [pred - pub for _, _, f, pub, pred in ROWS if f == fam]
    assert abs(np.mean(err)) <= 2.0, (fam, err)


@pytest.mark.parametrize(
    ("label", "source", "fam", "pub", "pred"), ROWS, ids=[f"{r[1]}: {r[0]}" for r in ROWS]
)
def test_each_row_within_5_points(label, source, fam, pub, pred):
    """Issue 13: no row off by more than 5 points."""
    assert abs(pred - pub) <= 5, f"{source} {label}: published {pub}, predicted {pred}"


def _shape_param(r):
    weak = r[0] in SHAPE_WEAK or f"{r[0]}|{r[1]}" in SHAPE_WEAK
    marks = (
        [pytest.mark.xfail(strict=True, reason="high-frequency shape not modelled, see SHAPE_WEAK")]
        if weak
        else []
    )
    return pytest.param(r, id=f"{r[1]}: {r[0]}", marks=marks)


@pytest.mark.parametrize("row", [_shape_param(r) for r in ASSEMBLIES if r[4] is not None])
def test_octave_curve_shape(row):
    """Octave shape: after removing the mean offset, mean |difference| <= 5 dB and the curve rises overall.

    5 dB: the published octave values include resonance and coincidence dips that the Sharp model smooths;
    tolerance chosen for this comparison, no source.
    """
    _, _, spec, _, pub = row
    pred = octave(predict(spec).tl)
    diff = pred - np.array(pub, float)
    assert np.abs(diff - diff.mean()).mean() <= 5.0, np.round(diff, 1)
    assert pred[-1] > pred[0] and pub[-1] > pub[0]
