"""Transmission loss of walls predicted from their construction (laboratory-type values).

A wall is one leaf (a board stack, a masonry core) or two leaves on a cavity
joined by studs, channels or nothing. Each design strategy is an explicit
input: **mass** (the layers), **cavity depth**, **absorption** (a porous fill),
**decoupling** (the connection type, resilient channel), **damping** (a
material's loss factor, or ``loss_factor`` on a leaf) and **sealing** (the
perimeter). Use :func:`predict` for the full result (per-leaf TL, cavity and
stud paths, f0, f_l) and :func:`predict_tl` for the web app's (21,) curve.

Spec format (JSON-like; :meth:`Assembly.from_dict`)::

    {
      "area": 10.0,            # m^2, wall area S (finite-size correction); default 10 (ISO lab opening)
      "height": 2.7,           # m, default 2.7 (staggered studs couple through the two plate lines)
      "leaves": [              # face A first, then face B; one leaf = single-leaf wall
        {"layers": ["gypsum_15.9_x"]},
        {"layers": [{"material": "gypsum_15.9_x", "count": 2}], "loss_factor": 0.05}
      ],
      "cavity": {"depth": 0.092,                      # m, stud depth (channel depth is added)
                 "absorber": {"thickness": 0.089,     # m, porous fill (0 or absent = empty)
                              "flow_resistivity": 10000}},   # Pa s/m^2
      "connection": {"type": "wood_stud",             # none | wood_stud | steel_stud | staggered_studs
                                                      # | double_studs | furring | points
                     "spacing": 0.406,                # m, stud/furring centres or point grid
                     "stiffness": null,               # N/m per m (lines) or N/m per point; null = rigid
                     "resilient_channel": {"leaf": 1, "spacing": 0.61, "stiffness": 1.5e5}},
      "sealing": {"perimeter": "sealed"}              # or {"perimeter": "unsealed", "gap_width": 0.003}
    }

A layer is a material key of :data:`acoustics.materials.MATERIALS` or a dict
``{"material": key, "thickness": m, "count": n}``. Layers of one leaf are
screwed, not glued: masses and bending stiffnesses add (fc of the stack stays
that of its stiffest sheet for identical sheets).

Notes
-----
Single leaf (Sharp's method as given by Bies [1]_ Eq. 7.40-7.44): field mass
law TL_0 - 5.5 below fc/2, at low frequency the finite-panel (Sewell) value
when it is higher [2]_; above fc TL_0 + 10 lg(2 eta f / (pi fc)); a straight
line in lg f between. Heavy mortared leaves get the laboratory edge loss
eta += m/(485 sqrt f) (EN 12354-1 Annex C, from memory).

Double leaf, cavity path (Sharp/Bies Eq. 7.62-7.64): f0 = (1/2pi) sqrt(s''(m1+m2)/(m1 m2)),
s'' = rho0 c0^2 / (d + 0.4 t) for a fill of thickness t (isothermal fill, bulk
modulus / 1.4; derived) plus the spring stiffness of resilient mounts per
unit area (Hopkins Eq. 4.89); TL_M below f0, TL1 + TL2 + 20 lg(2kd) up to
f_l = c0/(2 pi d), TL1 + TL2 + 6 above. Sharp's branches assume an absorbing
cavity; a poorly absorbing cavity is limited by a diffuse-cavity energy
balance tau >= tau1 tau2 / (4 alpha) (derived; equal to Sharp's top branch
at alpha = 1), alpha the larger of the bare-cavity absorption and the fill's
absorption (Delany-Bazley, rigidly backed layer).

Stud path (Sharp's model as presented by Vigran [3]_ Eq. 8.19-8.26):
tau_B = tau_M 10^(-dR/10); line: dR = 10 lg(b f_c,line) - 23, point:
dR = 20 lg(a f_g) - 45. Elastic connections (steel studs, resilient channel)
reduce tau_B by |Y1 + Y2|^2 / |Y1 + Y2 + Y_s|^2 (plate mobilities Y_i, spring
mobility Y_s = j omega / k; capped at 1 — derived, after Davy's compliance
idea [4]_). Above coincidence the stud path follows the leaves' coincidence
dip (derived). Total tau = tau_cavity + tau_B; tau is averaged over each
third octave (8 points).

References
----------
.. [1] Bies, Hansen & Howard (2017) *Engineering Noise Control* 5th ed., Eq. 7.40, 7.42, 7.44, 7.62-7.64 [TR].
.. [2] Sewell, E. C. (1970) J. Sound Vib. 12 (formula from memory, checked against ISO 15186-3 Table A.1).
.. [3] Vigran, T. E. (2008) *Building Acoustics*, Taylor & Francis, pp. 292-294, Eq. 8.19-8.26.
.. [4] Davy, J. L. (2012) JASA 132(2), 814-821 (compliant connections; cited from memory).
.. [5] Hopkins, C. (2007) *Sound Insulation*, Eq. 4.72 and 4.89.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from . import apertures as ap
from .bands import sub_band_frequencies
from .constants import C0, RHO0
from .errors import AcousticsError
from .materials import Material, get_material

__all__ = [
    "WallSpecError",
    "Leaf",
    "Cavity",
    "Connection",
    "Assembly",
    "Prediction",
    "mass_law",
    "finite_size_tau",
    "single_leaf_tl",
    "resonance_frequency",
    "cavity_absorption",
    "cavity_path_tl",
    "predict",
    "predict_tl",
    "CONNECTION_TYPES",
]

#: Field-incidence correction for one-third-octave bands, dB (Bies Eq. 7.42 [TR]).
FIELD_CORRECTION = 5.5
#: Default lab wall area, m^2 (ISO 10140 openings are about 10 m^2).
DEFAULT_AREA = 10.0
#: Sub-band points per third octave for tau averaging.
POINTS = 8
#: Bare stud-cavity absorption coefficient, gypsum board on studs, at 125...4000 Hz (octaves)
#: (classic handbook table, from memory).
_BARE_ALPHA = (np.array([125.0, 250, 500, 1000, 2000, 4000]), np.array([0.04, 0.04, 0.04, 0.04, 0.04, 0.04]))
#: Default spring stiffness of a light-gauge (0.5 mm) steel stud across the cavity, N/m per m of stud.
#: Order of magnitude from memory (published values span about 1e5-1e7); see DEVELOPERS notes.
STEEL_STUD_STIFFNESS = 1.0e6
#: Default stiffness of a resilient channel at one screw crossing, N/m (from memory, order of magnitude;
#: gives a board-on-channel resonance near 40 Hz for 8.5 kg/m^2 board).
CHANNEL_STIFFNESS = 1.5e5
#: Depth a resilient channel adds to the cavity, m (1/2 in channel).
CHANNEL_DEPTH = 0.0127
CONNECTION_TYPES = ("none", "wood_stud", "steel_stud", "staggered_studs", "double_studs", "furring", "points")
_DEFAULT_SPACING = {"wood_stud": 0.406, "steel_stud": 0.61, "furring": 0.61, "points": 0.6}


class WallSpecError(AcousticsError):
    """A wall spec is malformed; the message names the field and the rule."""


def _num(d: dict, key: str, default: Any, lo: float, hi: float, where: str) -> Any:
    v = d.get(key, default)
    if v is None:
        return None
    try:
        v = float(v)
    except (TypeError, ValueError):
        raise WallSpecError(f"{where}.{key} must be a number, got {v!r}") from None
    if not np.isfinite(v) or not lo <= v <= hi:
        raise WallSpecError(f"{where}.{key} must be between {lo:g} and {hi:g}, got {v!r}")
    return v


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
        raise WallSpecError(f"incidence must be 'field' or 'normal', got {incidence!r}")
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


def single_leaf_tl(
    f: Any, m: float, fc: float, eta: Any, *, area: float | None = None, c0: float = C0, rho0: float = RHO0
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

    Notes
    -----
    f <= fc/2: limp panel (field mass law, or Sewell's finite panel where higher);
    f >= fc: TL_0 + 10 lg(2 eta f / (pi fc)) (Bies Eq. 7.44), never above the limp value;
    between: straight line in lg f.
    """
    f = np.asarray(f, float)
    eta = np.broadcast_to(np.asarray(eta, float), f.shape)
    lo = -10 * np.log10(_limp_tau(f, m, area, c0, rho0))

    def above(ff: np.ndarray, ee: np.ndarray) -> np.ndarray:
        return mass_law(ff, m, incidence="normal", c0=c0, rho0=rho0) + 10 * np.log10(
            2 * ee * ff / (np.pi * fc)
        )

    tl = np.where(f <= fc / 2, lo, np.minimum(above(f, eta), lo))
    mid = (f > fc / 2) & (f < fc)
    if np.any(mid):
        fa = np.full(f.shape, fc / 2)
        t_lo = -10 * np.log10(_limp_tau(fa, m, area, c0, rho0))
        t_hi = above(np.full(f.shape, float(fc)), eta)
        x = np.log10(f / (fc / 2)) / np.log10(2.0)
        tl = np.where(mid, t_lo + x * (t_hi - t_lo), tl)
    return tl


