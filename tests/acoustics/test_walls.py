"""Wall prediction: analytic checks C10-C13 of the method notes, spec parsing and flags."""

from __future__ import annotations

import numpy as np
import pytest

from acoustics.assembly import Assembly, WallSpecError
from acoustics.bands import BANDS, N_BANDS
from acoustics.ratings import stc
from acoustics.wall_physics import (
    cavity_path_tl,
    finite_size_tau,
    mass_law,
    resonance_frequency,
    single_leaf_tl,
)
from acoustics.walls import predict, predict_tl

SINGLE_STUD = {
    "leaves": [{"layers": ["gypsum_12.7"]}, {"layers": ["gypsum_12.7"]}],
    "cavity": {"depth": 0.089, "absorber": {"thickness": 0.089}},
    "connection": {"type": "wood_stud"},
}


@pytest.mark.parametrize(
    ("m", "f", "normal", "field"),
    [
        (10.0, 500.0, 31.56, 26.06),  # method notes C10 (rho0 c0 = 415), Bies Eq. 7.40/7.42
        (10.0, 125.0, 19.57, 14.07),
        (8.6, 500.0, 30.25, 24.75),
    ],
)
def test_mass_law_c10(m, f, normal, field):
    assert mass_law(f, m, incidence="normal") == pytest.approx(normal, abs=0.02)
    assert mass_law(f, m) == pytest.approx(field, abs=0.02)


def test_finite_size_against_iso_15186_3_table_a1():
    """ISO 15186-3:2002 Table A.1 [TR]: 10 kg/m^2, 10 m^2, 23 degC -> 10.7 ... 17.9 dB; tolerance 0.1 dB."""
    f = np.array([50.0, 63, 80, 100, 125, 160])
    tl = -10 * np.log10(finite_size_tau(f, 10.0, 10.0, c0=345.0, rho0=1.192))
    np.testing.assert_allclose(tl, [10.7, 11.9, 13.4, 14.8, 16.3, 17.9], atol=0.11)


def test_single_leaf_matches_computed_example_7_3():
    """Method notes 7.3 computed example: m 8.5, fc 2800 Hz, eta 0.02 (tolerance 0.05 dB)."""
    f = np.array([125, 160, 200, 250, 315, 400, 500, 630, 800, 1000, 1250, 1600, 2000, 2500, 3150, 4000.0])
    expected = [
        12.7,
        14.8,
        16.7,
        18.6,
        20.6,
        22.7,
        24.7,
        26.7,
        28.7,
        30.7,
        32.6,
        32.2,
        29.8,
        27.4,
        27.7,
        30.8,
    ]
    np.testing.assert_allclose(single_leaf_tl(f, 8.5, 2800.0, 0.02), expected, atol=0.06)


def test_coincidence_dip_depth_bies_point_b():
    """Bies design chart point B: TL(fc) = 20 lg(fc m) + 10 lg eta - 44.

    Eq. 7.44 at f = fc gives the constant -42.4 + 10 lg(2/pi) = -44.36 with rho0 c0 = 415; the chart
    rounds it to -44, hence the 0.5 dB tolerance.
    """
    m, fc, eta = 10.9, 2252.0, 0.03
    assert single_leaf_tl(fc, m, fc, eta) == pytest.approx(
        20 * np.log10(fc * m) + 10 * np.log10(eta) - 44, abs=0.5
    )


@pytest.mark.parametrize(
    ("m1", "m2", "d", "f0"),
    [
        (8.5, 8.5, 0.0889, 97.7),
        (10.9, 10.9, 0.0889, 86.3),
        (21.8, 21.8, 0.0889, 61.0),  # method notes C13
    ],
)
def test_resonance_c13(m1, m2, d, f0):
    assert resonance_frequency(m1, m2, d) == pytest.approx(f0, abs=0.1)


def test_limiting_frequency_and_sharp_branches():
    """C13: f_l = c0/(2 pi d) = 614 Hz for d = 88.9 mm; Sharp is continuous at f_l (20 lg(2kd) = 6 dB)."""
    p = predict(SINGLE_STUD)
    assert p.f_l == pytest.approx(614, abs=1)
    fl = 343 / (2 * np.pi * 0.0889)
    lo, hi = cavity_path_tl([fl * 0.999, fl * 1.001], [20, 20], [20, 20], [0, 0], 50.0, 0.0889)
    assert lo == pytest.approx(hi, abs=0.05) and hi == pytest.approx(40 + 20 * np.log10(2), abs=0.01)


