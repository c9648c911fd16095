"""Field descriptors from measured level differences: NIC, NNIC, ASTC, R'w, DnT,w, Dn,w.

The band quantities are formed first, band by band (absorption varies with
frequency), and then rated with the laboratory procedure of the same family:
ASTM E413 for the E336 quantities, ISO 717-1 for the ISO 16283-1 quantities.
Never convert single numbers between them.

Notes
-----
ASTM E336 [1]_: NR = L1 - L2; NNR = NR + 10 lg(T2 / 0.5 s);
ATL = NR + 10 lg(S / A2) with A2 = 55.26 V / (c T2) (Sabine).
ISO 16283-1 [2]_: D = L1 - L2; R' = D + 10 lg(S / A) with A = 0.16 V / T;
DnT = D + 10 lg(T / 0.5 s); Dn = D - 10 lg(A / 10 m^2).

References
----------
.. [1] ASTM E336-20 (band quantities, from memory) rated by ASTM E413-22 Section 1.3
   (NIC, NNIC, ASTC).
.. [2] ISO 16283-1:2014 Formulas for D, R', DnT (as transcribed); Dn with A0 = 10 m^2
   from memory; rated by ISO 717-1:2020.
.. [3] EN 12354-1:2000, Formula (26) and Annex H.3 (simplified flanking model), as
   transcribed; Vigran, T. E. (2008) *Building Acoustics*, Eq. 9.47.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from .constants import A0_ISO, C0, SABINE_ISO, T0_ISO
from .ratings import RwResult, _as_bands, rw, stc

__all__ = [
    "sabine_absorption",
    "normalized_noise_reduction",
    "apparent_tl",
    "apparent_r",
    "standardized_level_difference",
    "normalized_level_difference",
    "nic",
    "nnic",
    "astc",
    "r_prime_w",
    "dnt_w",
    "dn_w",
    "flanking_path_index",
    "energy_sum_index",
    "dnt_from_r_prime",
]


def _positive(value: Any, name: str, unit: str) -> np.ndarray:
    v = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(v)) or np.any(v <= 0):
        raise ValueError(f"{name} must be finite and > 0 {unit} (scalar or one value per band)")
    return v


def sabine_absorption(volume: float, t: Any, *, standard: str = "iso", c0: float = C0) -> np.ndarray:
    """Equivalent absorption area of a room from its reverberation time, m^2.

    Parameters
    ----------
    volume : float
        Room volume V, m^3.
    t : float or array_like, shape (21,)
        Reverberation time T, s.
    standard : {"iso", "astm"}
        "iso": A = 0.16 V / T (ISO 16283-1); "astm": A = 55.26 V / (c T) (ASTM E336).
    """
    v = _positive(volume, "volume", "m^3")
    t = _positive(t, "t (reverberation time)", "s")
    if standard == "iso":
        return SABINE_ISO * v / t
    if standard == "astm":
        return 55.26 * v / (c0 * t)
    raise ValueError(f"standard must be 'iso' or 'astm', got {standard!r}")


def _absorption(a: Any, volume: Any, t: Any, standard: str, name: str) -> np.ndarray:
    if a is not None:
        if volume is not None or t is not None:
            raise ValueError(f"give either {name} or volume and t, not both")
        return _positive(a, name, "m^2")
    if volume is None or t is None:
        raise ValueError(f"give {name} (m^2) or both volume (m^3) and t (s)")
    return sabine_absorption(volume, t, standard=standard)


def normalized_noise_reduction(nr: Any, t2: Any) -> np.ndarray:
    """NNR = NR + 10 lg(T2 / 0.5 s), dB (ASTM E336)."""
    return _as_bands(nr, "nr") + 10.0 * np.log10(_positive(t2, "t2", "s") / T0_ISO)


def apparent_tl(nr: Any, area: float, *, a2: Any = None, volume: Any = None, t2: Any = None) -> np.ndarray:
    """ATL = NR + 10 lg(S / A2), dB (ASTM E336); A2 given or from V and T2 (Sabine, ASTM constant)."""
    s = _positive(area, "area", "m^2")
    return _as_bands(nr, "nr") + 10.0 * np.log10(s / _absorption(a2, volume, t2, "astm", "a2"))


def apparent_r(d: Any, area: float, *, a: Any = None, volume: Any = None, t: Any = None) -> np.ndarray:
    """R' = D + 10 lg(S / A), dB (ISO 16283-1); A given or 0.16 V / T."""
    s = _positive(area, "area", "m^2")
    return _as_bands(d, "d") + 10.0 * np.log10(s / _absorption(a, volume, t, "iso", "a"))


