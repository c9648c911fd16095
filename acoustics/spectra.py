"""Reference contours and spectra of the single-number ratings, as band tables over :data:`BANDS`.

Data only, kept apart from the rating code so each table can be read against its source.

References
----------
.. [1] ASTM E413-22, Table 1 (STC contour).
.. [2] ISO 717-1:2020, Table 3 (reference curve), Table 4 and Annex B Table B.1 (spectra No. 1 and 2),
   read via the phonometry transcription of the standard.
.. [3] ASTM E1332-22, Table 1 (reference spectrum; values from memory, checked: their A-weighted sum is
   100.12 dB against the 100.13 dB constant) and IEC 61672-1 nominal A-weighting.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from .bands import N_BANDS, band_slice

_STC = band_slice(125, 4000)
_RW = band_slice(100, 3150)
_OITC = band_slice(80, 4000)

# ASTM E413 contour relative to its 500 Hz value, 125-4000 Hz [1]_.
_STC_SHAPE = np.array([-16, -13, -10, -7, -4, -1, 0, 1, 2, 3, 4, 4, 4, 4, 4, 4], dtype=float)
# ISO 717-1 Table 3 reference curve relative to 52 dB at 500 Hz, 100-3150 Hz [2].
_RW_SHAPE = np.array([33, 36, 39, 42, 45, 48, 51, 52, 53, 54, 55, 56, 56, 56, 56, 56], dtype=float) - 52.0

# ISO 717-1 spectra, 50-5000 Hz (NaN = not part of that range) [2] Table 4, Table B.1.
_NA = np.nan
_SPEC1_100_3150 = (
    [_NA] * 3 + [-29, -26, -23, -21, -19, -17, -15, -13, -12, -11, -10, -9, -9, -9, -9, -9] + [_NA] * 2
)
_SPEC1_50_3150 = [
    -40,
    -36,
    -33,
    -29,
    -26,
    -23,
    -21,
    -19,
    -17,
    -15,
    -13,
    -12,
    -11,
    -10,
    -9,
    -9,
    -9,
    -9,
    -9,
    _NA,
    _NA,
]
_SPEC1_ENL = [
    -41,
    -37,
    -34,
    -30,
    -27,
    -24,
    -22,
    -20,
    -18,
    -16,
    -14,
    -13,
    -12,
    -11,
    -10,
    -10,
    -10,
    -10,
    -10,
    -10,
    -10,
]
_SPEC2_100_3150 = (
    [_NA] * 3 + [-20, -20, -18, -16, -15, -14, -13, -12, -11, -9, -8, -9, -10, -11, -13, -15] + [_NA] * 2
)
_SPEC2_ENL = [
    -25,
    -23,
    -21,
    -20,
    -20,
    -18,
    -16,
    -15,
    -14,
    -13,
    -12,
    -11,
    -9,
    -8,
    -9,
    -10,
    -11,
    -13,
    -15,
    -16,
    -18,
]


def _restrict(spec: Sequence[float], low: int, high: int) -> np.ndarray:
    out = np.full(N_BANDS, np.nan)
    sl = band_slice(low, high)
    out[sl] = np.asarray(spec, dtype=float)[sl]
    return out


# Columns: C, Ctr, C50-3150, C50-5000, C100-5000, Ctr50-3150, Ctr50-5000, Ctr100-5000.
_TERMS = ("c", "ctr", "c50_3150", "c50_5000", "c100_5000", "ctr50_3150", "ctr50_5000", "ctr100_5000")
_SPECTRA = np.stack(
    [
        np.asarray(_SPEC1_100_3150, dtype=float),
        np.asarray(_SPEC2_100_3150, dtype=float),
        np.asarray(_SPEC1_50_3150, dtype=float),
        _restrict(_SPEC1_ENL, 50, 5000),
        _restrict(_SPEC1_ENL, 100, 5000),
        _restrict(_SPEC2_ENL, 50, 3150),
        _restrict(_SPEC2_ENL, 50, 5000),
        _restrict(_SPEC2_ENL, 100, 5000),
    ],
    axis=1,
)  # (21, 8)

# ASTM E1332 reference spectrum plus A-weighting, 80-4000 Hz [3].
_OITC_L = np.array([102, 102, 101, 98, 97, 95, 94, 93, 93, 91, 90, 89, 89, 88, 88, 87, 85, 84], dtype=float)
_A_WEIGHT = np.array(
    [-22.5, -19.1, -16.1, -13.4, -10.9, -8.6, -6.6, -4.8, -3.2, -1.9, -0.8, 0.0, 0.6, 1.0, 1.2, 1.3, 1.2, 1.0]
)
_OITC_W = 10.0 ** ((_OITC_L + _A_WEIGHT) / 10.0)
_OITC_TOTAL = 100.13
