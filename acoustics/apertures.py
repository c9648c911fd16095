"""Transmission coefficients of apertures at given frequencies (point models).

These are the physics kernels behind :mod:`acoustics.leaks`: each takes an
array of frequencies and returns tau (referred to the aperture's open area,
dimensionless, may exceed 1). :mod:`acoustics.leaks` band-averages them.

Notes
-----
Unified transfer-matrix model [4]_ (time convention e^{j omega t}): plane waves
in the aperture, impedances normalised by rho0 c0 / S_a, a channel of length L
with characteristic impedance zeta and wavenumber k_c has the chain matrix
[[cos k_c L, j zeta sin k_c L], [j sin(k_c L) / zeta, cos k_c L]], a limp skin
of surface density m_s has [[1, j omega m_s / (rho0 c0)], [0, 1]], and with the
mouth radiation impedance z_r on both faces

    tau_normal = 4 Re(z_r) / |T11 z_r + T12 + z_r (T21 z_r + T22)|^2.

With an air channel and z_r = R0 + j X0 this is exactly Wilson-Soroka [2]_;
with z_r = K/2 + j K e (baffled strip) it is Gomperts' slit to 0.08 dB [4]_.

References
----------
.. [1] Hopkins, C. (2007) *Sound Insulation*, Butterworth-Heinemann,
   Eqs. 4.99-4.101 (Gomperts slit) and 4.102 (Wilson-Soroka hole).
.. [2] Wilson, G. P. & Soroka, W. W. (1965) JASA 37, 286-297.
.. [3] Delany, M. E. & Bazley, E. N. (1970) Applied Acoustics 3(2), 105-116.
.. [4] Sealwalk acoustics method notes, Sections 6.4-6.5 (derivation of the
   transfer-matrix form and of the diffuse/normal factor 2 for small apertures).
.. [5] Allard, J.-F. & Atalla, N. (2009) *Propagation of Sound in Porous
   Media*, 2nd ed., Wiley: slit-pore visco-thermal functions (from memory).
"""

from __future__ import annotations

from typing import Any

import numpy as np
import numpy.typing as npt
from scipy.special import j1, struve

from .constants import C0, EULER_GAMMA, GAMMA, MU, P0, PRANDTL, RHO0

__all__ = [
    "slit_end_correction",
    "gomperts_slit_tau",
    "slit_resonances",
    "piston_impedance",
    "wilson_soroka_tau",
    "strip_impedance",
    "delany_bazley",
    "slit_viscothermal",
    "channel_matrix",
    "skin_matrix",
    "chain",
    "tmm_tau",
    "hole_diffuse_factor",
]

Floats = npt.NDArray[np.float64]
Complexes = npt.NDArray[np.complexfloating[Any, Any]]
#: Chain matrix (T11, T12, T21, T22), each complex per frequency.
Matrix = tuple[Complexes, Complexes, Complexes, Complexes]


def slit_end_correction(K: npt.ArrayLike) -> Floats:
    """End correction factor e = (ln(8/K) - gamma) / pi of a slit, K = k w (Hopkins Eq. 4.100)."""
    return (np.log(8.0 / np.asarray(K, dtype=np.float64)) - EULER_GAMMA) / np.pi


def gomperts_slit_tau(
    f: npt.ArrayLike,
    width: float,
    depth: float,
    *,
    incidence: str = "diffuse",
    edge: bool = False,
    c0: float = C0,
) -> Floats:
    """Transmission coefficient of a long straight slit (Gomperts, as given by Hopkins Eq. 4.99).

    Parameters
    ----------
    f : array_like
        Frequencies, Hz (> 0).
    width, depth : float
        Slit width w and depth d (wall thickness along the air path), m.
    incidence : {"diffuse", "normal"}
        m = 8 (diffuse) or m = 4 (normal incidence).
    edge : bool
        n = 0.5 for a slit along an edge (junction with a floor or side wall),
        n = 1 for a slit in the middle of a plate.
    c0 : float
        Speed of sound, m/s.

    Returns
    -------
    ndarray
        tau referred to the slit area w L.

    Notes
    -----
    K = k w, X = d / w, e = (ln(8/K) - gamma)/pi, a = K X + 2 K e:
    tau = m K cos^4(Ke) / (2 n^2 [sin^2 a + K^2/(2 n^2) cos^2(Ke) (1 + cos(KX) cos a)]),
    Eq. 4.99 with numerator and denominator multiplied by cos^2(Ke) [1]_.
    Valid for inviscid air, rigid walls, K << 1 and slit length >> wavelength.

    References
    ----------
    .. [1] Hopkins (2007) *Sound Insulation*, Eqs. 4.99-4.100.
    """
    m = {"diffuse": 8.0, "normal": 4.0}[incidence]
    n = 0.5 if edge else 1.0
    K = 2.0 * np.pi * np.asarray(f, dtype=np.float64) / c0 * width
    e = slit_end_correction(K)
    ce: Floats = np.cos(K * e)
    kx = K * (depth / width)
    a = kx + 2.0 * K * e
    den = 2.0 * n**2 * (np.sin(a) ** 2 + K**2 / (2.0 * n**2) * ce**2 * (1.0 + np.cos(kx) * np.cos(a)))
    return m * K * ce**4 / den


