"""Band axis: nominal and exact centres, edges, sub-band sampling."""

from __future__ import annotations

import numpy as np
import pytest

import acoustics
from acoustics.bands import averaging_frequencies


def test_bands_are_the_21_nominal_centres():
    # IEC 61260-1 nominal one-third-octave centres, 50-5000 Hz (ISO 717-1 Annex B enlarged range).
    assert acoustics.BANDS.shape == (21,)
    assert acoustics.BANDS[0] == 50 and acoustics.BANDS[10] == 500 and acoustics.BANDS[-1] == 5000
    assert not acoustics.BANDS.flags.writeable


def test_exact_centres_match_base_10_values():
    # Method notes Section 1 table (computed): 50.12, 79.43, 1000.00, 5011.87 Hz; tolerance 0.005 Hz.
    fm = acoustics.exact_centres()
    assert fm[0] == pytest.approx(50.12, abs=0.005)
    assert fm[2] == pytest.approx(79.43, abs=0.005)
    assert fm[13] == pytest.approx(1000.0, abs=1e-9)
    assert fm[-1] == pytest.approx(5011.87, abs=0.005)


def test_edges_touch_and_ratio_is_one_third_octave():
    lo, hi = acoustics.band_edges()
    np.testing.assert_allclose(hi[:-1], lo[1:], rtol=1e-12)
    np.testing.assert_allclose(hi / lo, 10**0.1, rtol=1e-12)


def test_band_slice_and_errors():
    assert acoustics.BANDS[acoustics.band_slice(125, 4000)].size == 16
    with pytest.raises(ValueError, match="not a one-third-octave band"):
        acoustics.band_slice(120, 4000)


def test_sub_band_points_lie_inside_their_band():
    lo, hi = acoustics.band_edges()
    f = acoustics.sub_band_frequencies(8)
    assert f.shape == (21, 8)
    assert np.all(f > lo[:, None]) and np.all(f < hi[:, None])
    with pytest.raises(ValueError, match="points"):
        acoustics.sub_band_frequencies(0)


def test_averaging_grid_spans_one_third_octave_around_nominal_centre():
    f = averaging_frequencies(41)
    np.testing.assert_allclose(f[:, 20], acoustics.BANDS, rtol=1e-12)
    np.testing.assert_allclose(f[:, -1] / f[:, 0], 2 ** (1 / 3), rtol=1e-12)
    with pytest.raises(ValueError, match="points"):
        averaging_frequencies(1)
