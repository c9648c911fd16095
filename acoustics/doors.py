"""Door sets as seal-dependent elements: a leaf curve plus its seals, each seal state priced as a leak.

Hongisto's door model [1]_: the sound reduction of a door is the area-weighted sum of the structural
transmission through the leaf and the leak transmission through the slits around it; the slits are
estimated either as perfect transmission (tau = 1) or, for regular slits, with Gomperts' model. Here
the leaf's own curve is given (a laboratory curve of the door set with its seals working, or a
prediction), and each seal state adds a Gomperts slit (diffuse field, band-averaged,
:func:`acoustics.leaks.slit`) whose depth is the door thickness:

- head and jamb gasket: ``"present"`` (no leak), ``"gapped"`` over a length (a slit of the frame
  clearance over that length), ``"missing"`` (the clearance all along both jambs and the head);
- bottom: ``"drop_seal"`` or ``"threshold_sweep"`` (no leak while working), ``"undercut"`` (a slit of
  the undercut height across the door width along the floor, Gomperts' edge case n = 0.5).

Hongisto [2]_ compares the models with 18 measured steel and timber doors; the perfect-transmission
model and Gomperts' model bracket the measured leak transmission there (paraphrase of the abstract;
the figures were not accessed, so no check value is taken from it).

Fire doors: clearances and gasketing are set by the door's listing and the fire-door standard in
force (e.g. NFPA 80 in the US); an acoustic estimate never overrides them; the authority having
jurisdiction governs.

References
----------
.. [1] Hongisto, V. (2000) "Sound insulation of doors - Part 1: prediction models for structural and
   leak transmission", J. Sound Vib. 230(1), 133-148.
.. [2] Hongisto, V. et al. (2000) "Sound insulation of doors - Part 2: comparison between measurement
   results and predictions", J. Sound Vib. 230(1) (co-authors and pages from memory; abstract only).
.. [3] Hopkins, C. (2007) *Sound Insulation*, Eqs. 4.99-4.100 (Gomperts' slit).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from .bands import N_BANDS
from .errors import GeometryError
from .leaks import Leak, slit

__all__ = ["DoorSet", "HEAD_JAMB_STATES", "BOTTOM_STATES", "door_leak"]

HEAD_JAMB_STATES = ("present", "gapped", "missing")
BOTTOM_STATES = ("drop_seal", "threshold_sweep", "undercut")
#: Head/jamb clearance of a door in its frame, m (1/8 in; steel fire doors 1/8 in +- 1/16 in per NFPA 80
#: as summarised in the field-practice notes; used when none is recorded).
DEFAULT_CLEARANCE = 0.0032


def _pos(v: Any, name: str) -> float:
    try:
        x = float(v)
    except (TypeError, ValueError):
        raise GeometryError(f"{name} must be a number in m, got {v!r}") from None
    if not np.isfinite(x) or x <= 0:
        raise GeometryError(f"{name} must be > 0 m, got {v!r}")
    return x


@dataclass(frozen=True)
class DoorSet:
    """A door in a wall: leaf size and curve, thickness, clearance and the designed seals.

    Parameters
    ----------
    width, height : float
        Leaf size, m.
    leaf_tl : array_like, shape (21,)
        TL of the door set with its seals working (laboratory curve or prediction), dB.
    thickness : float
        Leaf thickness (depth of the slits around it), m; default 0.045.
    clearance : float
        Head/jamb clearance, m.
    head_jamb : str
        Designed state, normally "present".
    bottom : str
        Designed bottom: "drop_seal", "threshold_sweep" or "undercut" (a door designed without a
        bottom seal: its undercut belongs to the design).
    undercut : float
        Undercut height for a designed "undercut", m.
    label : str
    """

    width: float
    height: float
    leaf_tl: np.ndarray
    thickness: float = 0.045
    clearance: float = DEFAULT_CLEARANCE
    head_jamb: str = "present"
    bottom: str = "drop_seal"
    undercut: float = 0.019
    label: str = ""

    def __post_init__(self) -> None:
        for name in ("width", "height", "thickness", "clearance", "undercut"):
            object.__setattr__(self, name, _pos(getattr(self, name), f"door.{name}"))
        tl = np.array(self.leaf_tl, dtype=float)
        if tl.shape != (N_BANDS,) or not np.all(np.isfinite(tl)):
            raise GeometryError(f"door.leaf_tl must be a finite curve over the {N_BANDS} bands, dB")
        tl.setflags(write=False)
        object.__setattr__(self, "leaf_tl", tl)
        if self.head_jamb not in HEAD_JAMB_STATES:
            raise GeometryError(f"door.head_jamb must be one of {HEAD_JAMB_STATES}, got {self.head_jamb!r}")
        if self.bottom not in BOTTOM_STATES:
            raise GeometryError(f"door.bottom must be one of {BOTTOM_STATES}, got {self.bottom!r}")

    @classmethod
    def from_dict(cls, d: dict[str, Any]) -> DoorSet:
        """Door set from a JSON-like mapping with the constructor's names."""
        if not isinstance(d, dict):
            raise GeometryError("a door must be a mapping with width, height and leaf_tl")
        missing = [k for k in ("width", "height", "leaf_tl") if k not in d]
        if missing:
            raise GeometryError(f"door needs {', '.join(missing)}")
        known = {k: d[k] for k in cls.__dataclass_fields__ if k in d}
        return cls(**known)

    @property
    def area(self) -> float:
        """Leaf area, m^2."""
        return self.width * self.height

    def design_leak(self) -> np.ndarray:
        """Leak of the designed seals, m^2 per band (zero unless the design has an undercut)."""
        if self.bottom == "undercut":
            return door_leak(self, "bottom", "undercut", width=self.undercut).area
        return np.zeros(N_BANDS)


def door_leak(
    door: DoorSet, part: str, state: str, *, width: float | None = None, length: float | None = None
) -> Leak:
    """Leak of one seal of a door set in a given state (Hongisto's slit term, Gomperts' slit).

    Parameters
    ----------
    door : DoorSet
    part : {"head_jamb", "bottom"}
    state : str
        head_jamb: "gapped" (``length`` m of gasket missing or not touching, clearance ``width``,
        default the door's) or "missing" (the whole head and both jambs). bottom: "undercut"
        (height ``width``, default the door's undercut) — also a drop seal or sweep that does not
        touch the floor, with the gap height as ``width``.

    Returns
    -------
    Leak
        kind "door_seal", transmission area m^2 per band (through-path: a straight slit of the
        door's thickness).
    """
    if part == "head_jamb":
        w = door.clearance if width is None else _pos(width, "width")
        if state == "gapped":
            if length is None:
                raise GeometryError("a gapped head/jamb gasket needs length, m")
            run = min(_pos(length, "length"), 2 * door.height + door.width)
        elif state == "missing":
            run = 2 * door.height + door.width
        else:
            raise GeometryError(f"head_jamb state must be 'gapped' or 'missing', got {state!r}")
        lk = slit(w, run, door.thickness)
    elif part == "bottom":
        if state != "undercut":
            raise GeometryError(f"bottom state must be 'undercut' (a gap under the door), got {state!r}")
        h = door.undercut if width is None else _pos(width, "width")
        lk = slit(h, door.width, door.thickness, edge=True)
    else:
        raise GeometryError(f"door part must be 'head_jamb' or 'bottom', got {part!r}")
    return Leak(lk.area, "door_seal", door.label, lk.flags, lk.open_area)