# ---------------------------------------------------------------- assembly description
@dataclass(frozen=True)
class Leaf:
    """One leaf: screwed layers (masses and bending stiffnesses add), optional loss factor override."""

    layers: tuple[Material, ...]
    loss_factor: float | None = None

    @property
    def m(self) -> float:
        """Surface density, kg/m^2."""
        return float(sum(x.surface_density for x in self.layers))

    @property
    def stiffness(self) -> float:
        """Bending stiffness per unit width B, N m (sum over unbonded layers)."""
        return float(sum(x.bending_stiffness for x in self.layers))

    @property
    def fc(self) -> float:
        """Critical frequency, Hz."""
        return float(C0**2 / (2 * np.pi) * np.sqrt(self.m / self.stiffness))

    @property
    def thickness(self) -> float:
        """Total thickness, m."""
        return float(sum(x.thickness for x in self.layers))

    def eta(self, f: Any) -> np.ndarray:
        """Total loss factor at f: stiffness-weighted layer values, plus edge losses for masonry."""
        f = np.asarray(f, float)
        if self.loss_factor is not None:
            base = self.loss_factor
        else:
            base = sum(x.loss_factor * x.bending_stiffness for x in self.layers) / self.stiffness
        if any(x.edge_losses for x in self.layers):
            return base + self.m / (485.0 * np.sqrt(f))
        return np.full(f.shape, base)

    def tl(self, f: Any, area: float | None = None) -> np.ndarray:
        """Single-leaf TL at f, dB."""
        return single_leaf_tl(f, self.m, self.fc, self.eta(f), area=area)

    def to_dict(self) -> dict[str, Any]:
        return {
            "layers": [{"material": x.key, "thickness": x.thickness} for x in self.layers],
            "loss_factor": self.loss_factor,
        }