def slit_resonances(width: float, depth: float, orders: int = 3, *, c0: float = C0) -> Floats:
    """Resonance frequencies of a slit, d + 2 e w = z lambda / 2 (Hopkins Eq. 4.101), Hz.

    Solved by fixed-point iteration f <- z c0 / (2 (d + 2 e(f) w)).
    """
    out = np.empty(orders)
    for i in range(orders):
        f = (i + 1) * c0 / (2.0 * depth)
        for _ in range(100):
            eff = depth + 2.0 * float(slit_end_correction(2 * np.pi * f / c0 * width)) * width
            if eff <= 0:
                raise ValueError("width too large for depth: no slit resonance (needs k w << 1)")
            f_new = (i + 1) * c0 / (2.0 * eff)
            if abs(f_new - f) < 1e-10 * f:
                break
            f = f_new
        out[i] = f_new
    return out


def piston_impedance(ka: npt.ArrayLike) -> Complexes:
    """Normalised radiation impedance R0 + j X0 of a baffled circular piston, x = 2 k a.

    R0 = 1 - 2 J1(x)/x, X0 = 2 H1(x)/x (J1 Bessel, H1 Struve) [1]_ Eq. 4.102.
    """
    x = 2.0 * np.asarray(ka, dtype=np.float64)
    # scipy.special is untyped: name the real and imaginary parts' type here.
    r0: Floats = 1.0 - 2.0 * j1(x) / x
    x0: Floats = 2.0 * struve(1, x) / x
    return r0 + 1j * x0


def wilson_soroka_tau(f: npt.ArrayLike, radius: float, depth: float, *, c0: float = C0) -> Floats:
    """Normal-incidence transmission coefficient of a circular hole (Wilson-Soroka, Hopkins Eq. 4.102).

    Parameters
    ----------
    f : array_like
        Frequencies, Hz.
    radius, depth : float
        Hole radius a and depth d, m.

    Returns
    -------
    ndarray
        tau referred to pi a^2: 4 R0 / (4 R0^2 [cos kd - X0 sin kd]^2
        + [(R0^2 - X0^2 + 1) sin kd + 2 X0 cos kd]^2).
    """
    k = 2.0 * np.pi * np.asarray(f, dtype=np.float64) / c0
    z = piston_impedance(k * radius)
    r0, x0 = z.real, z.imag
    kd = k * depth
    den: Floats = (
        4.0 * r0**2 * (np.cos(kd) - x0 * np.sin(kd)) ** 2
        + ((r0**2 - x0**2 + 1.0) * np.sin(kd) + 2.0 * x0 * np.cos(kd)) ** 2
    )
    return 4.0 * r0 / den


def strip_impedance(K: npt.ArrayLike) -> Complexes:
    """Normalised radiation impedance of a baffled strip mouth per unit length, K/2 + j K e (K = k w)."""
    kw = np.asarray(K, dtype=np.float64)
    return kw / 2.0 + 1j * kw * slit_end_correction(kw)


def delany_bazley(
    f: npt.ArrayLike, flow_resistivity: float, *, rho0: float = RHO0, c0: float = C0
) -> tuple[Complexes, Complexes, Floats]:
    """Equivalent-fluid wavenumber and normalised impedance of a fibrous fill (Delany-Bazley).

    Parameters
    ----------
    f : array_like
        Frequencies, Hz.
    flow_resistivity : float
        sigma, Pa s/m^2 (e.g. 10 000 for light mineral wool).

    Returns
    -------
    k_c : ndarray (complex)
        Wavenumber, rad/m, Im < 0 (e^{j omega t}).
    zeta : ndarray (complex)
        Characteristic impedance / (rho0 c0).
    X : ndarray
        rho0 f / sigma; the fit is valid for 0.01 < X < 1.

    Notes
    -----
    zeta = 1 + 0.0571 X^-0.754 - j 0.087 X^-0.732,
    k_c = (omega/c0)(1 + 0.0978 X^-0.700 - j 0.189 X^-0.595) [3]_.
    """
    freq = np.asarray(f, dtype=np.float64)
    X = rho0 * freq / flow_resistivity
    zeta: Complexes = 1.0 + 0.0571 * X**-0.754 - 1j * 0.087 * X**-0.732
    # k_c / k0 named and typed: numpy's stubs lose the complex dtype of a real-minus-imaginary sum.
    kc_ratio: Complexes = 1.0 + 0.0978 * X**-0.700 - 1j * 0.189 * X**-0.595
    kc = 2.0 * np.pi * freq / c0 * kc_ratio
    return kc, zeta, X


