"""Field descriptors (C17), the simplified flanking sum (C15) and field ratings."""

from __future__ import annotations

import numpy as np
import pytest
from _reference_curves import HEAVY_WALL

import acoustics as ac
from acoustics import RatingError

FLAT45 = np.full(21, 45.0)


def test_c17_iso_field_quantities():
    """C17 (derived): D = 45 dB, S = 10 m^2, V = 50 m^3, T = 0.5 s -> A = 16 m^2, R' = 42.96, DnT = 45.00,
    Dn = 42.96 dB (tolerance 0.005 dB)."""
    assert ac.sabine_absorption(50, 0.5) == pytest.approx(16.0)
    np.testing.assert_allclose(ac.apparent_r(FLAT45, 10, volume=50, t=0.5), 42.96, atol=0.005)
    np.testing.assert_allclose(ac.standardized_level_difference(FLAT45, 0.5), 45.0, atol=1e-12)
    np.testing.assert_allclose(ac.normalized_level_difference(FLAT45, volume=50, t=0.5), 42.96, atol=0.005)


def test_c17_astm_field_quantities():
    """C17 (derived): ASTM A2 = 0.161 V/T = 16.1 m^2 (printed to 0.1, tolerance 0.05), ATL = 42.93 dB, NNR =
    45.00 dB (tolerance 0.01 dB)."""
    assert ac.sabine_absorption(50, 0.5, standard="astm") == pytest.approx(16.1, abs=0.05)
    np.testing.assert_allclose(ac.apparent_tl(FLAT45, 10, volume=50, t2=0.5), 42.93, atol=0.01)
    np.testing.assert_allclose(ac.normalized_noise_reduction(FLAT45, 0.5), 45.0, atol=1e-12)


def test_field_ratings_are_the_lab_procedures_applied_to_band_quantities():
    """NIC, NNIC, ASTC use E413; R'w, DnT,w, Dn,w use ISO 717-1 (ASTM E413-22 1.3; ISO 717-1 clause 4)."""
    assert ac.nic(HEAVY_WALL) == ac.stc(HEAVY_WALL)
    assert ac.nnic(HEAVY_WALL, 1.0) == ac.stc(HEAVY_WALL + 10 * np.log10(2))
    # A2 equal to S: ATL = NR.
    assert ac.astc(HEAVY_WALL, 10, a2=10) == ac.stc(HEAVY_WALL)
    assert ac.r_prime_w(HEAVY_WALL, 10, a=10).rw == 53
    assert ac.dnt_w(HEAVY_WALL, 0.5) == ac.rw(HEAVY_WALL)
    assert ac.dn_w(HEAVY_WALL, a=10).rw == 53
    assert ac.r_prime_w(HEAVY_WALL, 10, a=10, decimal=True).rw == pytest.approx(53.4)


def test_per_band_reverberation_time():
    t = np.linspace(1.0, 0.5, 21)
    np.testing.assert_allclose(ac.standardized_level_difference(FLAT45, t), 45 + 10 * np.log10(t / 0.5))


def test_field_rating_error_names_descriptor_and_band():
    nr = HEAVY_WALL.copy()
    nr[5] = np.nan
    with pytest.raises(RatingError, match=r"NIC needs the 160 Hz band"):
        ac.nic(nr)
    with pytest.raises(RatingError, match=r"DnT,w needs the 160 Hz band"):
        ac.dnt_w(nr, 0.5)


@pytest.mark.parametrize(
    ("call", "match"),
    [
        (lambda: ac.apparent_r(FLAT45, 10), "give a"),
        (lambda: ac.apparent_r(FLAT45, 10, a=10, volume=50, t=0.5), "either a or volume"),
        (lambda: ac.apparent_r(FLAT45, -1, a=10), "area must be finite and > 0"),
        (lambda: ac.standardized_level_difference(FLAT45, 0), "t must be finite and > 0"),
        (lambda: ac.sabine_absorption(50, 0.5, standard="din"), "standard must be"),
        (lambda: ac.nnic(np.zeros(16), 0.5), "21 one-third-octave bands"),
    ],
)
def test_field_input_errors(call, match):
    with pytest.raises(ValueError, match=match):
        call()


# EN 12354-1:2000 Annex H.3 worked example (as transcribed): R_s,w = 57 dB, S_s = 11.5 m^2;
# flanking elements (R_w, K_Ff, K_Fd = K_Df, l_f) and printed R_Ff / R_Fd.
H3 = [
    ("floor", 49, 12.4, 8.9, 4.5, 65.5, 66.0),
    ("ceiling", 46, 14.4, 9.2, 4.5, 64.5, 64.8),
    ("facade", 42, 12.6, 6.7, 2.55, 61.1, 62.7),
    ("internal wall", 33, 33.5, 15.7, 2.55, 73.0, 67.2),
]


