"""Aperture-cavity-aperture paths: an opening in face A joined to an opening in face B through the cavity.

A gap, box or penetration in one face of a cavity wall opens into the cavity, not into the next
room. Sound that enters the cavity through it spreads in the cavity, is absorbed by the fill, and
leaves through an opening in the other face (or excites the other leaf, which the leaf model of
:mod:`acoustics.wall_model` covers). This module gives the coupling of two such openings:

    A_pq = a_p a_q X_pq   (m^2 per band),

a_p, a_q the diffuse-field transmission areas of the two openings (m^2, :mod:`acoustics.leaks`) and
X_pq (1/m^2) the cavity's coupling, the sum of two energy-balance terms:

- **reverberant** (statistical energy analysis, the cavity as a subsystem between the rooms, the
  openings as non-resonant couplings [1]_ [2]_): the power a_p I_1 fed into the cavity builds a
  diffuse field whose incident intensity on the cavity faces is a_p I_1 / A_c, A_c = 2 alpha S_c the
  absorption area of the cavity region the energy spreads over (a stud bay, or the whole wall when
  nothing divides the cavity); the far opening passes a_q of it: X_rev = 1 / (2 alpha S_c).
- **direct** (the field of the source opening before its first reflection): the opening radiates
  into a layer of depth d; at the far opening, at lateral distance r (r_e = sqrt(r^2 + d^2)), the
  intensity is W e^{-2 kappa r_e} / Sigma(r_e) with Sigma = 2 pi r_e d (cylindrical spreading in the
  layer; hemispherical, 2 pi d^2, facing), capped at 2 b d in a bay of width b (plane spreading
  along the bay); kappa is the amplitude attenuation of the fill (Delany-Bazley [3]_, weighted by the
  filled fraction of the depth) or of the bare cavity. The far opening's blocked pressure is the
  layer pressure at grazing arrival and twice it at normal arrival; with the diffuse-field
  transmission area this gives the factor g = (1 + 3 cos^2 theta) / 8, cos theta = d / r_e
  (blocked-pressure argument of the method notes Section 6.4, derived). Two parallel line openings
  (slits along the same edge) spread in two dimensions: X = (L_o / (L_p L_q)) g e^{-2 kappa s} / (pi s).

Everything here is derived in this project from the cited frames; it carries the validity flag
"cavity_path_derived" wherever it is used. Craik [1]_ notes that the standard SEA estimate
underestimates room-cavity coupling; the direct term is this module's answer to that, not Craik's.

References
----------
.. [1] Craik, R. J. M. (2003) "Non-resonant sound transmission through double walls using
   statistical energy analysis", Applied Acoustics 64(3), 325-341.
.. [2] Craik, R. J. M. (1996) *Sound Transmission through Buildings using Statistical Energy
   Analysis*, Gower.
.. [3] Delany, M. E. & Bazley, E. N. (1970) Applied Acoustics 3(2), 105-116.
.. [4] Sealwalk acoustics method notes, Sections 5.3, 6.4 and 7.5.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

import numpy as np
import numpy.typing as npt

from . import apertures as ap
from .assembly import Assembly
from .bands import exact_centres
from .constants import C0, RHO0

Floats = npt.NDArray[np.float64]

__all__ = ["CavityGeometry", "Port", "BAY_TYPES", "direct_coupling", "line_coupling", "pair_coupling"]

#: Connections whose studs divide the cavity into bays (sound in one bay stays there).
BAY_TYPES = ("wood_stud", "steel_stud", "furring")
#: Channel depth added to the cavity, m (as :mod:`acoustics.walls`).
_CHANNEL_DEPTH = 0.0127
_F = exact_centres()
#: Bare stud-cavity absorption coefficient, gypsum board on studs (classic handbook table, from memory;
#: the value the wall prediction uses).
BARE_ALPHA = 0.04


@dataclass(frozen=True)
class CavityGeometry:
    """The cavity between the two leaves as the openings see it.

    Attributes
    ----------
    depth : float
        Air-space depth d between the leaves, m.
    fill_thickness : float
        Porous fill thickness, m (0 = empty).
    flow_resistivity : float
        Fill airflow resistivity sigma, Pa s/m^2.
    bay_width : float or None
        Stud spacing when studs divide the cavity into bays, m; None for an open cavity
        (double studs, staggered studs, no studs).
    height : float
        Wall height, m (a bay's length).
    area : float
        Wall area, m^2.
    """

    depth: float
    fill_thickness: float
    flow_resistivity: float
    bay_width: float | None
    height: float
    area: float

    @classmethod
    def from_assembly(cls, asm: Assembly, area: float, height: float) -> CavityGeometry:
        """Geometry of a two-leaf assembly's cavity (channel depth added as in :mod:`acoustics.walls`)."""
        cav = asm.gap
        c = asm.connection
        depth = cav.depth + (_CHANNEL_DEPTH if c.channel_leaf is not None else 0.0)
        bay = c.spacing if c.type in BAY_TYPES and c.spacing else None
        return cls(depth, cav.absorber_thickness, cav.flow_resistivity, bay, height, area)

    @property
    def filled(self) -> bool:
        return self.fill_thickness > 0

    def with_fill(self, thickness: float) -> CavityGeometry:
        """The same cavity with another fill thickness (e.g. fill cut away around a pipe)."""
        return CavityGeometry(
            self.depth, thickness, self.flow_resistivity, self.bay_width, self.height, self.area
        )

    def alpha(self) -> Floats:
        """Absorption coefficient of the cavity faces per band: max(bare cavity, rigidly backed fill).

        Notes
        -----
        Fill layer of thickness t: Z = -j zeta cot(k_c t) (Delany-Bazley [3]_),
        alpha = 1 - |(Z - 1)/(Z + 1)|^2 (normal incidence); the same form as the wall prediction's
        cavity absorption.
        """
        return _alpha(self)  # one wall's model asks for it once per pair of openings: computed once

    def kappa(self) -> Floats:
        """Amplitude attenuation along the cavity per band, Np/m.

        Notes
        -----
        Fill: -Im k_c of Delany-Bazley [3]_ times the filled fraction of the depth (derived);
        bare: kappa = eta k / 2 with the cavity loss factor eta = alpha / (2 k d), i.e. alpha / (4 d).
        The larger of the two.
        """
        return _kappa(self)

    def reverberant(self, same_bay: bool) -> Floats:
        """X_rev = 1 / (2 alpha S_c) per band, 1/m^2 (S_c a bay when ``same_bay`` and bays exist)."""
        s_c = self.bay_width * self.height if (same_bay and self.bay_width) else self.area
        return 1.0 / (2.0 * self.alpha() * s_c)


def _frozen(a: Floats) -> Floats:
    a.setflags(write=False)  # shared by every caller of the cache below
    return a


@lru_cache(maxsize=256)
def _alpha(geom: CavityGeometry) -> Floats:
    if not geom.filled:
        return _frozen(np.full(_F.size, BARE_ALPHA))
    kc, zeta, _ = ap.delany_bazley(_F, geom.flow_resistivity, rho0=RHO0, c0=C0)
    z = -1j * zeta / np.tan(kc * geom.fill_thickness)
    return _frozen(np.maximum(BARE_ALPHA, 1.0 - np.abs((z - 1.0) / (z + 1.0)) ** 2))


@lru_cache(maxsize=256)
def _kappa(geom: CavityGeometry) -> Floats:
    bare = _alpha(geom) / (4.0 * geom.depth)
    if not geom.filled:
        return _frozen(bare)
    kc, _, _ = ap.delany_bazley(_F, geom.flow_resistivity, rho0=RHO0, c0=C0)
    frac = min(geom.fill_thickness / geom.depth, 1.0)
    return _frozen(np.maximum(bare, -kc.imag * frac))


@dataclass(frozen=True)
class Port:
    """An opening of a finding into the cavity from one face.

    Attributes
    ----------
    face : int
        0 = face A, 1 = face B.
    area : ndarray, shape (21,)
        Diffuse-field transmission area of the opening, m^2.
    x : float or None
        Position along the wall, m (None = not recorded).
    length : float
        Length of a line opening (a slit), m; 0 for a compact opening.
    edge : str or None
        "bottom", "head" or "side" for a gap along an edge of the wall.
    """

    face: int
    area: Floats
    x: float | None = None
    length: float = 0.0
    edge: str | None = None


def _g(cos: Floats | float) -> Floats | float:
    return (1.0 + 3.0 * np.square(cos)) / 8.0


def direct_coupling(
    geom: CavityGeometry, r: float, *, same_bay: bool = True, kappa: Floats | None = None
) -> Floats:
    """Direct-field coupling X_dir of two compact openings r m apart along the cavity, 1/m^2 per band.

    X_dir = g e^{-2 kappa r_e} / Sigma(r_e), r_e = sqrt(r^2 + d^2), Sigma = 2 pi r_e d, capped at
    2 b d inside a bay (module notes). Openings in different bays of a stud wall: 0 (the stud
    blocks the direct field; the reverberant term remains).
    """
    if geom.bay_width and not same_bay:
        return np.zeros(_F.size)
    d = geom.depth
    re = float(np.hypot(r, d))
    spread = 2.0 * np.pi * re * d
    if geom.bay_width:
        spread = min(spread, 2.0 * geom.bay_width * d)
    k = geom.kappa() if kappa is None else kappa
    return _g(d / re) * np.exp(-2.0 * k * re) / spread


def line_coupling(
    geom: CavityGeometry, overlap: float, length_p: float, length_q: float, *, kappa: Floats | None = None
) -> Floats:
    """Direct coupling of two parallel line openings facing across the cavity, 1/m^2 per band.

    X = (L_o / (L_p L_q)) g e^{-2 kappa d} / (pi d) (two-dimensional spreading from a line, facing).
    """
    if overlap <= 0:
        return np.zeros(_F.size)
    d = geom.depth
    k = geom.kappa() if kappa is None else kappa
    return overlap / (length_p * length_q) * _g(1.0) * np.exp(-2.0 * k * d) / (np.pi * d)


def _overlap(p: Port, q: Port) -> float:
    if p.x is None or q.x is None:
        return min(p.length, q.length)
    lo = max(p.x, q.x)
    hi = min(p.x + p.length, q.x + q.length)
    return max(hi - lo, 0.0)


def pair_coupling(
    geom: CavityGeometry, p: Port, q: Port, *, same_bay: bool | None = None
) -> tuple[Floats, str]:
    """Coupling X_pq (1/m^2 per band) of two openings on opposite faces and how it was taken.

    Parameters
    ----------
    same_bay : bool, optional
        Whether both openings are in one stud bay; default: when both positions are recorded and
        closer than one stud spacing (assumed), else False.

    Returns
    -------
    X : ndarray, shape (21,)
    how : str
        "line" (two slits along one edge), "direct" (positions known), "reverberant" (positions
        unknown: whole-cavity energy balance only).
    """
    if p.face == q.face:
        return np.zeros(_F.size), "same face"
    if p.length > 0 and q.length > 0 and p.edge is not None and p.edge == q.edge:
        ov = _overlap(p, q)
        return geom.reverberant(False) + line_coupling(geom, ov, p.length, q.length), "line"
    if p.x is None or q.x is None:
        if same_bay:
            return geom.reverberant(True) + direct_coupling(geom, 0.0), "direct"
        return geom.reverberant(False), "reverberant"
    r = abs(p.x - q.x)
    if same_bay is None:
        same_bay = geom.bay_width is None or r < geom.bay_width
    return geom.reverberant(same_bay) + direct_coupling(geom, r, same_bay=same_bay), "direct"
