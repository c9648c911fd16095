"""Material library for wall prediction: surface density, critical frequency, loss factor.

Each entry is a :class:`Material` for one board or slab as built, with the
source of every number. Values marked "from memory" were not read in a source
during the research behind this module; values tagged [TR] were read in a
transcription of the book or standard named (see the project's method notes,
sections 7.2 and 7.4). Layers of a wall refer to materials by key, e.g.
``"gypsum_15.9_x"``; a homogeneous material may be given another thickness,
which scales its surface density (m ~ h) and critical frequency (fc ~ 1/h).

The bending stiffness per unit width B follows from the critical frequency,

    fc = (c0**2 / 2 pi) sqrt(m / B)   <=>   B = m c0**4 / (4 pi**2 fc**2),

with c0 = 343 m/s, the speed of sound the h*fc products below were computed
with [1]_.

References
----------
.. [1] Hopkins, C. (2007) *Sound Insulation*, Butterworth-Heinemann, Table A2
   (h*fc products and longitudinal wave speeds) [TR].
.. [2] Norton, M. P. & Karczub, D. G. (2003) *Fundamentals of Noise and
   Vibration Analysis for Engineers*, 2nd ed., Table 3.1 (surface density per
   mm of thickness) [TR].
.. [3] ISO 12354-1:2017, Annex L (calcium silicate 1800 kg/m^3, c_L 2500 m/s,
   eta_int 0.010; concrete 2200 kg/m^3, eta_int 0.005) [TR].
.. [4] Gypsum Association GA-235-10, *Gypsum Board Typical Mechanical and
   Physical Properties*, effective stiffness EI of 1/2 in and 5/8 in board
   (220-580 and 440-1160 N m per m width).
.. [5] Bies, D. A., Hansen, C. H. & Howard, C. Q. (2017) *Engineering Noise
   Control*, 5th ed., Table 7.6 (plywood surface densities) [TR].
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from .constants import C0
from .errors import GeometryError

__all__ = [
    "Material",
    "MATERIALS",
    "get_material",
    "critical_frequency",
    "bending_stiffness",
]


def critical_frequency(surface_density: float, bending_stiffness: float, *, c0: float = C0) -> float:
    """Critical (coincidence) frequency of a thin plate, Hz.

    Parameters
    ----------
    surface_density : float
        m, kg/m^2 (> 0).
    bending_stiffness : float
        B per unit width, N m (> 0).
    c0 : float
        Speed of sound in air, m/s.

    Notes
    -----
    fc = (c0**2 / 2 pi) sqrt(m / B) (thin-plate theory; method notes 7.2).
    """
    if surface_density <= 0 or bending_stiffness <= 0:
        raise GeometryError("surface_density and bending_stiffness must be > 0 (kg/m^2, N m)")
    return float(c0**2 / (2.0 * np.pi) * np.sqrt(surface_density / bending_stiffness))


def bending_stiffness(surface_density: float, fc: float, *, c0: float = C0) -> float:
    """Bending stiffness per unit width B (N m) that gives critical frequency ``fc`` (Hz)."""
    if surface_density <= 0 or fc <= 0:
        raise GeometryError("surface_density and fc must be > 0 (kg/m^2, Hz)")
    return float(surface_density * c0**4 / (4.0 * np.pi**2 * fc**2))


@dataclass(frozen=True)
class Material:
    """One board or slab as built.

    Attributes
    ----------
    key : str
        Identifier used in wall specs.
    name : str
        Generic description.
    thickness : float
        h, m.
    surface_density : float
        m, kg/m^2.
    fc : float
        Critical frequency, Hz.
    loss_factor : float
        Total loss factor eta as mounted (internal plus typical mounting losses).
    edge_losses : bool
        If True the wall model adds the laboratory edge-loss term
        m / (485 sqrt f) to ``loss_factor`` (heavy, mortared elements).
    scalable : bool
        Homogeneous material whose thickness may be changed in a spec.
    source : str
        Where each number comes from.
    """

    key: str
    name: str
    thickness: float
    surface_density: float
    fc: float
    loss_factor: float
    edge_losses: bool = False
    scalable: bool = False
    source: str = ""

    @property
    def bending_stiffness(self) -> float:
        """B per unit width, N m (from ``fc`` and ``surface_density``)."""
        return bending_stiffness(self.surface_density, self.fc)

    def with_thickness(self, thickness: float) -> Material:
        """The same homogeneous material at another thickness (m ~ h, fc ~ 1/h)."""
        if not self.scalable:
            raise GeometryError(
                f"material {self.key!r} is a product of fixed thickness; thickness cannot be changed"
            )
        if not np.isfinite(thickness) or not 0.0003 <= thickness <= 1.0:
            raise GeometryError(f"thickness of {self.key!r} must be 0.0003-1.0 m, got {thickness!r}")
        ratio = thickness / self.thickness
        return replace(
            self, thickness=float(thickness), surface_density=self.surface_density * ratio, fc=self.fc / ratio
        )


_GYP_FC = (
    "fc from h*fc = 35.8 m Hz (gypsum board, c_L 1810 m/s; Hopkins Table A2 [TR]), "
    "inside the GA-235-10 EI range"
)
_GYP_ETA = "eta 0.03 including screw-fixing losses (from memory; board alone 0.01-0.03)"

MATERIALS: dict[str, Material] = {
    m.key: m
    for m in (
        Material(
            "gypsum_12.7",
            "gypsum board 12.7 mm (1/2 in), regular",
            0.0127,
            8.5,
            2819.0,
            0.03,
            source=f"m 8.5 kg/m^2 (from memory, 1.7-1.8 lb/ft^2); {_GYP_FC}; {_GYP_ETA}",
        ),
        Material(
            "gypsum_12.7_x",
            "gypsum board 12.7 mm (1/2 in), fire-rated Type X",
            0.0127,
            9.8,
            2819.0,
            0.03,
            source=f"m 9.8 kg/m^2 (from memory, about 2.0 lb/ft^2); {_GYP_FC}; {_GYP_ETA}",
        ),
        Material(
            "gypsum_15.9",
            "gypsum board 15.9 mm (5/8 in), regular",
            0.0159,
            10.3,
            2252.0,
            0.03,
            source=f"m 10.3 kg/m^2 (from memory); {_GYP_FC}; {_GYP_ETA}",
        ),
        Material(
            "gypsum_15.9_x",
            "gypsum board 15.9 mm (5/8 in), fire-rated Type X",
            0.0159,
            10.9,
            2252.0,
            0.03,
            source=f"m 10.9 kg/m^2 (from memory, as in check case C20); {_GYP_FC}; {_GYP_ETA}",
        ),
        Material(
            "damped_gypsum_12.7",
            "damped laminated gypsum board 12.7 mm (two sheets, viscoelastic core)",
            0.0127,
            11.0,
            5600.0,
            0.20,
            source="all from memory: m 11 kg/m^2; the faces bend nearly independently above a few "
            "hundred Hz, "
            "so fc is that of one 6.35 mm sheet (2 x 2819 Hz); eta 0.2 from the constrained core",
        ),
        Material(
            "plywood_12",
            "plywood 12 mm",
            0.012,
            6.84,
            1400.0,
            0.02,
            scalable=True,
            source="m 0.57 kg/m^2 per mm (Norton Table 3.1 [TR]); h*fc 16.8 m Hz (Hopkins Table A2 [TR]); "
            "eta 0.02 (from memory)",
        ),
        Material(
            "osb_11",
            "oriented strand board 11.1 mm (7/16 in)",
            0.0111,
            6.9,
            1800.0,
            0.02,
            scalable=True,
            source="all from memory: density 620 kg/m^3, h*fc about 20 m Hz, eta 0.02",
        ),
        Material(
            "concrete_150",
            "cast-in-place normal-weight concrete 150 mm",
            0.150,
            342.0,
            114.0,
            0.005,
            edge_losses=True,
            scalable=True,
            source="m 2.28 kg/m^2 per mm (Norton Table 3.1 [TR]); h*fc 17.1 m Hz (Hopkins Table A2 [TR]); "
            "eta_int 0.005 (ISO 12354-1 Annex L [TR])",
        ),
        Material(
            "cmu_190",
            "hollow dense-aggregate concrete block 190 mm (8 in nominal), ungrouted, faces sealed",
            0.190,
            210.0,
            107.0,
            0.01,
            edge_losses=True,
            source="m 210 kg/m^2 (from memory, about 43 lb/ft^2 with mortar and paint); h*fc 20.3 m Hz "
            "(dense block, Hopkins Table A2 [TR]) applied to the full block depth; eta_int 0.01 "
            "(from memory)",
        ),
        Material(
            "cmu_140",
            "hollow dense-aggregate concrete block 140 mm (6 in nominal), ungrouted, faces sealed",
            0.140,
            156.0,
            145.0,
            0.01,
            edge_losses=True,
            source="m 156 kg/m^2 (from memory, about 32 lb/ft^2 with mortar and paint); h*fc 20.3 m Hz "
            "(dense block, Hopkins Table A2 [TR]) applied to the full block depth; eta_int 0.01 "
            "(from memory)",
        ),
        Material(
            "cmu_190_grouted",
            "dense-aggregate concrete block 190 mm (8 in nominal), every core grouted",
            0.190,
            390.0,
            107.0,
            0.01,
            edge_losses=True,
            source="m 390 kg/m^2 (from memory, about 80 lb/ft^2); h*fc 20.3 m Hz (dense block, Hopkins "
            "Table A2 [TR]); eta_int 0.01 (from memory)",
        ),
        Material(
            "cmu_290",
            "hollow dense-aggregate concrete block 290 mm (12 in nominal), ungrouted, faces sealed",
            0.290,
            307.0,
            70.0,
            0.01,
            edge_losses=True,
            source="m 307 kg/m^2 (from memory, about 63 lb/ft^2); h*fc 20.3 m Hz (dense block, Hopkins "
            "Table A2 [TR]) applied to the full block depth; eta_int 0.01 (from memory)",
        ),
        Material(
            "calcium_silicate_200",
            "calcium silicate masonry 200 mm (1800 kg/m^3)",
            0.200,
            360.0,
            128.4,
            0.010,
            edge_losses=True,
            scalable=True,
            source="ISO 12354-1 Annex L [TR]: 1800 kg/m^3, c_L 2500 m/s -> fc 128.4 Hz, eta_int 0.010",
        ),
        Material(
            "glass_6",
            "float glass 6 mm",
            0.006,
            14.82,
            2083.0,
            0.025,
            scalable=True,
            source="m 2.47 kg/m^2 per mm (Norton Table 3.1 [TR]); h*fc 12.5 m Hz (Hopkins Table A2 [TR]); "
            "eta 0.025 as mounted in a glazing bead or gasket (the glass alone is near 0.002; the mounting "
            "sets the depth of the coincidence dip, Quirt 1982 JASA 72(3) 834-844, value from memory; with "
            "it 6 mm rates STC 32 and 12 mm 35 against published 31 and 35)",
        ),
        Material(
            "laminated_glass_6.4",
            "laminated glass 6.4 mm (two 3 mm float panes on a 0.38 mm PVB interlayer)",
            0.0064,
            15.2,
            2500.0,
            0.08,
            scalable=True,
            source="m from 2.47 kg/m^2 per mm of glass (Norton Table 3.1 [TR]) plus the interlayer; fc 20 % "
            "above monolithic glass of the same thickness (partial shear coupling of the panes) and eta 0.08 "
            "at 20 degC for a standard PVB interlayer (both from memory)",
        ),
        Material(
            "steel_1",
            "steel sheet 1.0 mm",
            0.001,
            7.6,
            12300.0,
            0.005,
            scalable=True,
            source="m 7.6 kg/m^2 per mm (Norton Table 3.1 [TR]); h*fc 12.3 m Hz (Hopkins Table A2 [TR]); "
            "eta 0.005 mounted (from memory)",
        ),
    )
}


def get_material(key: str, thickness: float | None = None) -> Material:
    """Look up a material by key, optionally at another thickness (m).

    Raises
    ------
    GeometryError
        If the key is unknown (the message lists the known keys) or the
        thickness cannot be changed.
    """
    try:
        mat = MATERIALS[key]
    except (KeyError, TypeError):
        raise GeometryError(f"unknown material {key!r}; known: {', '.join(sorted(MATERIALS))}") from None
    if thickness is not None and float(thickness) != mat.thickness:
        return mat.with_thickness(float(thickness))
    return mat
