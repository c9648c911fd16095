"""Physics of the transmission paths of a wall: single leaf, cavity path, mass-air-mass resonance, studs.

The formulas :mod:`acoustics.walls` combines into a wall's predicted TL: the field mass law and
Sharp's single-leaf method, the finite-panel (Sewell) correction, the mass-air-mass resonance, the
cavity's absorption and loss factor, Sharp's cavity path, the transfer-matrix resonance factor of two
air-coupled leaves, and the stud (bridge) path with compliant connections. The method as a whole,
with what is derived and what is from memory, is set out in the Notes of :mod:`acoustics.walls`.

References
----------
.. [1] Bies, Hansen & Howard (2017) *Engineering Noise Control* 5th ed., Eq. 7.40, 7.42, 7.44, 7.62-7.64 [TR].
.. [2] Sewell, E. C. (1970) J. Sound Vib. 12 (formula from memory, checked against ISO 15186-3 Table A.1).
.. [3] Vigran, T. E. (2008) *Building Acoustics*, Taylor & Francis, pp. 292-294, Eq. 8.19-8.26.
.. [4] Davy, J. L. (2012) JASA 132(2), 814-821 (compliant connections; cited from memory).
.. [5] Hopkins, C. (2007) *Sound Insulation*, Eq. 4.72 and 4.89.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from . import apertures as ap
from .constants import C0, RHO0

__all__ = [
    "radiation_factor_above_fc",
    "mass_law",
    "finite_size_tau",
    "single_leaf_tl",
    "resonance_frequency",
    "cavity_absorption",
    "cavity_path_tl",
    "cavity_loss_factor",
    "resonance_factor",
]

#: Field-incidence correction for one-third-octave bands, dB (Bies Eq. 7.42 [TR]).
FIELD_CORRECTION = 5.5
#: Bare stud-cavity absorption coefficient, gypsum board on studs, at 125...4000 Hz (octaves)
#: (classic handbook table, from memory).
_BARE_ALPHA = (np.array([125.0, 250, 500, 1000, 2000, 4000]), np.array([0.04, 0.04, 0.04, 0.04, 0.04, 0.04]))


# ---------------------------------------------------------------- single leaf physics
def mass_law(f: Any, m: float, *, incidence: str = "field", c0: float = C0, rho0: float = RHO0) -> np.ndarray:
    """Mass-law TL of an infinite limp panel, dB.

    Parameters
    ----------
    f : array_like
        Frequency, Hz. m : surface density, kg/m^2.
    incidence : {"field", "normal"}

    Notes
    -----
    TL_0 = 10 lg(1 + (pi f m / (rho0 c0))^2) (Bies Eq. 7.40); field = TL_0 - 5.5 dB (Eq. 7.42).
    """
    tl0 = 10.0 * np.log10(1.0 + (np.pi * np.asarray(f, float) * m / (rho0 * c0)) ** 2)
    if incidence == "normal":
        return tl0
    if incidence != "field":
        raise ValueError(f"incidence must be 'field' or 'normal', got {incidence!r}")
    return tl0 - FIELD_CORRECTION


def finite_size_tau(f: Any, m: float, area: float, *, c0: float = C0, rho0: float = RHO0) -> np.ndarray:
    """Diffuse-field tau of a finite limp panel (Sewell type), NaN where the formula fails.

    Notes
    -----
    tau = (rho0 c0 / (pi f m))^2 [ln(k sqrt S) + 0.16 + 1/(4 k^2 S)] (shape factor U = 0).
    """
    f = np.asarray(f, float)
    k = 2 * np.pi * f / c0
    bracket = np.log(k * np.sqrt(area)) + 0.16 + 1.0 / (4 * k**2 * area)
    tau = (rho0 * c0 / (np.pi * f * m)) ** 2 * bracket
    return np.where((bracket > 0) & (k * np.sqrt(area) > 1.0), tau, np.nan)


def _limp_tau(f: np.ndarray, m: float, area: float | None, c0: float, rho0: float) -> np.ndarray:
    tau = 10 ** (-mass_law(f, m, c0=c0, rho0=rho0) / 10)
    if area:
        tau = np.fmin(tau, finite_size_tau(f, m, area, c0=c0, rho0=rho0))
    return tau


def radiation_factor_above_fc(f: Any, fc: float) -> np.ndarray:
    """Radiation factor of free bending waves above the critical frequency, dimensionless.

    Notes
    -----
    sigma = 1 / sqrt(1 - fc/f) for f > fc, at most 2 (ISO 12354-1 Annex B, sigma_1 and the cap of 2;
    from memory); 1 at and below fc, where the single-leaf method has its own transition.
    """
    f = np.asarray(f, float)
    with np.errstate(divide="ignore", invalid="ignore"):
        sigma = 1.0 / np.sqrt(1.0 - fc / f)
    return np.where(f > fc, np.minimum(sigma, 2.0), 1.0)


def single_leaf_tl(
    f: Any,
    m: float,
    fc: float,
    eta: Any,
    *,
    area: float | None = None,
    radiation: bool = False,
    c0: float = C0,
    rho0: float = RHO0,
) -> np.ndarray:
    """TL of a single leaf by Sharp's method as given by Bies (Section 7.2.4.1), dB.

    Parameters
    ----------
    f : array_like
        Frequency, Hz.
    m : float
        Surface density, kg/m^2.
    fc : float
        Critical frequency, Hz.
    eta : float or array_like
        Total loss factor (broadcast with f).
    area : float, optional
        Panel area, m^2; enables the finite-size correction at low frequency.
    radiation : bool
        Heavy leaf (masonry, concrete): above fc the resonant transmission carries the radiation factor
        sigma^2 of free bending waves, TL - 20 lg sigma (ISO 12354-1 Annex B, Formula B.1 for f > fc,
        from memory; :func:`radiation_factor_above_fc`). Sharp's form assumes sigma = 1, which reads
        heavy walls 3-4 points high (their fc lies at or below the rated range).

    Notes
    -----
    f <= fc/2: limp panel (field mass law, or Sewell's finite panel where higher);
    f >= fc: TL_0 + 10 lg(2 eta f / (pi fc)) (Bies Eq. 7.44), never above the limp value;
    between: straight line in lg f.

    References
    ----------
    .. [1] Bies, Hansen & Howard (2017) *Engineering Noise Control* 5th ed., Section 7.2.4.1 [TR].
    .. [2] ISO 12354-1:2017, Annex B: tau = (rho0 c0 / (pi f m))^2 pi fc sigma^2 / (2 f eta) above fc
       (from memory).
    """
    f = np.asarray(f, float)
    eta = np.broadcast_to(np.asarray(eta, float), f.shape)
    lo = -10 * np.log10(_limp_tau(f, m, area, c0, rho0))

    def above(ff: np.ndarray, ee: np.ndarray) -> np.ndarray:
        tl = mass_law(ff, m, incidence="normal", c0=c0, rho0=rho0) + 10 * np.log10(2 * ee * ff / (np.pi * fc))
        out = tl - 20 * np.log10(radiation_factor_above_fc(ff, fc)) if radiation else tl
        return np.asarray(out, dtype=float)

    tl = np.where(f <= fc / 2, lo, np.minimum(above(f, eta), lo))
    mid = (f > fc / 2) & (f < fc)
    if np.any(mid):
        fa = np.full(f.shape, fc / 2)
        t_lo = -10 * np.log10(_limp_tau(fa, m, area, c0, rho0))
        t_hi = above(np.full(f.shape, float(fc)), eta)
        x = np.log10(f / (fc / 2)) / np.log10(2.0)
        tl = np.where(mid, t_lo + x * (t_hi - t_lo), tl)
    return tl


# ---------------------------------------------------------------- double leaf physics
def resonance_frequency(
    m1: float,
    m2: float,
    depth: float,
    *,
    fill_thickness: float = 0.0,
    spring_per_area: float = 0.0,
    c0: float = C0,
    rho0: float = RHO0,
) -> float:
    """Mass-air-mass resonance f0, Hz.

    Notes
    -----
    f0 = (1/2pi) sqrt(s'' (m1 + m2) / (m1 m2)), s'' = rho0 c0^2 / (d + 0.4 t) + N k / S
    (Bies Eq. 7.62; Hopkins Eq. 4.72, 4.89; the 0.4 t term makes the filled part isothermal).
    """
    s = rho0 * c0**2 / (depth + 0.4 * fill_thickness) + spring_per_area
    return float(np.sqrt(s * (m1 + m2) / (m1 * m2)) / (2 * np.pi))


def cavity_absorption(
    f: Any,
    fill_thickness: float = 0.0,
    flow_resistivity: float = 10000.0,
    *,
    c0: float = C0,
    rho0: float = RHO0,
) -> np.ndarray:
    """Absorption coefficient seen by the cavity field: max(bare cavity, rigidly backed fill layer).

    Parameters
    ----------
    f : array_like
        Frequency, Hz.
    fill_thickness : float
        Porous fill thickness t, m (0 = empty cavity).
    flow_resistivity : float
        Airflow resistivity of the fill, Pa s/m^2.

    Notes
    -----
    Fill: Z = -j zeta cot(k_c t) (Delany-Bazley k_c, zeta),
    alpha = 1 - |(Z - 1)/(Z + 1)|^2 (normal incidence).
    """
    f = np.asarray(f, float)
    bare = np.interp(np.log10(f), np.log10(_BARE_ALPHA[0]), _BARE_ALPHA[1])
    t = fill_thickness
    if t <= 0:
        return np.asarray(bare, dtype=float)
    kc, zeta, _ = ap.delany_bazley(f, flow_resistivity, rho0=rho0, c0=c0)
    z = -1j * zeta / np.tan(kc * t)
    alpha = 1 - np.abs((z - 1) / (z + 1)) ** 2
    return np.asarray(np.maximum(bare, alpha), dtype=float)


def cavity_path_tl(
    f: Any,
    tl1: Any,
    tl2: Any,
    tl_m: Any,
    f0: float,
    depth: float,
    alpha: Any = None,
    *,
    floor: Any = None,
    c0: float = C0,
) -> np.ndarray:
    """TL of the cavity path of a double leaf (Sharp, as given by Bies Eq. 7.64), dB.

    Parameters
    ----------
    f : array_like
        Frequency, Hz.
    tl1, tl2 : array_like
        Single-leaf TL of each leaf, dB.
    tl_m : array_like
        Mass-law TL of the combined mass m1 + m2, dB.
    f0 : float
        Mass-air-mass resonance, Hz. depth : cavity depth d, m.
    alpha : array_like, optional
        Cavity absorption coefficient; None = fully absorbing (Sharp's assumption).
    floor : array_like, optional
        Lowest TL above f0, dB (default TL_M). A leaf near or above its own coincidence transmits more
        than a limp leaf of its mass, so the wall model passes TL_M minus the leaves' coincidence dips.

    Notes
    -----
    TL = TL_M (f <= f0); TL1 + TL2 + 20 lg(2kd) (f0 < f < f_l); TL1 + TL2 + 6 (f >= f_l = c0/(2 pi d));
    with ``alpha``: tau >= tau1 tau2 / (4 alpha) (diffuse cavity, derived). Above f0 the result is never
    below ``floor``, so the branches join without a step.
    """
    f = np.asarray(f, float)
    t12 = 10 ** (-(np.asarray(tl1, float) + np.asarray(tl2, float)) / 10)
    k = 2 * np.pi * f / c0
    fl = c0 / (2 * np.pi * depth)
    tau = np.where(f < fl, t12 / (2 * k * depth) ** 2, t12 / 4)
    if alpha is not None:
        tau = np.maximum(tau, t12 / (4 * np.asarray(alpha, float)))
    tl_m = np.asarray(tl_m, float)
    # Above f0 never below the floor: at f0 Sharp's middle branch lies 5.5 dB under TL_M (the field-incidence
    # correction counted in both leaves), which would make a step; the branches meet just above f0.
    low = tl_m if floor is None else np.minimum(tl_m, np.asarray(floor, float))
    return np.asarray(np.where(f <= f0, tl_m, np.maximum(low, -10 * np.log10(tau))), dtype=float)


#: Angles for the diffuse-field average of the lumped resonance model, rad (field incidence, 0-78 deg).
_THETA = np.deg2rad(np.linspace(1.625, 76.375, 24))
#: sin of the azimuth between the trace wave and the studs (0-90 deg, 6 midpoints).
_PHI_SIN = np.sin(np.deg2rad(np.linspace(7.5, 82.5, 6)))


def cavity_loss_factor(f: Any, depth: float, alpha: Any, *, c0: float = C0) -> np.ndarray:
    """Loss factor of the air in a cavity of depth d whose faces absorb alpha, dimensionless.

    Notes
    -----
    Energy balance of a diffuse field in a room of volume V = S d bounded by two faces of area S with
    absorption area A = 2 alpha S: eta = c0 A / (8 pi f V) (Sabine's decay rate written as a loss
    factor, eta = 2.2 / (f T)) = alpha / (2 k d). Derived; the same alpha limits the cavity path.
    """
    f = np.asarray(f, float)
    return np.asarray(np.asarray(alpha, float) * c0 / (4 * np.pi * f * depth), dtype=float)


def _layer_matrix(kc: Any, zc: Any, kx: Any, h: float) -> tuple[Any, Any, Any, Any]:
    """Transfer matrix (T11, T12, T21, T22) for (p, v_z) of a fluid layer of thickness h at trace kx."""
    kz = np.sqrt(kc**2 - kx**2 + 0j)
    kz = np.where(kz.imag > 0, -kz, kz)  # decaying branch for exp(j omega t)
    zn = zc * kc / kz
    c, s = np.cos(kz * h), np.sin(kz * h)
    return c, 1j * zn * s, 1j * s / zn, c


def _matmul(a: tuple[Any, ...], b: tuple[Any, ...]) -> tuple[Any, Any, Any, Any]:
    return (
        a[0] * b[0] + a[1] * b[2],
        a[0] * b[1] + a[1] * b[3],
        a[2] * b[0] + a[3] * b[2],
        a[2] * b[1] + a[3] * b[3],
    )


def resonance_factor(
    f: Any,
    m1: float,
    m2: float,
    depth: float,
    eta_air: Any,
    *,
    fill_thickness: float = 0.0,
    flow_resistivity: float = 10000.0,
    partitioned: bool = False,
    c0: float = C0,
    rho0: float = RHO0,
) -> np.ndarray:
    """Diffuse-field transmission of two air-coupled limp leaves over that of one leaf of mass m1 + m2.

    Parameters
    ----------
    f : array_like
        Frequency, Hz.
    m1, m2 : float
        Leaf surface densities, kg/m^2.
    depth : float
        Cavity depth d, m.
    eta_air : array_like
        Loss factor of the cavity (broadcast with f), see :func:`cavity_loss_factor`.
    fill_thickness, flow_resistivity : float
        Porous fill laid against leaf 1, m, and its airflow resistivity, Pa s/m^2.
    partitioned : bool
        Studs or furring cross the cavity: the air cannot move laterally across the bays, only along them.

    Returns
    -------
    ndarray
        R(f) = <tau_2> / <tau_M>, averaged over 0-78 degrees with weight sin cos (and over the azimuth
        to the studs when partitioned): R >> 1 around f0 when the cavity is poorly damped, R -> 1 well
        below f0, R << 1 above.

    Notes
    -----
    Transfer-matrix model limp leaf - cavity layer(s) - limp leaf, infinite layers at trace
    wavenumber k_x = k sin(theta) (the standard layered-media method, e.g. Vigran 2008 ch. 6 and
    Allard & Atalla 2009, from memory). The cavity layers give p_a = A v1 + B v2, p_b = C v1 + D v2
    (A = T11/T21, B = -det T / T21, C = 1/T21, D = -T22/T21) and, with Z0 = rho0 c0 / cos(theta),

        tau(theta) = | 2 Z0 C / ((j w m1 + Z0 + A)(j w m2 + Z0 - D) + B C) |^2.

    Bulk modulus of the cavity rho0 c0^2 (1 + j eta) d / (d + 0.4 t): the same isothermal-fill
    softening as :func:`resonance_frequency`, with the cavity's own loss. The fill adds the
    Delany-Bazley dynamic density rho = Z_c k_c / omega (flow resistance). Partitioned: k_x along
    the studs only, k_x sin(phi), phi uniform over 0-90 degrees (derived).

    For a thin locally reacting layer this is the lumped mass-air-mass system of Bies Eq. 7.62 /
    Hopkins Eq. 4.72 with its damping kept; far above f0 (normal incidence) it tends to
    tau1 tau2 / (2 k d)^2, Sharp's middle branch. An empty cavity is not locally reacting: along the
    bays its resonance rises as 1/cos(theta), which spreads the dip over the octave above f0.
    """
    f = np.asarray(f, float)
    w = (2 * np.pi * f)[..., None]
    if partitioned:
        w = w[..., None]
    k = w / c0
    cos, sin = np.cos(_THETA), np.sin(_THETA)
    z0 = rho0 * c0 / cos
    kx = k * sin * (_PHI_SIN[:, None] if partitioned else 1.0)
    extra = (None, None) if partitioned else (None,)
    eta = np.asarray(eta_air, float)[(..., *extra)] if np.ndim(eta_air) else eta_air
    d, tf = depth, fill_thickness
    kmod = rho0 * c0**2 * (1 + 1j * eta) * d / (d + 0.4 * tf)  # bulk modulus, as in f0, with the cavity loss
    layers = []
    if tf > 0:  # fill: Delany-Bazley dynamic density (flow resistance damps the lateral air motion)
        kf, zf, _ = ap.delany_bazley(f, flow_resistivity, rho0=rho0, c0=c0)
        rho_f = (zf * kf * rho0 * c0 / (2 * np.pi * f))[(..., *extra)]
        layers.append(_layer_matrix(w * np.sqrt(rho_f / kmod), np.sqrt(rho_f * kmod), kx, tf))
    if d - tf > 1e-6:
        layers.append(_layer_matrix(w * np.sqrt(rho0 / kmod), np.sqrt(rho0 * kmod), kx, d - tf))
    t11, t12, t21, t22 = layers[0] if len(layers) == 1 else _matmul(layers[0], layers[1])
    a_, b_, c_, d_ = t11 / t21, -(t11 * t22 - t12 * t21) / t21, 1 / t21, -t22 / t21
    den = (1j * w * m1 + z0 + a_) * (1j * w * m2 + z0 - d_) + b_ * c_
    tau = np.abs(2 * z0 * c_ / den) ** 2
    tau_m = np.abs(2 * z0 / (1j * w * (m1 + m2) + 2 * z0)) ** 2
    if partitioned:
        tau = tau.mean(-2)
        tau_m = tau_m[..., 0, :]
    wt = sin * cos
    return np.asarray((tau * wt).sum(-1) / (tau_m * wt).sum(-1), dtype=float)