@pytest.mark.parametrize(("name", "r", "kff", "kfd", "lf", "rff", "rfd"), H3)
def test_c15_flanking_path_indices(name, r, kff, kfd, lf, rff, rfd):
    """C15: EN 12354-1 Annex H.3 printed R_Ff and R_Fd per flanking element (0.05 dB; printed to 0.1)."""
    assert ac.flanking_path_index(r, r, kff, 11.5, lf) == pytest.approx(rff, abs=0.05)
    assert ac.flanking_path_index(r, 57, kfd, 11.5, lf) == pytest.approx(rfd, abs=0.05)


def test_c15_apparent_index_and_dntw():
    """C15: R'w = 52.17 -> 52 (printed 52) and DnT,w = 53.6 with 0.32 V/S, V = 50 m^3 (notes; 0.05 dB).

    Paths: direct, and per element Ff, Fd, Df (Df = Fd since K_Df = K_Fd and R_D = R_d = R_s,w).
    """
    paths = [57.0]
    for _, r, kff, kfd, lf, _, _ in H3:
        rfd = ac.flanking_path_index(r, 57, kfd, 11.5, lf)
        paths += [ac.flanking_path_index(r, r, kff, 11.5, lf), rfd, rfd]
    r_prime = ac.energy_sum_index(paths)
    assert r_prime == pytest.approx(52.17, abs=0.05)
    assert round(float(r_prime)) == 52
    assert ac.dnt_from_r_prime(r_prime, 50, 11.5) == pytest.approx(53.6, abs=0.05)


# ----------------------------------------------- field tests from measured bands (ISO 16283-1, ASTM E336)
def test_background_correction_rules():
    """ISO 16283-1 Clause 9.2 (from memory): > 10 dB no correction; 6-10 dB log subtraction (hand: 50 - 42
    -> 50 + 10 lg(1 - 10^-0.8) = 49.251); < 6 dB the 1.3 dB correction, flagged as a limit."""
    l2 = np.full(21, 50.0)
    b2 = np.array([39.9, 40.0, 42.0, 44.0, 44.1, 45.0, 47.0] + [30.0] * 14)
    out, limit = ac.background_correction(l2, b2)
    assert out[0] == 50.0 and not limit[0]  # 10.1 dB: no correction
    assert out[1] == pytest.approx(50 + 10 * np.log10(1 - 0.1), abs=1e-9)  # exactly 10 dB: corrected
    assert out[2] == pytest.approx(49.251, abs=0.001)
    assert out[3] == pytest.approx(50 + 10 * np.log10(1 - 10**-0.6), abs=1e-9) and not limit[3]  # 6 dB
    np.testing.assert_allclose(out[4:7], 48.7)  # 5.9, 5 and 3 dB: limited to 1.3 dB
    assert limit[4:7].all() and not limit[:4].any() and not limit[7:].any()


def _levels():
    """L1 flat 95 dB, L2 = L1 - (ISO 717-1 heavy-wall curve - 2 dB), T2 0.6 s, V 48 m^3, S 11 m^2."""
    l1 = np.full(21, 95.0)
    return l1, l1 - (HEAVY_WALL - 2.0), 0.6, 48.0, 11.0


def test_field_test_hand_calculation():
    """ISO 16283-1: D = L1 - L2, DnT = D + 10 lg(T/0.5), R' = D + 10 lg(S T / (0.16 V)); ASTM E336:
    NNR = NR + 10 lg(T/0.5), ATL = NR + 10 lg(S T / (0.161 V)) (hand-worked at 500 Hz: D = 46.5,
    DnT = 47.29, R' = 46.5 + 10 lg(6.6 / 7.68) = 45.84, ATL = 45.81)."""
    l1, l2, t, v, s = _levels()
    res = ac.field_test(l1, l2, t, v, s)
    i = ac.BAND_INDEX[500]
    assert res.d[i] == pytest.approx(46.5)
    assert res.dnt[i] == pytest.approx(47.29, abs=0.005)
    assert res.r_prime[i] == pytest.approx(45.84, abs=0.005)
    assert res.atl[i] == pytest.approx(45.81, abs=0.005)
    assert res.nnr[i] == pytest.approx(res.dnt[i])
    assert res.r_prime_w == ac.rw(res.r_prime) and res.dnt_w == ac.rw(res.dnt)
    assert (res.astc, res.nnic, res.nic) == (ac.stc(res.atl), ac.stc(res.nnr), ac.stc(res.d))
    assert res.flags == ()


