"""Composite transmission loss of a partition made of several elements.

Band by band, the power transmitted through each element is its area times its
transmission coefficient; the composite coefficient is the area-weighted mean.
Leaks and other defects enter as *added transmission areas* (m^2, per band),
so one energy sum covers gaps, holes and defects that degrade the wall itself.

References
----------
.. [1] Hopkins, C. (2007) *Sound Insulation*, Butterworth-Heinemann, Eq. 4.92.
.. [2] Vigran, T. E. (2008) *Building Acoustics*, Taylor & Francis, Fig. 9.1.
"""

from __future__ import annotations

import numpy as np
import numpy.typing as npt

from .bands import N_BANDS

__all__ = ["composite", "tau_from_tl", "tl_from_tau", "tl_with_added_area"]


def tau_from_tl(tl: npt.ArrayLike) -> npt.NDArray[np.float64]:
    """Power transmission coefficient tau = 10^(-TL/10) (dimensionless; may exceed 1)."""
    return 10.0 ** (-np.asarray(tl, dtype=np.float64) / 10.0)


def tl_from_tau(tau: npt.ArrayLike) -> npt.NDArray[np.float64]:
    """Transmission loss TL = -10 lg tau, dB. tau > 1 gives a negative TL, kept on purpose."""
    t = np.asarray(tau, dtype=np.float64)
    if np.any(t < 0):
        raise ValueError("tau must be >= 0 (a transmission coefficient is a power ratio)")
    with np.errstate(divide="ignore"):
        return -10.0 * np.log10(t)


def composite(
    areas: npt.ArrayLike, tls: npt.ArrayLike, *, added: npt.ArrayLike | None = None
) -> npt.NDArray[np.float64]:
    """Area-weighted composite transmission loss, band by band.

    Parameters
    ----------
    areas : array_like, shape (..., n)
        Area of each element, m^2 (>= 0, total > 0).
    tls : array_like, shape (..., n, 21)
        TL of each element over :data:`acoustics.BANDS`, dB (NaN propagates to
        that band of the result). Leading axes broadcast with ``areas``.
    added : array_like, shape (..., 21), optional
        Added transmission area S*tau per band, m^2 (leaks, defects), summed
        on top of the elements without adding to the total area.

    Returns
    -------
    ndarray, shape (..., 21)
        Composite TL, dB. tau > 1 is kept (negative element TL is physical for
        resonant apertures), so the result is never clipped at 0 dB.

    Raises
    ------
    ValueError
        On negative or non-finite areas, a zero total area, or wrong shapes.

    Notes
    -----
    tau_c = (sum_i S_i 10^(-TL_i/10) + sum A_added) / sum_i S_i,
    TL_c = -10 lg tau_c [1]_.

    References
    ----------
    .. [1] Hopkins (2007) *Sound Insulation*, Eq. 4.92.
    """
    s = np.asarray(areas, dtype=np.float64)
    t = np.asarray(tls, dtype=np.float64)
    if s.ndim == 0:
        raise ValueError(f"areas must be an array of element areas (m^2), got a scalar {s!r}")
    if t.ndim < 2 or t.shape[-1] != N_BANDS:
        raise ValueError(f"tls must have shape (..., n, {N_BANDS}), got {t.shape}")
    if t.shape[-2] != s.shape[-1]:
        raise ValueError(f"areas has {s.shape[-1]} elements but tls has {t.shape[-2]} rows")
    if not np.all(np.isfinite(s)) or np.any(s < 0):
        raise ValueError("areas must be finite and >= 0 (m^2)")
    total = s.sum(axis=-1)
    if np.any(total <= 0):
        raise ValueError("areas must add up to more than 0 m^2")
    power = np.einsum("...n,...nb->...b", s, tau_from_tl(t))
    if added is not None:
        a = np.asarray(added, dtype=np.float64)
        if a.shape[-1:] != (N_BANDS,):
            raise ValueError(f"added must have {N_BANDS} bands on its last axis, got shape {a.shape}")
        if not np.all(np.isfinite(a)) or np.any(a < 0):
            raise ValueError("added transmission area must be finite and >= 0 (m^2)")
        power = power + a
    return tl_from_tau(power / total[..., None])


def tl_with_added_area(tl: npt.ArrayLike, area: float, added: npt.ArrayLike) -> npt.NDArray[np.float64]:
    """TL of a wall of ``area`` m^2 and band TL ``tl`` with added transmission area(s).

    Parameters
    ----------
    tl : array_like, shape (..., 21)
        Intact wall TL, dB.
    area : float
        Wall area S, m^2 (> 0).
    added : array_like, shape (..., 21)
        Total added transmission area per band, m^2 (>= 0).

    Returns
    -------
    ndarray, shape (..., 21)
        TL = -10 lg( tau_wall + A_added / S ), dB.
    """
    s = float(area)
    if not np.isfinite(s) or s <= 0:
        raise ValueError(f"area must be a finite wall area > 0 m^2, got {area!r}")
    a = np.asarray(added, dtype=np.float64)
    if not np.all(np.isfinite(a)) or np.any(a < 0):
        raise ValueError("added transmission area must be finite and >= 0 (m^2)")
    return tl_from_tau(tau_from_tl(tl) + a / s)
