"""Cross-checks against the general-purpose reference library phonometry (Python >= 3.13) on the same inputs.

phonometry implements Bies' Sharp single panel and double wall (Bies 7.2.4.1, 7.2.6); it is an oracle here,
never the implementation. Same air: c0 = 343 m/s, rho0 = 1.21 kg/m^3.
"""

from __future__ import annotations

import sys

import numpy as np
import pytest

if sys.version_info < (3, 13):
    pytest.skip("phonometry needs Python >= 3.13", allow_module_level=True)
pt = pytest.importorskip("phonometry.building.panel_transmission", reason="phonometry is not installed")

from acoustics.bands import BANDS  # noqa: E402
from acoustics.wall_physics import cavity_path_tl, mass_law, resonance_frequency, single_leaf_tl  # noqa: E402

F = np.array(BANDS, dtype=float)  # the nominal band centres, Hz, the same inputs on both sides
AIR = {"speed_of_sound": 343.0, "air_density": 1.21}


@pytest.mark.parametrize("m", [8.5, 10.9, 21.8, 210.0])
def test_mass_law(m):
    np.testing.assert_allclose(mass_law(F, m), pt.mass_law_transmission_loss(F, m, **AIR), atol=1e-9)
    np.testing.assert_allclose(
        mass_law(F, m, incidence="normal"),
        pt.mass_law_transmission_loss(F, m, incidence="normal", **AIR),
        atol=1e-9,
    )


@pytest.mark.parametrize(
    ("m", "fc", "eta"),
    [(8.5, 2819.0, 0.03), (10.9, 2252.0, 0.01), (210.0, 107.0, 0.02), (14.8, 2083.0, 0.005)],
)
def test_single_panel(m, fc, eta):
    """Equal wherever Eq. 7.44 stays below the field mass law; where it would climb above it (heavy leaf far
    above fc: eta f / fc > 0.44) ours is capped at the mass law (documented in walls.single_leaf_tl)."""
    ref = pt.single_panel_transmission_loss(
        F, m, critical_frequency=fc, loss_factor=eta, **AIR
    ).transmission_loss
    ours = single_leaf_tl(F, m, fc, eta)
    capped = (F >= fc) & (10 * np.log10(2 * eta * F / (np.pi * fc)) > -5.5)
    np.testing.assert_allclose(ours[~capped], ref[~capped], atol=1e-6)
    assert np.all(ours[capped] <= ref[capped])
    np.testing.assert_allclose(ours[capped], mass_law(F[capped], m), atol=1e-9)


@pytest.mark.parametrize(("m1", "m2", "d"), [(8.5, 8.5, 0.0889), (10.9, 21.8, 0.092), (200.0, 10.9, 0.019)])
def test_mass_spring_mass_resonance(m1, m2, d):
    assert resonance_frequency(m1, m2, d) == pytest.approx(
        pt.mass_spring_mass_resonance(m1, m2, d, **AIR), rel=1e-9
    )


@pytest.mark.parametrize(("m1", "m2", "d"), [(8.5, 8.5, 0.0889), (10.9, 21.8, 0.203)])
def test_double_wall(m1, m2, d):
    """phonometry's double wall uses field mass laws for TL1, TL2 and no cavity-absorption limit:
    feed ours the same leaf curves (alpha=None = Sharp's absorbing cavity). Above f_l phonometry adds 6 dB,
    ours 20 lg 2 = 6.02 dB (continuous with 20 lg(2kd) at f_l), hence 0.03 dB."""
    ref = pt.double_wall_transmission_loss(F, m1, m2, d, **AIR)
    args = (F, mass_law(F, m1), mass_law(F, m2), mass_law(F, m1 + m2), ref.resonance_frequency, d)
    sharp = cavity_path_tl(*args, floor=-np.inf)  # Sharp's branches as published, no floor
    np.testing.assert_allclose(sharp, ref.transmission_loss, atol=0.03)
    # Knowingly different just above f0: the engine never lets the cavity path fall below TL_M there
    # (Sharp's middle branch starts 5.5 dB under it, a step between bands; see cavity_path_tl).
    ours = cavity_path_tl(*args)
    want = np.where(
        F > ref.resonance_frequency, np.maximum(ref.transmission_loss, mass_law(F, m1 + m2)), sharp
    )
    np.testing.assert_allclose(ours, want, atol=0.03)
    assert np.any(ours > sharp + 1.0)  # the floor acts in this case