def test_field_test_against_phonometry():
    """D, DnT, R', R'w, DnT,w equal phonometry's airborne_insulation and weighted_rating (an oracle)."""
    import sys

    if sys.version_info < (3, 13):
        pytest.skip("phonometry requires Python >= 3.13")
    pin = pytest.importorskip("phonometry.building.insulation", reason="phonometry is not installed")
    rng = np.random.default_rng(7)
    for _ in range(20):
        l1 = rng.uniform(85, 100, 21)
        l2 = l1 - rng.uniform(25, 65, 21)
        t = rng.uniform(0.3, 1.5, 21)
        v, s = rng.uniform(20, 120), rng.uniform(6, 20)
        ours = ac.field_test(l1, l2, t, v, s)
        theirs = pin.airborne_insulation(l1, l2, t, area=s, volume=v)
        np.testing.assert_allclose(ours.d, theirs.d, atol=1e-9)
        np.testing.assert_allclose(ours.dnt, theirs.dnt, atol=1e-9)
        np.testing.assert_allclose(ours.r_prime, theirs.r_prime, atol=1e-9)
        assert ours.r_prime_w.rw == pin.weighted_rating(theirs.r_prime[3:19]).rating
        assert ours.dnt_w.rw == pin.weighted_rating(theirs.dnt[3:19]).rating


def test_field_test_background_limit_is_flagged_or_refused():
    """A band with background within 6 dB is a limit value: flagged, or refused with strict_background."""
    l1, l2, t, v, s = _levels()
    b2 = l2 - 15.0
    b2[8] = l2[8] - 4.0
    res = ac.field_test(l1, l2, t, v, s, b2=b2)
    assert res.limit_bands == [315] and "background_limit" in res.flags
    assert res.d[8] == pytest.approx(l1[8] - l2[8] + 1.3)
    with pytest.raises(ac.FieldInputError, match=r"b2\[315 Hz\]: background must be at least 6 dB"):
        ac.field_test(l1, l2, t, v, s, b2=b2, strict_background=True)


def test_field_test_partial_ranges_and_report_input():
    """ISO-only data (no 4000 Hz) rates R'w and DnT,w but not ASTC; report band results are rated directly."""
    l1, l2, t, v, s = _levels()
    l1 = l1.copy()
    l2 = l2.copy()
    l1[19:] = np.nan
    l2[19:] = np.nan
    res = ac.field_test(l1, l2, t, v, s)
    assert res.astc is None and res.r_prime_w is not None and "astm_incomplete" in res.flags
    rep = ac.field_test_from_report(r_prime=HEAVY_WALL, dnt=HEAVY_WALL + 1)
    assert rep.r_prime_w.rw == 53 and rep.dnt_w.rw == 54 and rep.astc is None
    rep2 = ac.field_test_from_report(atl=HEAVY_WALL, nnr=HEAVY_WALL)
    assert rep2.astc == ac.stc(HEAVY_WALL) and rep2.nic is None


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"t2": 0.0}, r"t2\[50 Hz\]: reverberation time must be > 0 s and at most 20 s"),
        ({"t2": 45.0}, r"t2\[50 Hz\]: reverberation time"),
        ({"volume": -3.0}, r"volume: must be > 0 m\^3"),
        ({"area": 0.0}, r"area: must be > 0 m\^2"),
        ({"l2": np.zeros(16)}, r"l2: must have 21 one-third-octave bands"),
        ({"b2": np.full(21, np.nan)}, r"b2\[50 Hz\]: background must be given"),
    ],
)
def test_field_test_input_errors(kwargs, match):
    l1, l2, t, v, s = _levels()
    args = {"l1": l1, "l2": l2, "t2": t, "volume": v, "area": s}
    args.update(kwargs)
    with pytest.raises(ac.FieldInputError, match=match):
        ac.field_test(**args)


def test_field_test_missing_band_names_it():
    l1, l2, t, v, s = _levels()
    l1 = l1.copy()
    l2 = l2.copy()
    l1[8] = l2[8] = np.nan
    with pytest.raises(ac.FieldInputError, match=r"bands: .* 315 Hz is missing"):
        ac.field_test(l1, l2, t, v, s)
    l2[9] = np.nan
    with pytest.raises(
        ac.FieldInputError, match=r"l2\[400 Hz\]: l1 and l2 must be measured in the same bands"
    ):
        ac.field_test(l1, l2, t, v, s)