@dataclass(frozen=True)
class Cavity:
    """Air space between two leaves: depth d (m) and porous fill thickness (m) and flow resistivity."""

    depth: float
    absorber_thickness: float = 0.0
    flow_resistivity: float = 10000.0

    @property
    def fill_fraction(self) -> float:
        return min(self.absorber_thickness / self.depth, 1.0) if self.depth > 0 else 0.0


@dataclass(frozen=True)
class Connection:
    """How the leaves are tied: type, spacing (m), stiffness (None = rigid) and resilient channel."""

    type: str = "none"
    spacing: float | None = None
    stiffness: float | None = None
    channel_leaf: int | None = None
    channel_spacing: float = 0.61
    channel_stiffness: float = CHANNEL_STIFFNESS


@dataclass(frozen=True)
class Assembly:
    """A wall: one or two leaves, cavity, connection, area, height and perimeter sealing."""

    leaves: tuple[Leaf, ...]
    cavity: Cavity | None = None
    connection: Connection = field(default_factory=Connection)
    area: float = DEFAULT_AREA
    height: float = 2.7
    perimeter_gap: float = 0.0

    @classmethod
    def from_dict(cls, spec: dict[str, Any]) -> Assembly:
        """Build and validate an assembly from the JSON-like spec of the module docstring."""
        if not isinstance(spec, dict):
            raise WallSpecError(f"wall spec must be a mapping, got {type(spec).__name__}")
        area = _num(spec, "area", DEFAULT_AREA, 0.5, 1000.0, "spec")
        height = _num(spec, "height", 2.7, 0.5, 30.0, "spec")
        raw = spec.get("leaves")
        if not isinstance(raw, (list, tuple)) or len(raw) not in (1, 2):
            raise WallSpecError("spec.leaves must be a list of 1 or 2 leaves")
        leaves = tuple(_leaf(x, f"leaves[{i}]") for i, x in enumerate(raw))
        cav_raw = spec.get("cavity")
        cavity = None
        if len(leaves) == 2:
            if not isinstance(cav_raw, dict):
                raise WallSpecError("spec.cavity is required (with depth in m) for a two-leaf wall")
            depth = _num(cav_raw, "depth", None, 0.005, 1.0, "cavity")
            if depth is None:
                raise WallSpecError("cavity.depth is required, m")
            ab = cav_raw.get("absorber") or {}
            if not isinstance(ab, dict):
                raise WallSpecError("cavity.absorber must be a mapping or null")
            t = _num(ab, "thickness", 0.0, 0.0, 1.0, "cavity.absorber")
            sig = _num(ab, "flow_resistivity", 10000.0, 1000.0, 200000.0, "cavity.absorber")
            cavity = Cavity(depth, min(t, depth), sig)
        elif cav_raw:
            raise WallSpecError("spec.cavity needs two leaves; a single-leaf wall has no cavity")
        conn = _connection(spec.get("connection") or {}, len(leaves))
        seal = spec.get("sealing") or {"perimeter": "sealed"}
        if not isinstance(seal, dict) or seal.get("perimeter", "sealed") not in ("sealed", "unsealed"):
            raise WallSpecError("sealing.perimeter must be 'sealed' or 'unsealed'")
        gap = 0.0
        if seal.get("perimeter") == "unsealed":
            gap = _num(seal, "gap_width", 0.003, 0.0002, 0.05, "sealing")
        return cls(leaves, cavity, conn, area, height, gap)

    def to_dict(self) -> dict[str, Any]:
        """The normalised spec (round-trips through :meth:`from_dict`)."""
        c = self.connection
        out: dict[str, Any] = {
            "area": self.area,
            "height": self.height,
            "leaves": [lf.to_dict() for lf in self.leaves],
        }
        if self.cavity:
            out["cavity"] = {
                "depth": self.cavity.depth,
                "absorber": {
                    "thickness": self.cavity.absorber_thickness,
                    "flow_resistivity": self.cavity.flow_resistivity,
                },
            }
        conn: dict[str, Any] = {"type": c.type, "spacing": c.spacing, "stiffness": c.stiffness}
        if c.channel_leaf is not None:
            conn["resilient_channel"] = {
                "leaf": c.channel_leaf,
                "spacing": c.channel_spacing,
                "stiffness": c.channel_stiffness,
            }
        out["connection"] = conn
        out["sealing"] = (
            {"perimeter": "unsealed", "gap_width": self.perimeter_gap}
            if self.perimeter_gap
            else {"perimeter": "sealed"}
        )
        return out


