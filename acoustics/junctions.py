"""Junctions between building elements: vibration reduction index, structural losses, in-situ data.

The structure-borne part of the ISO 12354-1 field prediction, per one-third
octave over :data:`acoustics.BANDS`: the vibration reduction index K_ij of
Annex E (empirical, from the mass ratio of the elements), its lower bound
K_ij,min, the structural loss factor of an element in the laboratory and in
the building, the equivalent absorption length and the velocity level
difference that turns K_ij into a path index. Pure numpy.

Notes
-----
Annex E, with M = lg(m'_perp / m'_i) (m'_i: element carrying the path,
m'_perp: the element across the junction) [1]_:

- rigid cross:   K13 = 8.7 + 17.1 M + 5.7 M^2,  K12 = 8.7 + 5.7 M^2
- rigid T:       K13 = 5.7 + 14.1 M + 5.7 M^2,  K12 = 5.7 + 5.7 M^2
- flexible interlayer: rigid T plus 2 D1 (K13) and D1 (K12), D1 = 10 lg(f/f1)
  above f1 = 125 Hz (E1/t1 about 100 MN/m^3)
- lightweight facade:  K13 = max(5 + 10 M, 5),  K12 = 10 + 10 |M|
- lightweight double-leaf wall on homogeneous elements:
  K13 = max(10 + 20 M - 3.3 lg(f/fk), 10),  K12 = 10 + 10 |M| + 3.3 lg(f/fk), fk = 500 Hz
- coupled lightweight double-leaf walls:
  K13 = max(10 + 20 M - 3.3 lg(f/fk), 10),  K12 = 10 + 10 |M| - 3.3 lg(f/fk)

K_ij >= K_ij,min = 10 lg[l_f l0 (1/S_i + 1/S_j)] (Clause 4.3) [1]_.

Structural losses (Annex C) [1]_: laboratory eta_lab = eta_int + m'/(485 sqrt f);
in situ eta_situ = eta_int + 2 rho0 c0 sigma / (2 pi f m')
+ c0 / (pi^2 S sqrt(f fc)) sum_k l_k alpha_k, with
alpha_k = sum_j sqrt(fc_j / f_ref) 10^(-K_ij/10) over the other elements j at
edge k, f_ref = 1000 Hz. Structural reverberation time Ts = 2.2 / (f eta);
equivalent absorption length a = 2.2 pi^2 S / (c0 Ts) sqrt(f_ref / f);
velocity level difference Dv,ij,situ = K_ij - 10 lg(l_ij / sqrt(a_i a_j)) >= 0.
For a lightweight element a = S / l0, so Dv,ij,n = K_ij [1]_ (Clause 4.2.3).

The Annex E relations carry no frequency (except the interlayer and
double-leaf terms) and are applied over all 21 bands; ISO 12354-1:2017
Annex L itself computes 50-5000 Hz. Below 100 Hz the modal fields of rooms and
elements make any statistical prediction uncertain (flag ``"low_bands"``).

References
----------
.. [1] ISO 12354-1:2017 *Building acoustics - Estimation of acoustic performance
   of buildings from the performance of elements - Part 1*, Clauses 4.2-4.3,
   Annex C (Formulas C.1-C.5) and Annex E (E.3-E.8), as transcribed by the
   phonometry reference data (J. M. Requena-Plens) and from memory; the loss
   factor and absorption length relations reproduce Tables L.3 and L.4 of its
   Annex L (tests). EN 12354-1:2000 Annex E gives the same K_ij relations.
.. [2] ISO 10848-1:2006, Formula (14): K_ij = Dv,ij + 10 lg(l_ij / sqrt(a_i a_j)).
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from typing import Any

import numpy as np
import numpy.typing as npt

from .bands import BANDS, N_BANDS
from .constants import C0, RHO0
from .errors import AcousticsError

__all__ = [
    "JUNCTION_KINDS",
    "JunctionError",
    "kij",
    "kij_min",
    "lab_loss_factor",
    "situ_loss_factor",
    "edge_absorption",
    "absorption_length",
    "velocity_level_difference",
    "in_situ_index",
    "LIGHT_FRAME_DATA",
]

F_REF = 1000.0
#: Junction kinds of ISO 12354-1 Annex E accepted by :func:`kij`.
JUNCTION_KINDS = (
    "rigid_cross",
    "rigid_t",
    "flexible",
    "light_facade",
    "light_double_on_heavy",
    "light_double_coupled",
)


class JunctionError(AcousticsError):
    """A junction or element parameter is outside what the method accepts (names the field and rule)."""


def _pos(value: Any, name: str, unit: str) -> float | npt.NDArray[np.float64]:
    # Scalars take the fast path: the prediction validates a few hundred numbers per wall.
    if isinstance(value, (int, float)):
        if not (value > 0 and math.isfinite(value)):
            raise JunctionError(f"{name} must be finite and > 0 {unit}")
        return float(value)
    v = np.asarray(value, dtype=float)
    if not (v.size and v.min() > 0 and np.isfinite(v.max())):
        raise JunctionError(f"{name} must be finite and > 0 {unit}")
    return v


def kij(
    kind: str, path: str, mass_ratio: float, f: npt.ArrayLike = BANDS, *, f1: float = 125.0
) -> npt.NDArray[np.float64]:
    """Vibration reduction index K_ij of ISO 12354-1 Annex E, dB per band.

    Parameters
    ----------
    kind : str
        One of :data:`JUNCTION_KINDS`.
    path : {"through", "corner"}
        "through": between the two in-line elements (K13, e.g. floor to floor
        under the separating wall: the Ff path); "corner": round the corner
        (K12 = K23, e.g. floor to separating wall: the Fd and Df paths).
    mass_ratio : float
        m'_perp / m'_i, the surface density of the element across the junction
        over that of the element carrying the path (> 0).
    f : array_like
        Band centre frequencies, Hz (default :data:`acoustics.BANDS`).
    f1 : float
        Characteristic frequency of a flexible interlayer, Hz.

    Returns
    -------
    ndarray
        K_ij, dB, the shape of ``f``.

    References
    ----------
    .. [1] ISO 12354-1:2017 Annex E (E.3-E.8); EN 12354-1:2000 Annex E.
    """
    ratio = float(_pos(mass_ratio, "mass_ratio", "(m'_perp / m'_i)"))
    if path not in ("through", "corner"):
        raise JunctionError(f"path must be 'through' or 'corner', got {path!r}")
    freq = np.asarray(f, dtype=np.float64)
    m: float = np.log10(ratio)
    one = np.ones_like(freq)
    lg_fk = np.log10(freq / 500.0)
    through = path == "through"
    if kind == "rigid_cross":
        return one * (8.7 + 17.1 * m + 5.7 * m * m if through else 8.7 + 5.7 * m * m)
    if kind == "rigid_t":
        return one * (5.7 + 14.1 * m + 5.7 * m * m if through else 5.7 + 5.7 * m * m)
    if kind == "flexible":
        d1 = np.where(freq > f1, 10.0 * np.log10(freq / f1), 0.0)
        return 5.7 + 14.1 * m + 5.7 * m * m + 2 * d1 if through else 5.7 + 5.7 * m * m + d1
    if kind == "light_facade":
        return one * (max(5.0 + 10.0 * m, 5.0) if through else 10.0 + 10.0 * abs(m))
    if kind == "light_double_on_heavy":
        if through:
            return np.maximum(10.0 + 20.0 * m - 3.3 * lg_fk, 10.0)
        return 10.0 + 10.0 * abs(m) + 3.3 * lg_fk
    if kind == "light_double_coupled":
        if through:
            return np.maximum(10.0 + 20.0 * m - 3.3 * lg_fk, 10.0)
        return 10.0 + 10.0 * abs(m) - 3.3 * lg_fk
    raise JunctionError(f"junction kind must be one of {JUNCTION_KINDS}, got {kind!r}")


def kij_min(length: float, s_i: float, s_j: float) -> float:
    """Lower bound K_ij,min = 10 lg[l_f l0 (1/S_i + 1/S_j)], dB (l0 = 1 m; ISO 12354-1:2017 Clause 4.3)."""
    lf = float(_pos(length, "length", "m"))
    si = float(_pos(s_i, "s_i", "m^2"))
    sj = float(_pos(s_j, "s_j", "m^2"))
    return 10.0 * float(np.log10(lf * (1.0 / si + 1.0 / sj)))


def lab_loss_factor(mass: float, eta_int: float, f: npt.ArrayLike = BANDS) -> npt.NDArray[np.float64]:
    """Total loss factor of a heavy element in a laboratory, eta_int + m'/(485 sqrt f) (ISO 12354-1 C.2).

    Parameters
    ----------
    mass : float
        Surface density m', kg/m^2.
    eta_int : float
        Internal loss factor, dimensionless.
    """
    m = float(_pos(mass, "mass", "kg/m^2"))
    return float(_pos(eta_int, "eta_int", "")) + m / (485.0 * np.sqrt(np.asarray(f, float)))


def edge_absorption(pairs: Iterable[tuple[float, npt.ArrayLike]]) -> npt.NDArray[np.float64]:
    """Absorption coefficient alpha_k of one edge: sum_j sqrt(fc_j / 1000 Hz) 10^(-K_ij/10).

    Parameters
    ----------
    pairs : iterable of (fc_j, K_ij)
        The other elements j at the edge: critical frequency (Hz) and K_ij (dB,
        scalar or per band).

    References
    ----------
    .. [1] ISO 12354-1:2017 Annex C, Formula (C.5) (from memory; reproduces Table L.3).
    """
    total: float | npt.NDArray[np.float64] = 0.0
    for fc_j, k in pairs:
        total = total + np.sqrt(float(_pos(fc_j, "fc", "Hz")) / F_REF) * 10.0 ** (
            -np.asarray(k, np.float64) / 10.0
        )
    return np.asarray(total, dtype=np.float64)


def situ_loss_factor(
    mass: float,
    area: float,
    fc: float,
    eta_int: float,
    edges: Iterable[tuple[float, npt.ArrayLike]],
    f: npt.ArrayLike = BANDS,
    *,
    sigma: npt.ArrayLike = 1.0,
    c0: float = C0,
    rho0: float = RHO0,
) -> npt.NDArray[np.float64]:
    """In-situ total loss factor of a heavy element (ISO 12354-1:2017 Annex C, Formula C.4).

    Parameters
    ----------
    mass, area, fc, eta_int : float
        m' (kg/m^2), S (m^2), critical frequency (Hz), internal loss factor.
    edges : iterable of (l_k, alpha_k)
        Length (m) and absorption coefficient (:func:`edge_absorption`) of each edge.
    sigma : float or array_like
        Radiation factor (1 above fc; Annex B for the exact value).

    Returns
    -------
    ndarray
        eta_tot = eta_int + 2 rho0 c0 sigma / (2 pi f m') + c0 sum_k l_k alpha_k / (pi^2 S sqrt(f fc)).
    """
    freq = np.asarray(f, np.float64)
    m = float(_pos(mass, "mass", "kg/m^2"))
    s = float(_pos(area, "area", "m^2"))
    fcv = float(_pos(fc, "fc", "Hz"))
    perimeter: float | npt.NDArray[np.float64] = 0.0
    for length, alpha in edges:
        perimeter = perimeter + float(_pos(length, "edge length", "m")) * np.asarray(alpha, np.float64)
    radiation = 2.0 * rho0 * c0 * np.asarray(sigma, np.float64) / (2.0 * np.pi * freq * m)
    return eta_int + radiation + c0 * perimeter / (np.pi**2 * s * np.sqrt(freq * fcv))


def absorption_length(
    area: float, eta: npt.ArrayLike, f: npt.ArrayLike = BANDS, *, c0: float = C0
) -> npt.NDArray[np.float64]:
    """Equivalent absorption length a = 2.2 pi^2 S / (c0 Ts) sqrt(1000 Hz / f), m, with Ts = 2.2 / (f eta).

    References
    ----------
    .. [1] ISO 12354-1:2017 Formula (22) (from memory; reproduces Table L.4); ISO 10848-1 Formula (12).
    """
    freq = np.asarray(f, np.float64)
    s = float(_pos(area, "area", "m^2"))
    ts = 2.2 / (freq * _pos(eta, "eta (loss factor)", ""))
    return 2.2 * np.pi**2 * s / (c0 * ts) * np.sqrt(F_REF / freq)


def velocity_level_difference(
    k: npt.ArrayLike, length: float, a_i: npt.ArrayLike, a_j: npt.ArrayLike
) -> npt.NDArray[np.float64]:
    """Direction-averaged velocity level difference Dv,ij,situ = K_ij - 10 lg(l_ij / sqrt(a_i a_j)) >= 0, dB.

    References
    ----------
    .. [1] ISO 12354-1:2017 Formula (21) (lower limit 0 dB from memory); ISO 10848-1 Formula (14).
    """
    lf = float(_pos(length, "length", "m"))
    dv = np.asarray(k, np.float64) - 10.0 * np.log10(
        lf / np.sqrt(np.asarray(a_i, np.float64) * np.asarray(a_j, np.float64))
    )
    return np.maximum(dv, 0.0)


def in_situ_index(
    r_lab: npt.ArrayLike, eta_lab: npt.ArrayLike, eta_situ: npt.ArrayLike
) -> npt.NDArray[np.float64]:
    """In-situ index R_situ = R_lab - 10 lg(Ts,situ / Ts,lab) = R_lab + 10 lg(eta_situ / eta_lab), dB.

    References
    ----------
    .. [1] ISO 12354-1:2017 Formula (19) and Annex C (heavy, homogeneous elements only).
    """
    return np.asarray(r_lab, np.float64) + 10.0 * np.log10(
        np.asarray(eta_situ, np.float64) / np.asarray(eta_lab, np.float64)
    )


def _curve(values: list[float]) -> npt.NDArray[np.float64]:
    arr = np.array(values, dtype=float)
    arr.setflags(write=False)
    assert arr.shape == (N_BANDS,)
    return arr


#: Published in-situ data of lightweight timber-frame elements and junctions, 50-5000 Hz, used as the
#: engine's representative data for framed buildings (ISO 12354-1:2017 Annex L.2, Tables L.12, L.13 and
#: L.16, as transcribed by the phonometry reference data). Keys: ``floor_r`` bare joist floor R,
#: ``floor_r_star`` its resonant-only R*, ``floor_topping_dr`` the floating-floor improvement dR;
#: ``leaf_r`` / ``leaf_r_star`` the inner leaf of a double timber-frame wall (R, R*); ``dvn_wall_floor_ff``
#: Dv,ij,n between the wall leaves across the floor junction, ``dvn_floor_wall`` Dv,ij,n floor to wall
#: leaf (the Df path); ``wall_r`` and ``dvn_wall_wall`` a timber-frame gypsum-board wall junction (L.16).
LIGHT_FRAME_DATA: dict[str, npt.NDArray[np.float64]] = {
    "floor_r": _curve(
        [10.0, 12.7, 14.0, 15.0, 13.0, 14.0, 17.0, 20.0, 23.0, 25.0, 22.0]
        + [26.0, 28.0, 29.0, 30.0, 28.5, 27.0, 29.0, 36.0, 38.0, 41.0]
    ),
    "floor_r_star": _curve(
        [18.0, 20.7, 22.0, 23.0, 21.0, 22.0, 25.0, 28.0, 31.0, 33.0, 30.0]
        + [34.0, 36.0, 37.0, 38.0, 36.5, 27.0, 29.0, 36.0, 38.0, 41.0]
    ),
    "floor_topping_dr": _curve(
        [0.0, 0.0, 2.5, 5.0, 6.5, 10.0, 11.0, 11.5, 11.5, 10.5, 11.0]
        + [11.5, 12.0, 12.0, 13.5, 15.0, 15.0, 15.0, 15.0, 15.0, 15.0]
    ),
    "leaf_r": _curve(
        [15.0, 18.7, 20.1, 21.3, 20.5, 22.1, 24.1, 24.9, 25.3, 27.6, 28.9]
        + [31.5, 32.2, 33.5, 34.8, 35.2, 34.8, 32.5, 34.3, 38.1, 40.3]
    ),
    "leaf_r_star": _curve(
        [23.0, 26.7, 28.1, 29.3, 28.5, 30.1, 32.1, 32.9, 33.3, 35.6, 36.9]
        + [39.5, 40.2, 41.5, 42.8, 43.2, 42.8, 32.5, 34.3, 38.1, 40.3]
    ),
    "dvn_wall_floor_ff": _curve(
        [18.7, 19.0, 19.4, 19.7, 20.0, 20.4, 20.7, 21.0, 21.3, 21.7, 22.0]
        + [22.3, 22.7, 23.0, 23.3, 23.7, 24.0, 24.3, 24.6, 25.0, 25.3]
    ),
    "dvn_floor_wall": _curve(
        [14.7, 15.0, 15.4, 15.7, 16.0, 16.4, 16.7, 17.0, 17.3, 17.7, 18.0]
        + [18.3, 18.7, 19.0, 19.3, 19.7, 20.0, 20.3, 20.6, 21.0, 21.3]
    ),
    "wall_r": _curve(
        [27.6, 22.3, 27.4, 28.9, 33.6, 36.9, 37.6, 42.0, 47.3, 53.1, 56.7]
        + [59.3, 61.7, 63.3, 64.4, 62.7, 54.7, 50.8, 55.3, 59.1, 61.8]
    ),
    "dvn_wall_wall": _curve(
        [18.3, 18.0, 17.6, 17.3, 17.0, 16.6, 16.3, 16.0, 15.7, 15.3, 15.0]
        + [14.7, 14.3, 14.0, 13.7, 13.3, 13.0, 12.7, 12.4, 12.0, 11.7]
    ),
}