def slit_viscothermal(
    f: npt.ArrayLike,
    width: float,
    *,
    rho0: float = RHO0,
    c0: float = C0,
    mu: float = MU,
    prandtl: float = PRANDTL,
    gamma: float = GAMMA,
    p0: float = P0,
) -> tuple[Complexes, Complexes]:
    """Wavenumber and normalised impedance of air in a narrow slit with visco-thermal losses.

    Notes
    -----
    Half-width b = w/2, lambda_v = b sqrt(j omega rho0 / mu), lambda_t = lambda_v sqrt(Pr):
    rho_eff = rho0 / (1 - tanh(lambda_v)/lambda_v),
    K_eff = gamma P0 / (1 + (gamma - 1) tanh(lambda_t)/lambda_t),
    k_c = omega sqrt(rho_eff / K_eff) with Im k_c < 0, zeta = sqrt(rho_eff K_eff) / (rho0 c0) [5]_.
    """
    omega = 2.0 * np.pi * np.asarray(f, dtype=np.float64)
    b = width / 2.0
    lv = b * np.sqrt(1j * omega * rho0 / mu)
    lt = lv * np.sqrt(prandtl)
    rho_eff = rho0 / (1.0 - np.tanh(lv) / lv)
    k_eff = gamma * p0 / (1.0 + (gamma - 1.0) * np.tanh(lt) / lt)
    kc = omega * np.sqrt(rho_eff / k_eff)
    kc = np.where(kc.imag > 0, -kc, kc)
    zeta = np.sqrt(rho_eff * k_eff) / (rho0 * c0)
    zeta = np.where(zeta.real < 0, -zeta, zeta)
    return kc, zeta


def channel_matrix(kc: npt.ArrayLike, zeta: npt.ArrayLike, length: float) -> Matrix:
    """Chain matrix of a uniform channel section (normalised impedances)."""
    kl = np.asarray(kc) * length
    z = np.asarray(zeta)
    c, s = np.cos(kl), np.sin(kl)
    return c, 1j * z * s, 1j * s / z, c


def skin_matrix(f: npt.ArrayLike, surface_density: float, *, rho0: float = RHO0, c0: float = C0) -> Matrix:
    """Chain matrix of a thin limp skin of ``surface_density`` kg/m^2 across the aperture."""
    z = 1j * 2.0 * np.pi * np.asarray(f, dtype=np.float64) * surface_density / (rho0 * c0)
    one = np.ones_like(z)
    return one, z, np.zeros_like(z), one


def chain(*mats: Matrix) -> Matrix:
    """Product of chain matrices, source side first."""
    a11, a12, a21, a22 = mats[0]
    for b11, b12, b21, b22 in mats[1:]:
        a11, a12, a21, a22 = (
            a11 * b11 + a12 * b21,
            a11 * b12 + a12 * b22,
            a21 * b11 + a22 * b21,
            a21 * b12 + a22 * b22,
        )
    return a11, a12, a21, a22


def tmm_tau(T: Matrix, zr: npt.ArrayLike) -> Floats:
    """Normal-incidence tau of an aperture with chain matrix T and mouth impedance z_r on both faces."""
    t11, t12, t21, t22 = T
    z: Complexes = np.asarray(zr)
    den = t11 * z + t12 + z * (t21 * z + t22)
    tau: Floats = 4.0 * np.real(z) / np.abs(den) ** 2
    return tau


def hole_diffuse_factor(ka: npt.ArrayLike) -> Floats:
    """Diffuse/normal transmission ratio for a hole: 2 for ka <= 1, falling linearly to 1 at ka = 3.

    The factor 2 follows from the blocked-pressure argument for apertures small
    against the wavelength (the same ratio as Gomperts' m = 8 vs 4) [4]_; the
    blend to 1 where the hole is large is common practice, no source, and
    carries about +-3 dB uncertainty.
    """
    x = np.asarray(ka, dtype=np.float64)
    return 2.0 - np.clip((x - 1.0) / 2.0, 0.0, 1.0)