def _leaf(raw: Any, where: str) -> Leaf:
    if not isinstance(raw, dict) or not isinstance(raw.get("layers"), (list, tuple)) or not raw["layers"]:
        raise WallSpecError(f"{where} must be a mapping with a non-empty 'layers' list")
    mats: list[Material] = []
    for j, lay in enumerate(raw["layers"]):
        w = f"{where}.layers[{j}]"
        if isinstance(lay, str):
            lay = {"material": lay}
        if not isinstance(lay, dict) or "material" not in lay:
            raise WallSpecError(f"{w} must be a material key or a mapping with 'material'")
        count = lay.get("count", 1)
        if not isinstance(count, int) or isinstance(count, bool) or not 1 <= count <= 6:
            raise WallSpecError(f"{w}.count must be a whole number 1-6, got {count!r}")
        try:
            mat = get_material(lay["material"], _num(lay, "thickness", None, 0.001, 1.0, w))
        except AcousticsError as exc:
            raise WallSpecError(f"{w}: {exc}") from None
        mats.extend([mat] * count)
    eta = _num(raw, "loss_factor", None, 1e-4, 1.0, where)
    return Leaf(tuple(mats), eta)


def _connection(raw: dict, n_leaves: int) -> Connection:
    if not isinstance(raw, dict):
        raise WallSpecError("spec.connection must be a mapping")
    kind = raw.get("type", "none" if n_leaves == 2 else "none")
    if kind not in CONNECTION_TYPES:
        raise WallSpecError(f"connection.type must be one of {', '.join(CONNECTION_TYPES)}, got {kind!r}")
    if n_leaves == 1 and kind != "none":
        raise WallSpecError("connection.type must be 'none' for a single-leaf wall")
    spacing = _num(raw, "spacing", _DEFAULT_SPACING.get(kind), 0.1, 3.0, "connection")
    default_k = STEEL_STUD_STIFFNESS if kind == "steel_stud" else None
    stiffness = _num(raw, "stiffness", default_k, 1e3, 1e12, "connection")
    rc = raw.get("resilient_channel")
    if rc is None:
        return Connection(kind, spacing, stiffness)
    if not isinstance(rc, dict) or rc.get("leaf") not in (0, 1) or n_leaves != 2:
        raise WallSpecError("connection.resilient_channel needs 'leaf': 0 or 1 on a two-leaf wall")
    if kind not in ("wood_stud", "steel_stud", "furring"):
        raise WallSpecError(
            "connection.resilient_channel needs studs or furring (wood_stud, steel_stud, furring)"
        )
    return Connection(
        kind,
        spacing,
        stiffness,
        int(rc["leaf"]),
        _num(rc, "spacing", 0.61, 0.2, 1.5, "resilient_channel"),
        _num(rc, "stiffness", CHANNEL_STIFFNESS, 1e3, 1e9, "resilient_channel"),
    )


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


