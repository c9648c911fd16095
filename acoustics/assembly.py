"""Wall specs: the leaves, cavity and connection of a wall, parsed and validated from a JSON-like spec.

The wall's predicted TL is computed by :mod:`acoustics.walls` from these specs.

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
                     "resilient_channel": {"leaf": 1, "spacing": 0.61, "stiffness": 1.5e5,
                                           "shorted": 0.0}},   # share of crossings screwed into studs
      "sealing": {"perimeter": "sealed"}              # or {"perimeter": "unsealed", "gap_width": 0.003}
    }

A layer is a material key of :data:`acoustics.materials.MATERIALS` or a dict
``{"material": key, "thickness": m, "count": n}``. Layers of one leaf are
screwed, not glued: masses and bending stiffnesses add (fc of the stack stays
that of its stiffest sheet for identical sheets).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from .constants import C0
from .errors import AcousticsError
from .materials import Material, get_material
from .wall_physics import single_leaf_tl

__all__ = [
    "DEFAULT_AREA",
    "STEEL_STUD_STIFFNESS",
    "CHANNEL_STIFFNESS",
    "WallSpecError",
    "Leaf",
    "Cavity",
    "Connection",
    "Assembly",
    "CONNECTION_TYPES",
]

#: Default lab wall area, m^2 (ISO 10140 openings are about 10 m^2).
DEFAULT_AREA = 10.0
#: Default spring stiffness of a light-gauge (0.5 mm) steel stud across the cavity, N/m per m of stud.
#: Order of magnitude from memory (published values span about 1e5-1e7); see DEVELOPERS notes.
STEEL_STUD_STIFFNESS = 1.0e6
#: Default stiffness of a resilient channel at one screw crossing, N/m (from memory, order of magnitude;
#: gives a board-on-channel resonance near 40 Hz for 8.5 kg/m^2 board).
CHANNEL_STIFFNESS = 1.5e5
CONNECTION_TYPES = ("none", "wood_stud", "steel_stud", "staggered_studs", "double_studs", "furring", "points")
_DEFAULT_SPACING = {"wood_stud": 0.406, "steel_stud": 0.61, "furring": 0.61, "points": 0.6}


class WallSpecError(AcousticsError):
    """A wall spec is malformed; the message names the field and the rule."""


def _num(d: dict[str, Any], key: str, default: Any, lo: float, hi: float, where: str) -> Any:
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
            out: np.ndarray = base + self.m / (485.0 * np.sqrt(f))
            return out
        return np.full(f.shape, base)

    def tl(self, f: Any, area: float | None = None) -> np.ndarray:
        """Single-leaf TL at f, dB (Sharp/Bies method, :func:`acoustics.wall_physics.single_leaf_tl`)."""
        heavy = any(x.edge_losses for x in self.layers)
        return single_leaf_tl(f, self.m, self.fc, self.eta(f), area=area, radiation=heavy)

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
    #: Fraction of the channel-stud crossings where a screw goes through the channel into the stud (0-1):
    #: those crossings are rigid point ties (:func:`acoustics.structural.bridge_tau`).
    channel_shorted: float = 0.0


@dataclass(frozen=True)
class Assembly:
    """A wall: one or two leaves, cavity, connection, area, height and perimeter sealing."""

    leaves: tuple[Leaf, ...]
    cavity: Cavity | None = None
    connection: Connection = field(default_factory=Connection)
    area: float = DEFAULT_AREA
    height: float = 2.7
    perimeter_gap: float = 0.0

    @property
    def gap(self) -> Cavity:
        """The cavity of a two-leaf wall (a single leaf has none)."""
        if self.cavity is None:
            raise WallSpecError("a single-leaf wall has no cavity")
        return self.cavity

    @property
    def pitch(self) -> float:
        """Spacing of the studs, furring or point grid, m (0 where the connection has none)."""
        return 0.0 if self.connection.spacing is None else self.connection.spacing

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
                "shorted": c.channel_shorted,
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


def _connection(raw: dict[str, Any], n_leaves: int) -> Connection:
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
        _num(rc, "shorted", 0.0, 0.0, 1.0, "resilient_channel"),
    )
