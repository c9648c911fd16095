"""Leaks: through-paths as transmission areas S*tau per band.

A :class:`Leak` is the one currency of the audit: an *added transmission area*
per one-third-octave band (m^2), summed on top of the intact wall's S*tau. Gap
models (slits, holes, ring gaps around pipes, open areas, fibre-filled gaps,
gaps closed by a limp skin, hairline cracks) build one from geometry; any other
defect model builds one from its own (21,) array with :meth:`Leak.added`.

Every gap model is for a diffuse incident field and band-averages tau over each
third octave (deep gaps resonate inside a band, so tau at the centre frequency
alone can be several dB off). tau may exceed 1 and is kept.

Notes
-----
Band value: tau_band = mean of tau(f_j) over ``points`` (41) frequencies
spread evenly in log frequency across the band, ends included (equal weights,
i.e. pink-noise band power; :func:`acoustics.bands.averaging_frequencies`)
[4]_ Section 6.6. Area = S_open * tau_band.

References
----------
.. [1] Hopkins, C. (2007) *Sound Insulation*, Eqs. 4.99-4.102.
.. [2] Delany, M. E. & Bazley, E. N. (1970) Applied Acoustics 3(2), 105-116.
.. [3] Allard, J.-F. & Atalla, N. (2009) *Propagation of Sound in Porous Media*, 2nd ed.
.. [4] Sealwalk acoustics method notes, Sections 5-6 and 12.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np
import numpy.typing as npt

from . import apertures as ap
from .bands import BANDS, N_BANDS, averaging_frequencies, band_edges
from .constants import C0, RHO0
from .errors import GeometryError

Floats = npt.NDArray[np.float64]

__all__ = [
    "Leak",
    "FLAG_TEXT",
    "added_area",
    "slit",
    "hole",
    "ring_gap",
    "open_area",
    "filled_gap",
    "skin_gap",
    "crack",
    "band_average",
    "SUB_BAND_POINTS",
]

#: Frequencies per band used for band averaging (odd, so the centre is one of them).
SUB_BAND_POINTS = 41

#: Meaning of each validity flag a leak may carry (shown to the user, never hidden).
FLAG_TEXT = {
    "kw_gt_1": "gap width is not small against the wavelength at high frequencies (k w > 1); "
    "the slit model is outside its range there",
    "ka_gt_1": "hole is not small against the wavelength at high frequencies (k a > 1); "
    "diffuse-field correction blended, about +-3 dB",
    "diffuse_from_normal": "hole model is for normal incidence; diffuse field estimated as 2 x tau "
    "(about +-3 dB)",
    "short_slit": "gap shorter than a wavelength at 500 Hz; the long-slit model overstates it somewhat",
    "narrow_inviscid": "gap narrower than 1 mm modelled without viscous losses; use the crack model",
    "ring_as_slit": "ring gap modelled as a straight slit of the mean circumference",
    "fill_outside_fit": "fibre fill outside the Delany-Bazley fit range (0.01 < rho0 f / sigma < 1) "
    "in some bands",
    "limp_skin_unvalidated": "limp-skin seal model is derived, with no published validation",
    "open_area_crude": "open area taken as tau = 1 (no aperture resonance or end effects)",
    "annulus_derived": "ring gap modelled as a short annular slit (3-D mouth radiation below half a "
    "wavelength of circumference); derived, no published annular-gap model used",
}


def _check_positive(value: float, name: str, unit: str = "m") -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise GeometryError(f"{name} must be a number in {unit}, got {value!r}") from None
    if not np.isfinite(v) or v <= 0:
        raise GeometryError(f"{name} must be > 0 {unit}, got {value!r}")
    return v


@dataclass(frozen=True, eq=False)
class Leak:
    """A through-path or defect as an added transmission area per band.

    Parameters
    ----------
    area : array_like, shape (21,)
        Transmission area S*tau per band of :data:`acoustics.BANDS`, m^2
        (finite, >= 0; stored read-only).
    kind : str
        Model or defect kind, e.g. "slit", "hole", "bridge".
    label : str
        Free text shown to the user.
    flags : tuple of str
        Validity flags (keys of :data:`FLAG_TEXT` or the caller's own).
    open_area : float
        Geometric open cross-section, m^2 (NaN for defects that are not gaps).
    """

    area: Floats
    kind: str
    label: str = ""
    flags: tuple[str, ...] = ()
    open_area: float = float("nan")

    def __post_init__(self) -> None:
        a = np.array(self.area, dtype=float)
        if a.shape != (N_BANDS,):
            raise ValueError(f"Leak.area must have shape ({N_BANDS},) over BANDS, got {a.shape}")
        if not np.all(np.isfinite(a)):
            raise ValueError("Leak.area must be finite in every band (m^2)")
        if np.any(a < 0):
            # Float noise of a difference tau_defective - tau_intact may dip a hair below zero.
            tol = 1e-9 * max(float(np.abs(a).max()), 1e-300)
            if np.any(a < -tol):
                band = BANDS[np.argmax(a < -tol)]
                raise ValueError(f"Leak.area must be >= 0 m^2; negative at {band:g} Hz")
            a = np.maximum(a, 0.0)
        a.setflags(write=False)
        if not isinstance(self.kind, str) or not self.kind:
            raise ValueError("Leak.kind must be a non-empty string")
        object.__setattr__(self, "area", a)
        object.__setattr__(self, "flags", tuple(str(f) for f in self.flags))
        object.__setattr__(self, "label", str(self.label))

    @classmethod
    def added(cls, area: Any, kind: str = "added", label: str = "", flags: tuple[str, ...] = ()) -> Leak:
        """Leak from any (21,) added transmission area, m^2 (e.g. S_wall (tau_defective - tau_intact))."""
        return cls(np.asarray(area, dtype=float), kind=kind, label=label, flags=tuple(flags))

    def times(self, count: int) -> Leak:
        """The same leak ``count`` times over (identical, independent paths add their areas)."""
        if int(count) != count or count < 1:
            raise ValueError(f"count must be a whole number >= 1, got {count!r}")
        return Leak(self.area * count, self.kind, self.label, self.flags, self.open_area * count)

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready description."""
        oa = None if np.isnan(self.open_area) else float(self.open_area)
        return {
            "kind": self.kind,
            "label": self.label,
            "flags": list(self.flags),
            "open_area": oa,
            "area": [float(v) for v in self.area],
        }


def added_area(area: Any, kind: str = "added", label: str = "", flags: tuple[str, ...] = ()) -> Leak:
    """Function form of :meth:`Leak.added`."""
    return Leak.added(area, kind=kind, label=label, flags=flags)


def band_average(tau: Callable[[Floats], Floats], points: int = SUB_BAND_POINTS) -> Floats:
    """Mean of ``tau(f)`` over ``points`` log-spaced frequencies inside each band, shape (21,)."""
    f = averaging_frequencies(points)
    return np.asarray(tau(f), dtype=float).mean(axis=1)


def _top_k(width: float, c0: float) -> float:
    """k times ``width`` at the upper edge of the 5000 Hz band."""
    return 2.0 * np.pi * float(band_edges()[1][-1]) / c0 * width


def _slit_flags(width: float, length: float, c0: float) -> list[str]:
    flags = []
    if _top_k(width, c0) > 1.0:
        flags.append("kw_gt_1")
    if length < c0 / 500.0:
        flags.append("short_slit")
    if width < 1e-3:
        flags.append("narrow_inviscid")
    return flags


def slit(
    width: float,
    length: float,
    depth: float,
    *,
    edge: bool = False,
    label: str = "",
    points: int = SUB_BAND_POINTS,
    c0: float = C0,
) -> Leak:
    """Straight slit through the assembly (Gomperts model, diffuse field).

    Parameters
    ----------
    width : float
        Gap width w, m.
    length : float
        Gap length L along the joint, m.
    depth : float
        Air-path depth d (thickness of the assembly at the gap), m.
    edge : bool
        True for a gap along an edge (junction with a floor, ceiling or side
        wall: n = 0.5), False for a gap in the middle of a plate (n = 1).
    label : str
        Text for the user.
    points : int
        Sub-band frequencies per band.
    c0 : float
        Speed of sound, m/s.

    Returns
    -------
    Leak
        ``area = w L <tau>_band`` with tau from :func:`acoustics.apertures.gomperts_slit_tau` (m = 8).

    Notes
    -----
    tau = m K cos^4(Ke) / (2 n^2 [sin^2(KX + 2Ke) + K^2/(2n^2) cos^2(Ke)(1 + cos KX cos(KX + 2Ke))])
    with K = k w, X = d/w, e = (ln(8/K) - gamma)/pi [1]_.

    References
    ----------
    .. [1] Hopkins (2007) *Sound Insulation*, Eqs. 4.99-4.100 (after Gomperts 1964).
    """
    w = _check_positive(width, "width")
    L = _check_positive(length, "length")
    d = _check_positive(depth, "depth")
    tau = band_average(lambda f: ap.gomperts_slit_tau(f, w, d, incidence="diffuse", edge=edge, c0=c0), points)
    kind = "edge_slit" if edge else "slit"
    return Leak(w * L * tau, kind, label, tuple(_slit_flags(w, L, c0)), w * L)


def hole(
    diameter: float,
    depth: float,
    *,
    diffuse: str = "blend",
    label: str = "",
    points: int = SUB_BAND_POINTS,
    c0: float = C0,
) -> Leak:
    """Circular hole through the assembly (Wilson-Soroka, converted to diffuse field).

    Parameters
    ----------
    diameter : float
        Hole diameter 2a, m.
    depth : float
        Hole depth d, m.
    diffuse : {"blend", "double"}
        Diffuse-field factor g: "blend" (default) is 2 for ka <= 1 falling to 1
        at ka = 3 (:func:`acoustics.apertures.hole_diffuse_factor`); "double"
        is 2 at all frequencies (the small-aperture limit).

    Returns
    -------
    Leak
        ``area = pi a^2 <g(ka) tau_normal>_band``.

    Notes
    -----
    tau_normal = 4 R0 / (4 R0^2 [cos kd - X0 sin kd]^2 + [(R0^2 - X0^2 + 1) sin kd + 2 X0 cos kd]^2),
    R0 = 1 - 2 J1(2ka)/(2ka), X0 = 2 H1(2ka)/(2ka) [1]_.

    References
    ----------
    .. [1] Hopkins (2007) *Sound Insulation*, Eq. 4.102 (after Wilson & Soroka 1965).
    """
    a = _check_positive(diameter, "diameter") / 2.0
    d = _check_positive(depth, "depth")
    if diffuse not in ("blend", "double"):
        raise GeometryError(f"diffuse must be 'blend' or 'double', got {diffuse!r}")

    def tau(f: Floats) -> Floats:
        g = ap.hole_diffuse_factor(2.0 * np.pi * f / c0 * a) if diffuse == "blend" else 2.0
        return g * ap.wilson_soroka_tau(f, a, d, c0=c0)

    flags = ["diffuse_from_normal"]
    if _top_k(a, c0) > 1.0:
        flags.append("ka_gt_1")
    s = np.pi * a**2
    return Leak(s * band_average(tau, points), "hole", label, tuple(flags), s)


def ring_gap(
    pipe_diameter: float,
    gap: float,
    depth: float,
    *,
    label: str = "",
    points: int = SUB_BAND_POINTS,
    c0: float = C0,
) -> Leak:
    """Annular gap around a pipe, duct or conduit passing through the assembly.

    Parameters
    ----------
    pipe_diameter : float
        Outside diameter of the pipe or duct, m.
    gap : float
        Radial gap between pipe and hole edge, m.
    depth : float
        Depth of the gap along the pipe, m.

    Returns
    -------
    Leak
        The annulus as a slit of width ``gap`` and length pi (D + gap) (mid-plate
        Gomperts model), kind "ring_gap", flagged "ring_as_slit".

    Notes
    -----
    A narrow annulus is a slit bent into a circle; when its circumference is
    short against the wavelength the 2-D slit model overstates it (flag
    "short_slit"). Derived in this project, no published ring-gap model used.
    """
    D = _check_positive(pipe_diameter, "pipe_diameter")
    g = _check_positive(gap, "gap")
    leak = slit(g, np.pi * (D + g), depth, label=label, points=points, c0=c0)
    return Leak(leak.area, "ring_gap", label, ("ring_as_slit",) + leak.flags, leak.open_area)


def open_area(area: float, *, label: str = "") -> Leak:
    """Open area with tau = 1 in every band (the crude 'perfect transmission' model), area in m^2."""
    s = _check_positive(area, "area", "m^2")
    return Leak(np.full(N_BANDS, s), "open_area", label, ("open_area_crude",), s)


def _mouth(
    shape: str, width: float, length: float, c0: float
) -> tuple[float, Callable[[Floats], ap.Complexes], float | None]:
    if shape == "slit":
        return width * length, lambda f: ap.strip_impedance(2.0 * np.pi * f / c0 * width), 2.0
    if shape == "hole":
        a = width / 2.0
        return np.pi * a**2, lambda f: ap.piston_impedance(2.0 * np.pi * f / c0 * a), None
    raise GeometryError(f"shape must be 'slit' or 'hole', got {shape!r}")


def _tmm_leak(
    shape: str,
    width: float,
    length: float,
    kind: str,
    label: str,
    flags: list[str],
    sections: Callable[[Floats], ap.Matrix],
    points: int,
    c0: float,
) -> Leak:
    s, zr, factor = _mouth(shape, width, length, c0)

    def tau(f: Floats) -> Floats:
        t = ap.tmm_tau(sections(f), zr(f))
        if factor is not None:
            return factor * t  # slit: exactly Gomperts' m = 8 vs m = 4
        return ap.hole_diffuse_factor(2.0 * np.pi * f / c0 * width / 2.0) * t

    if shape == "slit":
        flags = flags + _slit_flags(width, length, c0)
        flags = [f for f in flags if f != "narrow_inviscid" or kind != "crack"]
    else:
        flags = flags + ["diffuse_from_normal"] + (["ka_gt_1"] if _top_k(width / 2, c0) > 1 else [])
    return Leak(s * band_average(tau, points), kind, label, tuple(dict.fromkeys(flags)), s)


def filled_gap(
    width: float,
    length: float,
    depth: float,
    *,
    flow_resistivity: float,
    fill_depth: float | None = None,
    shape: str = "slit",
    label: str = "",
    points: int = SUB_BAND_POINTS,
    c0: float = C0,
    rho0: float = RHO0,
) -> Leak:
    """Gap fully or partly filled with fibrous material (transfer matrix, Delany-Bazley fill).

    Parameters
    ----------
    width : float
        Gap width (slit) or diameter (hole), m.
    length : float
        Slit length, m (ignored for a hole).
    depth : float
        Total air-path depth, m.
    flow_resistivity : float
        Airflow resistivity sigma of the fill, Pa s/m^2 (loose mineral wool
        roughly 5 000-20 000; common practice, no source).
    fill_depth : float, optional
        Depth of the filled part, m (default: the whole depth). The rest is air.
    shape : {"slit", "hole"}

    Returns
    -------
    Leak
        Diffuse-field transmission area, kind "filled_gap".

    Notes
    -----
    Chain matrix T = T_fill T_air (module :mod:`acoustics.apertures`),
    tau_normal = 4 Re z_r / |T11 z_r + T12 + z_r (T21 z_r + T22)|^2; the fill is
    an equivalent fluid with zeta, k_c from Delany & Bazley [2]_. Diffuse:
    x2 for a slit, the hole factor for a hole.
    """
    w = _check_positive(width, "width")
    L = _check_positive(length, "length") if shape == "slit" else 1.0
    d = _check_positive(depth, "depth")
    sigma = _check_positive(flow_resistivity, "flow_resistivity", "Pa s/m^2")
    lf = d if fill_depth is None else _check_positive(fill_depth, "fill_depth")
    if lf > d * (1 + 1e-12):
        raise GeometryError(f"fill_depth ({lf} m) must not exceed depth ({d} m)")
    lf = min(lf, d)

    def sections(f: Floats) -> ap.Matrix:
        kc, zeta, _ = ap.delany_bazley(f, sigma, rho0=rho0, c0=c0)
        mats = [ap.channel_matrix(kc, zeta, lf)]
        if d - lf > 0:
            mats.append(ap.channel_matrix(2.0 * np.pi * f / c0 + 0j, 1.0, d - lf))
        return ap.chain(*mats)

    x = rho0 * np.array([band_edges()[0][0], band_edges()[1][-1]]) / sigma
    flags = ["fill_outside_fit"] if x[0] < 0.01 or x[1] > 1.0 else []
    return _tmm_leak(shape, w, L, "filled_gap", label, flags, sections, points, c0)


def skin_gap(
    width: float,
    length: float,
    depth: float,
    *,
    surface_density: float,
    shape: str = "slit",
    label: str = "",
    points: int = SUB_BAND_POINTS,
    c0: float = C0,
    rho0: float = RHO0,
) -> Leak:
    """Gap closed at one face by a thin limp skin (sealant film, tape, foam skin).

    Parameters
    ----------
    width, length, depth : float
        Gap geometry, m (``width`` is the diameter for a hole).
    surface_density : float
        Surface density m_s of the skin, kg/m^2 (e.g. a 1 mm sealant film about 1.5).

    Returns
    -------
    Leak
        Diffuse-field transmission area, kind "skin_gap", flagged "limp_skin_unvalidated".

    Notes
    -----
    The skin is a series mass, chain matrix [[1, j omega m_s/(rho0 c0)], [0, 1]],
    ahead of the air channel (derived; no published validation).
    """
    w = _check_positive(width, "width")
    L = _check_positive(length, "length") if shape == "slit" else 1.0
    d = _check_positive(depth, "depth")
    ms = _check_positive(surface_density, "surface_density", "kg/m^2")

    def sections(f: Floats) -> ap.Matrix:
        air = ap.channel_matrix(2.0 * np.pi * f / c0 + 0j, 1.0, d)
        return ap.chain(ap.skin_matrix(f, ms, rho0=rho0, c0=c0), air)

    return _tmm_leak(shape, w, L, "skin_gap", label, ["limp_skin_unvalidated"], sections, points, c0)


def crack(
    width: float,
    length: float,
    depth: float,
    *,
    label: str = "",
    points: int = SUB_BAND_POINTS,
    c0: float = C0,
    rho0: float = RHO0,
) -> Leak:
    """Hairline crack (e.g. a shrinkage crack in sealant) with visco-thermal losses.

    Parameters
    ----------
    width : float
        Crack width w, m (meant for w below about 1 mm).
    length, depth : float
        Crack length and depth, m.

    Returns
    -------
    Leak
        Diffuse-field transmission area (2 x normal incidence), kind "crack".

    Notes
    -----
    Air in the crack is an equivalent fluid with the slit-pore density and bulk
    modulus of Allard & Atalla [3]_ (see
    :func:`acoustics.apertures.slit_viscothermal`), mouths as baffled strips.
    At low frequency the flow resistance tends to Poiseuille's 12 mu / w^2.
    """
    w = _check_positive(width, "width")
    L = _check_positive(length, "length")
    d = _check_positive(depth, "depth")

    def sections(f: Floats) -> ap.Matrix:
        kc, zeta = ap.slit_viscothermal(f, w, rho0=rho0, c0=c0)
        return ap.channel_matrix(kc, zeta, d)

    return _tmm_leak("slit", w, L, "crack", label, [], sections, points, c0)