def cavity_absorption(f: Any, cavity: Cavity, *, c0: float = C0, rho0: float = RHO0) -> np.ndarray:
    """Absorption coefficient seen by the cavity field: max(bare cavity, rigidly backed fill layer).

    Notes
    -----
    Fill: Z = -j zeta cot(k_c t) (Delany-Bazley k_c, zeta),
    alpha = 1 - |(Z - 1)/(Z + 1)|^2 (normal incidence).
    """
    f = np.asarray(f, float)
    bare = np.interp(np.log10(f), np.log10(_BARE_ALPHA[0]), _BARE_ALPHA[1])
    t = cavity.absorber_thickness
    if t <= 0:
        return bare
    kc, zeta, _ = ap.delany_bazley(f, cavity.flow_resistivity, rho0=rho0, c0=c0)
    z = -1j * zeta / np.tan(kc * t)
    alpha = 1 - np.abs((z - 1) / (z + 1)) ** 2
    return np.maximum(bare, alpha)


def cavity_path_tl(
    f: Any, tl1: Any, tl2: Any, tl_m: Any, f0: float, depth: float, alpha: Any = None, *, c0: float = C0
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

    Notes
    -----
    TL = TL_M (f <= f0); TL1 + TL2 + 20 lg(2kd) (f0 < f < f_l); TL1 + TL2 + 6 (f >= f_l = c0/(2 pi d));
    with ``alpha``: tau >= tau1 tau2 / (4 alpha) (diffuse cavity, derived).
    """
    f = np.asarray(f, float)
    t12 = 10 ** (-(np.asarray(tl1, float) + np.asarray(tl2, float)) / 10)
    k = 2 * np.pi * f / c0
    fl = c0 / (2 * np.pi * depth)
    tau = np.where(f < fl, t12 / (2 * k * depth) ** 2, t12 / 4)
    if alpha is not None:
        tau = np.maximum(tau, t12 / (4 * np.asarray(alpha, float)))
    return np.where(f <= f0, np.asarray(tl_m, float), -10 * np.log10(tau))


def _line_mobility(f: np.ndarray, leaf: Leaf) -> np.ndarray:
    w = 2 * np.pi * f
    cb = (w**2 * leaf.stiffness / leaf.m) ** 0.25
    return (1 - 1j) / (4 * leaf.m * cb)


def _compliance(y1: np.ndarray, y2: np.ndarray, f: np.ndarray, k: float | None) -> np.ndarray:
    if k is None:
        return np.ones_like(f)
    ys = 1j * 2 * np.pi * f / (k * (1 + 0.1j))
    return np.minimum(1.0, np.abs(y1 + y2) ** 2 / np.abs(y1 + y2 + ys) ** 2)


def _bridge_tau(asm: Assembly, f: np.ndarray, tau_m: np.ndarray, dip: np.ndarray) -> np.ndarray:
    """Stud/point path tau (Vigran Eq. 8.20-8.26 with compliance), zero for decoupled leaves."""
    a, b = asm.leaves
    c = asm.connection
    m1, m2, fc1, fc2 = a.m, b.m, a.fc, b.fc
    if c.type in ("none", "double_studs") or (c.type == "points" and c.spacing is None):
        return np.zeros_like(f)
    if c.channel_leaf is not None or c.type == "points":
        grid = (c.channel_spacing * c.spacing) if c.channel_leaf is not None else c.spacing**2
        fg = (m1 * fc2 + m2 * fc1) / (m1 + m2)
        dr = max(0.0, 20 * np.log10(np.sqrt(grid) * fg) - 45)
        y1 = np.full(f.shape, 1 / (8 * np.sqrt(a.stiffness * m1)), complex)
        y2 = np.full(f.shape, 1 / (8 * np.sqrt(b.stiffness * m2)), complex)
        if c.channel_leaf is not None:
            k = c.channel_stiffness
            if c.stiffness is not None:  # channel on a steel stud: springs in series (stud per point)
                k = 1 / (1 / k + 1 / (c.stiffness * c.channel_spacing))
        else:
            k = c.stiffness
        comp = _compliance(y1, y2, f, k)
    else:
        spacing = asm.height / 2 if c.type == "staggered_studs" else c.spacing
        fcl = ((m1 * np.sqrt(fc2) + m2 * np.sqrt(fc1)) / (m1 + m2)) ** 2
        dr = max(0.0, 10 * np.log10(spacing * fcl) - 23)
        comp = _compliance(_line_mobility(f, a), _line_mobility(f, b), f, c.stiffness)
    # Below fc/2 Sharp's bridge term; from fc up the rigidly tied leaves radiate as one panel of mass
    # m1 + m2 (resonant radiation, sigma ~ 1), so the bridge gain fades: straight line in lg f between.
    fcb = min(fc1, fc2)
    x = np.clip(np.log2(f / (fcb / 2)), 0.0, 1.0) if c.type != "staggered_studs" else 0.0
    tl_b = -10 * np.log10(tau_m) + dr * (1 - x) - dip
    return 10 ** (-tl_b / 10) * comp


def _spring_per_area(c: Connection) -> float:
    if c.channel_leaf is not None:
        return c.channel_stiffness / (c.channel_spacing * c.spacing)
    if c.stiffness is None or c.type in ("none", "double_studs", "staggered_studs"):
        return 0.0
    return c.stiffness / (c.spacing if c.type != "points" else c.spacing**2)


def _depth(asm: Assembly) -> float:
    return asm.cavity.depth + (CHANNEL_DEPTH if asm.connection.channel_leaf is not None else 0.0)


def _paths(asm: Assembly, f: np.ndarray, extra: tuple[Any, Any] = (0.0, 0.0)) -> dict[str, Any]:
    """tau of every path at frequencies f; ``extra`` adds (21,)-band tau to each leaf (one-face leaks)."""
    S = asm.area
    leaf_tau = [10 ** (-lf.tl(f, S) / 10) for lf in asm.leaves]
    leaf_tau = [
        t + np.asarray(e, float).reshape(-1, *([1] * (f.ndim - 1))) if np.ndim(e) else t + e
        for t, e in zip(leaf_tau, extra[: len(leaf_tau)], strict=True)
    ]
    out: dict[str, Any] = {"leaf_tau": leaf_tau}
    if len(asm.leaves) == 1:
        out["cavity"] = leaf_tau[0]
        out["bridge"] = np.zeros_like(f)
        out["f0"] = out["f_l"] = None
        return out
    a, b = asm.leaves
    d = _depth(asm)
    cav = asm.cavity
    f0 = resonance_frequency(
        a.m, b.m, d, fill_thickness=cav.absorber_thickness, spring_per_area=_spring_per_area(asm.connection)
    )
    fl = C0 / (2 * np.pi * d)
    tau_m = _limp_tau(f, a.m + b.m, S, C0, RHO0)
    tcav = 10 ** (
        -cavity_path_tl(
            f,
            -10 * np.log10(leaf_tau[0]),
            -10 * np.log10(leaf_tau[1]),
            -10 * np.log10(tau_m),
            f0,
            d,
            cavity_absorption(f, cav),
        )
        / 10
    )
    limp = [_limp_tau(f, lf.m, S, C0, RHO0) for lf in asm.leaves]
    dip = np.mean(
        [
            np.maximum(0, -10 * np.log10(lm) + 10 * np.log10(lt))
            for lm, lt in zip(limp, [10 ** (-lf.tl(f, S) / 10) for lf in asm.leaves], strict=True)
        ],
        axis=0,
    )
    out.update(cavity=tcav, bridge=_bridge_tau(asm, f, tau_m, dip), f0=f0, f_l=fl)
    return out


@dataclass(frozen=True)
class Prediction:
    """Predicted TL of an assembly on the 21 bands (laboratory-type, no flanking).

    Attributes: ``tl``, ``tau`` (21,); ``leaf_tl`` per leaf; ``cavity_tl`` and ``bridge_tl``
    (path TLs; bridge inf when decoupled); ``f0``, ``f_l``, ``fc`` (Hz); ``flags``; ``assembly``.
    """

    tl: np.ndarray
    tau: np.ndarray
    leaf_tl: tuple[np.ndarray, ...]
    cavity_tl: np.ndarray
    bridge_tl: np.ndarray
    f0: float | None
    f_l: float | None
    fc: tuple[float, ...]
    flags: tuple[str, ...]
    assembly: Assembly


def _band(x: np.ndarray) -> np.ndarray:
    return np.asarray(x, float).mean(axis=-1)


def _tl(tau: np.ndarray) -> np.ndarray:
    with np.errstate(divide="ignore"):
        return -10 * np.log10(tau)


def predict(spec: dict[str, Any] | Assembly) -> Prediction:
    """Predict the TL of a wall from its construction.

    Parameters
    ----------
    spec : dict or Assembly
        The JSON-like spec of the module docstring, or an :class:`Assembly`.

    Returns
    -------
    Prediction
        Band TL (dB), band-averaged tau of each path, f0/f_l/fc (Hz) and flags.
    """
    asm = spec if isinstance(spec, Assembly) else Assembly.from_dict(spec)
    f = sub_band_frequencies(POINTS)
    p = _paths(asm, f)
    tau = _band(p["cavity"] + p["bridge"])
    flags = ["predicted"]
    if asm.perimeter_gap:
        depth = sum(lf.thickness for lf in asm.leaves) + (_depth(asm) if asm.cavity else 0.0)
        length = 2 * (asm.area / asm.height + asm.height)
        slit = _band(ap.gomperts_slit_tau(f, asm.perimeter_gap, depth, edge=True))
        tau = tau + asm.perimeter_gap * length * slit / asm.area
        flags.append("perimeter_unsealed")
    if p["f0"] is not None:
        if p["f0"] > 125:
            flags.append("f0_in_rating_range")
        if p["f0"] >= p["f_l"]:
            flags.append("f0_above_f_l")
        if asm.cavity.absorber_thickness == 0:
            flags.append("cavity_empty")
    bridge = _band(p["bridge"])
    return Prediction(
        _tl(tau),
        tau,
        tuple(_tl(_band(t)) for t in p["leaf_tau"]),
        _tl(_band(p["cavity"])),
        _tl(bridge),
        p["f0"],
        p["f_l"],
        tuple(lf.fc for lf in asm.leaves),
        tuple(flags),
        asm,
    )


def predict_tl(layers_spec: dict[str, Any]) -> tuple[np.ndarray, tuple[str, ...]]:
    """(21,) TL in dB and flags for a stored wall-type spec (the web app's entry point)."""
    p = predict(layers_spec)
    return p.tl, p.flags
