"""Band curves from published standards, shared by the acoustics tests.

Each curve lists 21 values over 50-5000 Hz (NaN = not given by the source).
"""

from __future__ import annotations

import numpy as np

NAN = np.nan

# ISO 717-1:2020 Annex C Table C.1 (100-3150 Hz) and Table C.2 (adds 50, 63, 80, 4000, 5000 Hz),
# read via the phonometry transcription of the standard.
ANNEX_C_16 = [20.4, 16.3, 17.7, 22.6, 22.4, 22.7, 24.8, 26.6, 28.0, 30.5, 31.8, 32.5, 33.4, 33.0, 31.0, 25.5]
ANNEX_C = np.array([NAN, NAN, NAN] + ANNEX_C_16 + [NAN, NAN])
ANNEX_C_ENLARGED = np.array([18.7, 19.2, 20.0] + ANNEX_C_16 + [26.8, 29.2])

# ISO 717-1:2020 Table E.1 standard basic elements (50-5000 Hz).
HEAVY_WALL = np.array(
    [
        35.3,
        37.3,
        39.4,
        40.0,
        40.0,
        40.0,
        40.0,
        41.0,
        43.5,
        46.1,
        48.5,
        51.0,
        53.6,
        56.0,
        58.4,
        61.1,
        63.6,
        65.0,
        65.0,
        65.0,
        65.0,
    ]
)
HEAVY_FLOOR = np.array(
    [
        34.0,
        36.0,
        38.1,
        40.0,
        40.0,
        40.0,
        40.0,
        40.0,
        41.8,
        44.4,
        46.8,
        49.3,
        51.9,
        54.4,
        56.8,
        59.5,
        61.9,
        64.3,
        65.0,
        65.0,
        65.0,
    ]
)
LIGHT_WALL = np.array(
    [
        21.3,
        23.3,
        25.3,
        27.0,
        27.0,
        27.0,
        27.0,
        27.0,
        27.0,
        27.0,
        27.0,
        28.0,
        30.5,
        32.8,
        35.1,
        37.6,
        40.0,
        42.3,
        44.6,
        47.1,
        49.4,
    ]
)

# ISO 12999-1:2020 Annex B example (50-5000 Hz).
ISO12999_B = np.array(
    [
        39.5,
        40.3,
        41.6,
        43.1,
        43.3,
        43.1,
        42.5,
        44.7,
        48.0,
        50.5,
        53.2,
        55.9,
        58.1,
        60.0,
        62.2,
        63.7,
        65.4,
        66.8,
        68.4,
        68.8,
        65.1,
    ]
)

# ISO 717-1 Table 3 reference curve (100-3150 Hz).
ISO_REFERENCE = np.array(
    [NAN, NAN, NAN, 33, 36, 39, 42, 45, 48, 51, 52, 53, 54, 55, 56, 56, 56, 56, 56, NAN, NAN]
)


def stc_bands(values: list[float]) -> np.ndarray:
    """A 21-band curve with ``values`` at 125-4000 Hz and NaN elsewhere."""
    out = np.full(21, NAN)
    out[4:20] = values
    return out
