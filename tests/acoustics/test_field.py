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
