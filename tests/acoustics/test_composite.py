"""Composite transmission loss (check case C9) and its input rules."""

from __future__ import annotations

import numpy as np
import pytest

import acoustics as ac


def flat(x: float) -> np.ndarray:
    return np.full(21, float(x))


@pytest.mark.parametrize(
    ("wall_tl", "open_fraction", "expected"),
    [
        # C9 (derived from Hopkins Eq. 4.92; notes' script): wall 50 dB with 1 %, 0.1 %, 0.01 % open.
        (50, 0.01, 20.0),
        (50, 0.001, 29.96),
        (50, 0.0001, 39.59),
        # C9: wall 40 dB.
        (40, 0.01, 19.96),
        (40, 0.001, 29.59),
        (40, 0.0001, 36.99),
    ],
)
def test_c9_open_area(wall_tl, open_fraction, expected):
    """C9: composite of a wall with an open area (tau = 1); tolerance 0.01 dB (values printed to 0.01)."""
    s = 10.0
    tl = ac.composite([s * (1 - open_fraction), s * open_fraction], [flat(wall_tl), flat(0)])
    np.testing.assert_allclose(tl, expected, atol=0.01)


def test_c9_textbook_door_undercut():
    """C9: textbook Example 12.16 (cites Gomperts): door TL 50 dB, undercut 1/100 of its area -> ~20 dB, so
    80 dB outside gives ~60 dB inside (tolerance 0.1 dB)."""
    tl = ac.composite([0.99, 0.01], [flat(50), flat(0)])
    np.testing.assert_allclose(80 - tl, 60, atol=0.1)


def test_c9_door_in_wall():
    """C9: 9 m^2 at 50 dB + 1 m^2 at 30 dB -> 39.63 dB (tolerance 0.005 dB)."""
    np.testing.assert_allclose(ac.composite([9, 1], [flat(50), flat(30)]), 39.63, atol=0.005)


def test_negative_tl_kept_not_clipped():
    """Resonant apertures have tau > 1 (Vigran 2008 9.2.1: about -5 to -10 dB); the composite keeps it."""
    tl = ac.composite([0.5, 0.5], [flat(60), flat(-6)])
    np.testing.assert_allclose(tl, -10 * np.log10(0.5 * 10**-6 + 0.5 * 10**0.6))
    assert np.all(tl < 0)


def test_added_area_equals_element_with_tau_one():
    with_element = ac.composite([9.99, 0.01], [flat(50), flat(0)])
    added = ac.composite([9.99], [flat(50)], added=np.full(21, 0.01))
    np.testing.assert_allclose(added, -10 * np.log10((9.99 * 1e-5 + 0.01) / 9.99))
    assert np.all(added < with_element + 1e-12)  # same power over a smaller total area
    np.testing.assert_allclose(ac.tl_with_added_area(flat(50), 9.99, np.full(21, 0.01)), added)


def test_nan_band_propagates_and_batches_broadcast():
    a = flat(50)
    a[0] = np.nan
    out = ac.composite([1.0, 1.0], np.stack([a, flat(40)]))
    assert np.isnan(out[0]) and np.isfinite(out[1:]).all()
    batch = ac.composite(np.array([[1.0, 1.0], [3.0, 1.0]]), np.stack([np.stack([flat(50), flat(40)])] * 2))
    assert batch.shape == (2, 21)


def test_tau_round_trip():
    np.testing.assert_allclose(ac.tl_from_tau(ac.tau_from_tl([-5.0, 0.0, 33.3])), [-5.0, 0.0, 33.3])
    with pytest.raises(ValueError, match="tau must be >= 0"):
        ac.tl_from_tau([-1.0])


@pytest.mark.parametrize(
    ("areas", "tls", "match"),
    [
        ([1.0, -1.0], np.zeros((2, 21)), "areas must be finite and >= 0"),
        ([0.0, 0.0], np.zeros((2, 21)), "more than 0"),
        ([1.0], np.zeros((2, 21)), "areas has 1 elements but tls has 2"),
        ([1.0, 1.0], np.zeros((2, 16)), r"tls must have shape"),
        (1.0, np.zeros((1, 21)), "scalar"),
    ],
)
def test_composite_errors(areas, tls, match):
    with pytest.raises(ValueError, match=match):
        ac.composite(areas, tls)


def test_added_area_errors():
    with pytest.raises(ValueError, match="added transmission area must be finite and >= 0"):
        ac.composite([1.0], [flat(40)], added=-np.ones(21))
    with pytest.raises(ValueError, match="area must be a finite wall area"):
        ac.tl_with_added_area(flat(40), 0.0, np.zeros(21))