def test_predict_shapes_flags_and_round_trip():
    p = predict(SINGLE_STUD)
    assert p.tl.shape == (N_BANDS,) and np.all(np.isfinite(p.tl))
    assert len(p.leaf_tl) == 2 and p.fc[0] == pytest.approx(2819, abs=1)
    tl, flags = predict_tl(SINGLE_STUD)
    np.testing.assert_array_equal(tl, p.tl)
    assert "predicted" in flags
    again = predict(Assembly.from_dict(p.assembly.to_dict()))
    np.testing.assert_allclose(again.tl, p.tl)


def test_single_leaf_and_masonry_with_lining():
    cmu = predict({"leaves": [{"layers": ["cmu_190"]}]})
    lined = predict(
        {
            "leaves": [{"layers": ["cmu_190"]}, {"layers": ["gypsum_15.9_x"]}],
            "cavity": {"depth": 0.019},
            "connection": {"type": "furring", "spacing": 0.61},
        }
    )
    assert cmu.f0 is None and lined.f0 > 100
    assert stc(lined.tl) >= stc(cmu.tl)


def test_unsealed_perimeter_is_a_through_path():
    """Sealing strategy: a 3 mm perimeter gap costs many points (ASTM C919 example: 53 -> 29 unsealed)."""
    sealed = stc(predict(SINGLE_STUD).tl)
    leaky = predict({**SINGLE_STUD, "sealing": {"perimeter": "unsealed", "gap_width": 0.003}})
    assert "perimeter_unsealed" in leaky.flags
    assert sealed - stc(leaky.tl) >= 10


@pytest.mark.parametrize(
    ("spec", "match"),
    [
        ({"leaves": []}, "spec.leaves must be a list of 1 or 2"),
        ({"leaves": [{"layers": ["gypsum_12.7"]}] * 2}, "spec.cavity is required"),
        ({**SINGLE_STUD, "cavity": {"depth": -1}}, r"cavity.depth must be between"),
        ({**SINGLE_STUD, "connection": {"type": "glue"}}, "connection.type must be one of"),
        ({**SINGLE_STUD, "leaves": [{"layers": ["nope"]}] * 2}, r"leaves\[0\].layers\[0\]: unknown material"),
        (
            {**SINGLE_STUD, "leaves": [{"layers": [{"material": "gypsum_12.7", "count": 9}]}] * 2},
            "count must be",
        ),
        ({**SINGLE_STUD, "sealing": {"perimeter": "maybe"}}, "sealing.perimeter"),
        (
            {**SINGLE_STUD, "connection": {"type": "double_studs", "resilient_channel": {"leaf": 1}}},
            "needs studs",
        ),
        ({"leaves": [{"layers": ["cmu_190"]}], "connection": {"type": "wood_stud"}}, "single-leaf"),
        ("not a dict", "must be a mapping"),
    ],
)
def test_bad_specs_name_the_field(spec, match):
    with pytest.raises(WallSpecError, match=match):
        predict(spec)


def test_wall_spec_error_is_a_value_error():
    assert issubclass(WallSpecError, ValueError)


# --- wall-model corrections of issue 13, each against its source ------------------------------------------


def _single(material, thickness=None):
    layer = {"material": material} if thickness is None else {"material": material, "thickness": thickness}
    return {"leaves": [{"layers": [layer]}]}


def _stud(a, b, conn="wood_stud", depth=0.089, fill=0.089, **extra):
    return {
        "leaves": [{"layers": list(a)}, {"layers": list(b)}],
        "cavity": {"depth": depth, "absorber": {"thickness": fill}},
        "connection": {"type": conn, **extra},
    }


@pytest.mark.parametrize(("mm", "published"), [(6, 31), (12, 35)])
def test_glass_with_mounted_loss_factor(mm, published):
    """Quirt (1982) JASA 72(3) 834-844 (from memory): monolithic glass 6 mm STC 31, 12 mm 35; +-1. With the
    bare-glass loss factor (0.005) both read 27-28, barely rising with thickness."""
    assert abs(stc(predict(_single("glass_6", mm / 1000)).tl) - published) <= 1
    bare = {"leaves": [{"layers": [{"material": "glass_6", "thickness": mm / 1000}], "loss_factor": 0.005}]}
    assert stc(predict(bare).tl) <= published - 3


