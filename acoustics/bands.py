"""One-third-octave bands 50 Hz to 5000 Hz, the frequency axis of every spectrum.

Every spectrum in :mod:`acoustics` is a numpy array whose last axis runs over
:data:`BANDS`, the 21 nominal centre frequencies of the enlarged ISO 717-1
range. A band that was not measured is NaN.

References
----------
.. [1] IEC 61260-1:2014, base-10 system: exact mid-band frequency
   f_m = 1000 * 10**(n/10), band edges f_m * 10**(+-1/20).
.. [2] ISO 717-1:2020, Clause 4.4 and Annex B (enlarged range 50-5000 Hz).
"""

from __future__ import annotations

import numpy as np
import numpy.typing as npt

__all__ = [
    "BANDS",
    "BAND_INDEX",
    "N_BANDS",
    "band_edges",
    "exact_centres",
    "band_slice",
    "sub_band_frequencies",
    "averaging_frequencies",
]

#: Nominal one-third-octave centre frequencies, Hz (IEC 61260-1 nominal values).
BANDS = np.array(
    [
        50,
        63,
        80,
        100,
        125,
        160,
        200,
        250,
        315,
        400,
        500,
        630,
        800,
        1000,
        1250,
        1600,
        2000,
        2500,
        3150,
        4000,
        5000,
    ],
    dtype=float,
)
BANDS.setflags(write=False)

N_BANDS = BANDS.size

#: Index of each nominal band in :data:`BANDS`, keyed by its integer frequency.
BAND_INDEX = {int(f): i for i, f in enumerate(BANDS)}

# Band numbers n relative to 1 kHz (n = -13 for 50 Hz ... +7 for 5 kHz).
_N = np.arange(-13, 8)


def exact_centres() -> npt.NDArray[np.float64]:
    """Exact base-10 mid-band frequencies of :data:`BANDS`.

    Returns
    -------
    ndarray, shape (21,)
        f_m = 1000 * 10**(n/10) in Hz, n = -13..7.

    References
    ----------
    .. [1] IEC 61260-1:2014, Eq. 2 (base-10 system).
    """
    return 1000.0 * 10.0 ** (_N / 10.0)


def band_edges() -> tuple[npt.NDArray[np.float64], npt.NDArray[np.float64]]:
    """Lower and upper edges of each one-third-octave band, Hz.

    Returns
    -------
    lower, upper : ndarray, shape (21,)
        f_m * 10**(-1/20) and f_m * 10**(+1/20).
    """
    fm = exact_centres()
    return fm * 10.0 ** (-1.0 / 20.0), fm * 10.0 ** (1.0 / 20.0)


def band_slice(low: int, high: int) -> slice:
    """Slice of :data:`BANDS` from nominal ``low`` to ``high`` Hz inclusive.

    Raises
    ------
    ValueError
        If either frequency is not a nominal band of :data:`BANDS`.
    """
    try:
        return slice(BAND_INDEX[int(low)], BAND_INDEX[int(high)] + 1)
    except KeyError as exc:
        raise ValueError(f"{exc.args[0]} Hz is not a one-third-octave band of 50-5000 Hz") from None


def sub_band_frequencies(points: int = 16) -> npt.NDArray[np.float64]:
    """Frequencies spread evenly in log frequency across each band, for band averaging.

    A leak's transmission coefficient varies strongly inside one third octave
    (a deep gap resonates), so a band value is the mean of tau over these
    points, never tau at the centre alone.

    Parameters
    ----------
    points : int
        Points per band (>= 1). The points sit at the centres of ``points``
        equal log-frequency slices of the band, so they never fall on an edge.

    Returns
    -------
    ndarray, shape (21, points)
        Frequencies in Hz; row i lies inside band i.
    """
    if points < 1:
        raise ValueError("points must be at least 1")
    lower, upper = band_edges()
    fractions = (np.arange(points) + 0.5) / points
    return np.asarray(lower[:, None] * (upper / lower)[:, None] ** fractions[None, :], dtype=float)


def averaging_frequencies(points: int = 41) -> npt.NDArray[np.float64]:
    """Log-spaced frequencies for band-averaging a leak's transmission coefficient.

    ``points`` frequencies from f_nom * 2**(-1/6) to f_nom * 2**(+1/6), both
    ends included, around each nominal centre of :data:`BANDS`. This is the
    grid the computed check values of the method notes (aperture tables and
    the defect-ranking case) were made on; it differs from the exact base-10
    band (:func:`sub_band_frequencies`) by at most 1 % in frequency.

    Parameters
    ----------
    points : int
        Points per band (>= 2).

    Returns
    -------
    ndarray, shape (21, points)
        Frequencies in Hz.
    """
    if points < 2:
        raise ValueError("points must be at least 2")
    lo = np.log(BANDS * 2.0 ** (-1.0 / 6.0))
    hi = np.log(BANDS * 2.0 ** (1.0 / 6.0))
    grid = lo[:, None] + (hi - lo)[:, None] * np.linspace(0.0, 1.0, points)[None, :]
    return np.asarray(np.exp(grid), dtype=float)
