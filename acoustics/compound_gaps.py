"""Gaps that are more than one straight slit: the annulus around a pipe in a leaf, and a chain of
slits in series (face gap, the joint under a plate, face gap) — both in the same band-averaged
diffuse-field form as :mod:`acoustics.leaks`.

References
----------
.. [1] Sealwalk acoustics method notes, Sections 6.5 and 15 (transfer matrix of a narrow gap, its
   use for annuli and series joints; derived, flagged on each leak).
"""

from __future__ import annotations

import numpy as np
import numpy.typing as npt

from . import apertures as ap
from .constants import C0, RHO0
from .errors import GeometryError
from .leaks import SUB_BAND_POINTS, Leak, _check_positive, _slit_flags, band_average

Floats = npt.NDArray[np.float64]

__all__ = ["annular_gap", "series_slit"]


def annular_gap(
    pipe_diameter: float,
    gap: float,
    depth: float,
    *,
    flow_resistivity: float | None = None,
    label: str = "",
    points: int = SUB_BAND_POINTS,
    c0: float = C0,
    rho0: float = RHO0,
) -> Leak:
    """Annular gap around a pipe as a short annular slit (transfer matrix, diffuse field).

    Parameters
    ----------
    pipe_diameter : float
        Outside diameter D of the pipe, duct or conduit, m.
    gap : float
        Radial gap g between the pipe and the edge of the hole, m.
    depth : float
        Length of the gap along the pipe (the board or sleeve it passes), m.
    flow_resistivity : float, optional
        Fibre packed in the gap over its whole depth, Pa s/m^2 (None = open).

    Returns
    -------
    Leak
        kind "ring_gap", ``area = S_a <g_d tau_normal>_band``, S_a = pi (D + g) g, flagged
        "annulus_derived".

    Notes
    -----
    The annulus is a slit of width g bent into a circle of mean circumference L = pi (D + g). Its
    mouths are baffled strips (Gomperts' z_r = K/2 + j K e, K = k g) [1]_ while L is long against the
    wavelength; for a short annulus the radiation resistance tends to that of a small baffled source
    of the same area, k^2 S_a / (2 pi) (normalised by rho0 c0 / S_a; it equals K/2 x k L / pi),
    so R = (K/2) min(1, k L / pi). The end-correction log term is cut off at the annulus size:
    e is evaluated at K_eff = g max(k, 2 pi / L). Channel and diffuse factor as in
    :func:`filled_gap` (diffuse factor of a hole of radius (D + 2g)/2). Derived here; Mechel's
    annular-gap formulas [2]_ were not accessed.

    References
    ----------
    .. [1] Hopkins (2007) *Sound Insulation*, Eqs. 4.99-4.100 (Gomperts' slit mouth).
    .. [2] Mechel, F. P. (ed.) (2008) *Formulas of Acoustics*, 2nd ed., Springer (annular gaps; not accessed).
    """
    D = _check_positive(pipe_diameter, "pipe_diameter")
    g = _check_positive(gap, "gap")
    d = _check_positive(depth, "depth")
    sigma = (
        None
        if flow_resistivity is None
        else _check_positive(flow_resistivity, "flow_resistivity", "Pa s/m^2")
    )
    L = np.pi * (D + g)
    s_a = L * g

    def tau(f: Floats) -> Floats:
        k = 2.0 * np.pi * f / c0
        K = k * g
        zr = K / 2.0 * np.minimum(1.0, k * L / np.pi) + 1j * K * ap.slit_end_correction(
            g * np.maximum(k, 2.0 * np.pi / L)
        )
        if sigma is None:
            T = ap.channel_matrix(k + 0j, 1.0, d)
        else:
            kc, zeta, _ = ap.delany_bazley(f, sigma, rho0=rho0, c0=c0)
            T = ap.channel_matrix(kc, zeta, d)
        return ap.hole_diffuse_factor(k * (D + 2.0 * g) / 2.0) * ap.tmm_tau(T, zr)

    flags = ["annulus_derived"] + _slit_flags(g, 1.0, c0)
    return Leak(s_a * band_average(tau, points), "ring_gap", label, tuple(flags), s_a)


def series_slit(
    sections: list[tuple[float, float]],
    length: float,
    *,
    label: str = "",
    points: int = SUB_BAND_POINTS,
    c0: float = C0,
    rho0: float = RHO0,
) -> Leak:
    """Slit path of several widths in series (e.g. a face gap, the joint under a plate, the other face gap).

    Parameters
    ----------
    sections : list of (width, depth)
        Each section's width and depth along the path, m, source side first.
    length : float
        Length of the path along the joint, m.

    Returns
    -------
    Leak
        kind "series_slit", diffuse field (2 x normal incidence, as Gomperts' m = 8 vs 4), area referred
        to the first section's open area.

    Notes
    -----
    Chain matrices per unit length in (p, u w) with characteristic impedance rho0 c0 zeta_i / w_i, the
    air in each section with the slit-pore visco-thermal functions
    (:func:`acoustics.apertures.slit_viscothermal`), mouths as baffled strips of the end sections'
    widths; transmitted / incident power per unit length
    4 rho0 c0 Re Z_B / |T11 Z_B + T12 + Z_A (T21 Z_B + T22)|^2 (derived as method notes 6.5,
    with volume-velocity continuity at each change of width).
    """
    if not sections:
        raise GeometryError("sections must list at least one (width, depth)")
    secs = [(_check_positive(w, "width"), _check_positive(d, "depth")) for w, d in sections]
    L = _check_positive(length, "length")
    rc = rho0 * c0

    def tau_area(f: Floats) -> Floats:
        mats = []
        for w, d in secs:
            kc, zeta = ap.slit_viscothermal(f, w, rho0=rho0, c0=c0)
            zc = rc * zeta / w
            kl = kc * d
            mats.append((np.cos(kl), 1j * zc * np.sin(kl), 1j * np.sin(kl) / zc, np.cos(kl)))
        t11, t12, t21, t22 = ap.chain(*mats)
        k = 2.0 * np.pi * f / c0
        za = rc / secs[0][0] * ap.strip_impedance(k * secs[0][0])
        zb = rc / secs[-1][0] * ap.strip_impedance(k * secs[-1][0])
        den = t11 * zb + t12 + za * (t21 * zb + t22)
        tau: Floats = 2.0 * 4.0 * rc * np.real(zb) / np.abs(den) ** 2
        return tau

    w0 = secs[0][0]
    flags = _slit_flags(max(w for w, _ in secs), L, c0)
    flags = [f for f in flags if f != "narrow_inviscid"]
    return Leak(L * band_average(tau_area, points), "series_slit", label, tuple(flags), w0 * L)