def test_radiation_factor_above_coincidence():
    """ISO 12354-1 Annex B sigma_1 = 1/sqrt(1 - fc/f) above fc, at most 2 (from memory); exact values."""
    from acoustics.wall_physics import radiation_factor_above_fc

    sigma = radiation_factor_above_fc(np.array([50.0, 100.0, 200.0, 400.0, 101.0]), 100.0)
    np.testing.assert_allclose(sigma, [1.0, 1.0, np.sqrt(2.0), 1 / np.sqrt(0.75), 2.0], rtol=1e-12)


@pytest.mark.parametrize(("mm", "published"), [(100, 46), (150, 53), (200, 58), (250, 61)])
def test_concrete_follows_annex_b_mass_law(mm, published):
    """ISO 12354-1 Annex B empirical Rw = 37.5 lg m' - 42 (from memory; STC ~ Rw for heavy walls, common
    practice): 228-570 kg/m^2 -> 46, 53, 58, 61. Within 2 (the Sharp form without sigma read 3-4 high)."""
    assert abs(stc(predict(_single("concrete_150", mm / 1000)).tl) - published) <= 2


def test_decoupled_double_wall_high_frequency_limit():
    """Issue 13 / ASHRAE (2019) Ch. 49 Table 40 double steel studs, 2 x 16 mm each side: laboratories
    measure 60-75 dB at 1-2.5 kHz (octave 71 and 69 dB at 1 and 2 kHz), not the 75-107 dB of Sharp's
    TL1 + TL2 + 6."""
    p = predict(_stud(["gypsum_15.9_x"] * 2, ["gypsum_15.9_x"] * 2, "double_studs", 0.209))
    band = (BANDS >= 1000) & (BANDS <= 2500)
    assert np.all((p.tl[band] >= 60) & (p.tl[band] <= 75)), p.tl[band]


def test_damped_board_acts_on_the_stud_path():
    """Damped laminated board (viscoelastic core) on wood studs gains about ten points over plain board
    (published laboratory tests, from memory): one face >= 7, both faces >= 10; the stud path drops by
    10 lg(eta / 0.03) per damped face (Craik & Smith 2000, SEA of the stud path)."""
    plain = stc(predict(_stud(["gypsum_15.9_x"], ["gypsum_15.9_x"])).tl)
    one = stc(predict(_stud(["damped_gypsum_12.7"], ["gypsum_15.9_x"])).tl)
    both = stc(predict(_stud(["damped_gypsum_12.7"], ["damped_gypsum_12.7"])).tl)
    assert one - plain >= 7 and both - plain >= 10 and both > one


def test_screws_through_channel_are_rigid_point_ties():
    """A channel screwed into the studs at every crossing is Sharp's rigid point bridge on the channel grid
    (Vigran Eq. 8.26): shorted = 1 equals an infinitely stiff channel; the rating falls as more crossings are
    shorted."""
    g = ["gypsum_15.9_x"]
    spec = _stud(g, g, resilient_channel={"leaf": 1, "shorted": 1.0})
    stiff = _stud(g, g, resilient_channel={"leaf": 1, "stiffness": 1e9})
    np.testing.assert_allclose(predict(spec).tl, predict(stiff).tl, atol=0.3)
    ratings = [stc(predict(_stud(g, g, resilient_channel={"leaf": 1, "shorted": q})).tl) for q in (0, 0.2, 1)]
    assert ratings[0] > ratings[1] > ratings[2]
    with pytest.raises(WallSpecError, match="resilient_channel.shorted must be between 0 and 1"):
        Assembly.from_dict(_stud(g, g, resilient_channel={"leaf": 1, "shorted": 2}))


@pytest.mark.parametrize("stiffness", [1e5, 1e6, 3e6, 1e7, 3e7, 1e8, 1e9])
def test_stiff_stud_moves_f0_without_a_step(stiffness):
    """A stiffer steel stud raises f0 (spring per unit area in Hopkins Eq. 4.89) but adjacent bands never
    differ by 8 dB or more (before: a 10 dB step where the cavity path switched branch at the raised f0)."""
    p = predict(_stud(["gypsum_15.9_x"], ["gypsum_15.9_x"], "steel_stud", 0.092, stiffness=stiffness))
    assert np.abs(np.diff(p.tl[3:20])).max() < 8.0
