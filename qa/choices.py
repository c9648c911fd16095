"""The record's fixed vocabularies: roles, trades, gap kinds, faces, statuses.

Stored values are short stable slugs; labels are what people read.
"""

from __future__ import annotations

from django.db import models


class Role(models.TextChoices):
    INSPECTOR = "inspector", "Inspector"
    CREW = "crew", "Crew"
    OWNER = "owner", "Owner"


class Trade(models.TextChoices):
    DRYWALL = "drywall", "Drywall"
    FRAMING = "framing", "Framing"
    INSULATION = "insulation", "Insulation"
    ELECTRICAL = "electrical", "Electrical"
    PLUMBING = "plumbing", "Plumbing"
    HVAC = "hvac", "HVAC"
    DOORS = "doors", "Doors and hardware"
    FIRESTOP = "firestop", "Firestop and sealants"
    GENERAL = "general", "General contractor"


class Units(models.TextChoices):
    METRIC = "metric", "Metric (m, mm)"
    IMPERIAL = "imperial", "Imperial (ft, in)"


class RatingScheme(models.TextChoices):
    STC = "stc", "STC (ASTM E413)"
    RW = "rw", "Rw (ISO 717-1)"


class Construction(models.TextChoices):
    """Kind of construction; each brings its checklist template (qa/checklists.py)."""

    WOOD_STUD = "wood_stud", "Single wood stud"
    STEEL_STUD = "steel_stud", "Single steel stud"
    STAGGERED_STUD = "staggered_stud", "Staggered stud"
    DOUBLE_STUD = "double_stud", "Double stud"
    RESILIENT_CHANNEL = "resilient_channel", "Resilient channel on one face"
    MASONRY = "masonry", "Concrete or masonry"
    SHAFT_WALL = "shaft_wall", "Shaft wall"
    DOOR = "door", "Door set"


class CurveSource(models.TextChoices):
    LAB = "lab", "Laboratory report"
    PREDICTED = "predicted", "Predicted from layers"


class GapKind(models.TextChoices):
    """How a defect lets sound through; each maps to one engine model (qa/audit/finding_leaks.py)."""

    SLIT = "slit", "Slit (long narrow gap)"
    HOLE = "hole", "Hole"
    RING = "ring", "Ring gap around a pipe or duct"
    OPEN_AREA = "open_area", "Open area"
    BRIDGE = "bridge", "Rigid bridge between leaves"
    MISSING_INSULATION = "missing_insulation", "Missing or compressed insulation"
    CHANNEL_SHORT = "channel_short", "Resilient channel short-circuited"
    MISSING_LAYER = "missing_layer", "Missing board layer"
    BACK_TO_BACK = "back_to_back", "Back-to-back boxes"


#: The sizes each kind of defect is recorded with (API names) and which of them are required. An open
#: area needs its area, or a width and a length; the geometry check and the walk's form read this table.
SIZE_RULES: dict[str, dict[str, tuple[str, ...]]] = {
    GapKind.SLIT: {"sizes": ("width", "length", "depth"), "required": ("width", "length")},
    GapKind.HOLE: {"sizes": ("diameter", "depth"), "required": ("diameter",)},
    GapKind.RING: {"sizes": ("width", "diameter", "depth"), "required": ("width", "diameter")},
    GapKind.OPEN_AREA: {"sizes": ("area", "depth"), "required": ("area",)},
    GapKind.BACK_TO_BACK: {"sizes": ("area", "depth"), "required": ("area",)},
    GapKind.BRIDGE: {"sizes": ("length",), "required": ()},
    GapKind.MISSING_INSULATION: {"sizes": ("area",), "required": ("area",)},
    GapKind.CHANNEL_SHORT: {"sizes": ("area",), "required": ("area",)},
    GapKind.MISSING_LAYER: {"sizes": ("area",), "required": ("area",)},
}

#: Kinds whose size is a gap (width/length/diameter) rather than an affected area.
GAP_KINDS = {GapKind.SLIT, GapKind.HOLE, GapKind.RING, GapKind.OPEN_AREA, GapKind.BACK_TO_BACK}
#: Kinds measured as an affected wall area.
AREA_KINDS = {GapKind.MISSING_INSULATION, GapKind.CHANNEL_SHORT, GapKind.MISSING_LAYER}


class Face(models.TextChoices):
    THROUGH = "through", "Through the wall"
    A = "a", "Face A only"
    B = "b", "Face B only"


class Fill(models.TextChoices):
    NONE = "none", "Empty"
    FIBRE = "fibre", "Packed with fibre, no sealant"
    SKIN = "skin", "Closed by a thin film or tape"


class AlongFrom(models.TextChoices):
    """The end of the wall a defect's distance is measured from (ends named as seen from face A)."""

    START = "start", "left end, seen from face A"
    END = "end", "right end, seen from face A"


class HeightBand(models.TextChoices):
    LOW = "low", "Low"
    MIDDLE = "middle", "Middle"
    HIGH = "high", "High"


class SealStatus(models.TextChoices):
    UNCHECKED = "unchecked", "Not checked"
    PASS = "pass", "Pass"
    DEFECT = "defect", "Defect"
    NA = "na", "Not applicable"


class FindingStatus(models.TextChoices):
    OPEN = "open", "Open"
    FIXED = "fixed", "Fixed, awaiting check"
    VERIFIED = "verified", "Verified"
    REOPENED = "reopened", "Reopened"


#: Statuses in which a crew still has work to do.
OPEN_STATUSES = (FindingStatus.OPEN, FindingStatus.REOPENED)
#: Statuses in which a finding still costs the wall (as verified).
UNRESOLVED = (FindingStatus.OPEN, FindingStatus.REOPENED, FindingStatus.FIXED)
#: The status groups people filter by (pages, the walk's bundle): name -> statuses.
STATUS_GROUPS = {
    "open": OPEN_STATUSES,
    "fixed": (FindingStatus.FIXED,),
    "verified": (FindingStatus.VERIFIED,),
}


class OpeningKind(models.TextChoices):
    DOOR = "door", "Door"
    WINDOW = "window", "Window"


class PhotoPurpose(models.TextChoices):
    DEFECT = "defect", "Defect as found"
    FIX = "fix", "Fix by crew"
    VERIFY = "verify", "Check by inspector"