def standardized_level_difference(d: Any, t: Any) -> np.ndarray:
    """DnT = D + 10 lg(T / 0.5 s), dB (ISO 16283-1)."""
    return _as_bands(d, "d") + 10.0 * np.log10(_positive(t, "t", "s") / T0_ISO)


def normalized_level_difference(d: Any, *, a: Any = None, volume: Any = None, t: Any = None) -> np.ndarray:
    """Dn = D - 10 lg(A / 10 m^2), dB (ISO 16283-1)."""
    return _as_bands(d, "d") - 10.0 * np.log10(_absorption(a, volume, t, "iso", "a") / A0_ISO)


def nic(nr: Any) -> Any:
    """Noise Isolation Class: ASTM E413 rating of the noise reduction NR (dB per band)."""
    return stc(nr, _label="NIC")


def nnic(nr: Any, t2: Any) -> Any:
    """Normalized Noise Isolation Class: E413 rating of NNR = NR + 10 lg(T2 / 0.5 s)."""
    return stc(normalized_noise_reduction(nr, t2), _label="NNIC")


def astc(nr: Any, area: float, *, a2: Any = None, volume: Any = None, t2: Any = None) -> Any:
    """Apparent Sound Transmission Class: E413 rating of ATL = NR + 10 lg(S / A2)."""
    return stc(apparent_tl(nr, area, a2=a2, volume=volume, t2=t2), _label="ASTC")


def r_prime_w(
    d: Any, area: float, *, a: Any = None, volume: Any = None, t: Any = None, decimal: bool = False
) -> RwResult:
    """Weighted apparent sound reduction index R'w (with C, Ctr): ISO 717-1 rating of R'."""
    return rw(apparent_r(d, area, a=a, volume=volume, t=t), decimal=decimal, _label="R'w")


def dnt_w(d: Any, t: Any, *, decimal: bool = False) -> RwResult:
    """Weighted standardized level difference DnT,w (with C, Ctr): ISO 717-1 rating of DnT."""
    return rw(standardized_level_difference(d, t), decimal=decimal, _label="DnT,w")


def dn_w(d: Any, *, a: Any = None, volume: Any = None, t: Any = None, decimal: bool = False) -> RwResult:
    """Weighted normalized level difference Dn,w (with C, Ctr): ISO 717-1 rating of Dn."""
    return rw(normalized_level_difference(d, a=a, volume=volume, t=t), decimal=decimal, _label="Dn,w")


def flanking_path_index(r_i: Any, r_j: Any, k_ij: Any, area: float, length: float) -> np.ndarray:
    """Flanking-path index R_ij = (R_i + R_j)/2 + K_ij + 10 lg(S_s / (l0 l_ij)), dB (l0 = 1 m).

    Parameters
    ----------
    r_i, r_j : float or array_like
        Indices of the two elements of the path (weighted or per band), dB.
    k_ij : float or array_like
        Vibration reduction index of the junction, dB.
    area : float
        Separating-element area S_s, m^2.
    length : float
        Junction length l_ij, m.

    References
    ----------
    .. [1] EN 12354-1:2000, simplified method; Vigran (2008) Eq. 9.47.
    """
    s = _positive(area, "area", "m^2")
    lf = _positive(length, "length", "m")
    return (
        (np.asarray(r_i, float) + np.asarray(r_j, float)) / 2.0
        + np.asarray(k_ij, float)
        + 10.0 * np.log10(s / lf)
    )


def energy_sum_index(indices: Any, axis: int = 0) -> np.ndarray:
    """Apparent index of parallel paths, R' = -10 lg sum_p 10^(-R_p/10), dB (EN 12354-1 Formula (26))."""
    r = np.asarray(indices, dtype=float)
    return -10.0 * np.log10(np.sum(10.0 ** (-r / 10.0), axis=axis))


def dnt_from_r_prime(r_prime: Any, volume: float, area: float) -> np.ndarray:
    """DnT = R' + 10 lg(0.32 V / S), dB (EN/ISO 12354-1 Formula 5b; 0.32 = 0.16 / 0.5 s)."""
    v = _positive(volume, "volume", "m^3")
    s = _positive(area, "area", "m^2")
    return np.asarray(r_prime, float) + 10.0 * np.log10(SABINE_ISO / T0_ISO * v / s)
