"""Checklist templates: the seal points to check on each kind of construction.

Plain data, no database access. Creating a wall copies its wall type's template
into seal points; the inspector may then add or remove points.

Each :class:`SealPointTemplate` says what "correct" looks like, the usual defect,
who usually fixes it, and the default geometry prefilled when a defect is
recorded. Geometry is SI (m, m^2) and is a starting value the inspector edits.

Default geometry by gap kind (``count`` absent means 1):

=====================  =====================================================
gap kind               keys
=====================  =====================================================
slit                   width_m, depth_m, and one of length_m or
                       length_fraction (share of the wall's length)
hole                   diameter_m, depth_m
ring                   diameter_m (pipe or duct), width_m (radial gap), depth_m
open_area              area_m2, depth_m
back_to_back           area_m2 (leak area of one box), depth_m
bridge                 count (point ties), length_m (line ties) or
                       length_fraction (framing along the whole wall)
missing_insulation,    area_m2 (affected wall area)
channel_short,
missing_layer
=====================  =====================================================

Depth is the board thickness along the air path for a one-face gap, or the wall
depth for a through path.

References
----------
.. [1] Project field-practice reference ("FP" below), section 1: seal points
   (§1.3), electrical boxes (§1.4), assembly checks (§1.5), doors (§1.6);
   section 6 for typical assemblies and their thicknesses.
.. [2] ASTM C919-19, Use of Sealants in Acoustical Applications (perimeter
   example: STC 53 sealed both faces, 49 one face, 29 unsealed).
.. [3] IBC 2021 §1206.2 (items to be sealed, lined, insulated or treated);
   IBC §714.4.2 (boxes in rated walls).
.. [4] NRC Canada CTU No. 1 (coupled faces), No. 13 (block walls), No. 27
   (outlet boxes); TSIB bulletin 50.501 (insulation fit).
.. [5] NFPA 80 (fire-door clearances), as summarised in FP §1.6.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Any

from qa.choices import Construction, Face, GapKind, Trade

__all__ = ["SealPointTemplate", "TEMPLATES", "LIGHT_FRAME", "GAP_KEYS", "channel_face", "template_for"]

#: Keys allowed in a template's default geometry.
GAP_KEYS = frozenset({"width_m", "length_m", "length_fraction", "diameter_m", "depth_m", "area_m2", "count"})

#: Constructions built of studs and board (they share the FP §1.3 seal points).
LIGHT_FRAME = (
    Construction.WOOD_STUD,
    Construction.STEEL_STUD,
    Construction.STAGGERED_STUD,
    Construction.DOUBLE_STUD,
    Construction.RESILIENT_CHANNEL,
    Construction.SHAFT_WALL,
)


@dataclass(frozen=True)
class SealPointTemplate:
    """One seal point of a checklist template.

    Parameters
    ----------
    key : str
        Stable slug, unique within its template.
    label : str
        What the inspector reads; short.
    face : str
        :class:`qa.choices.Face` value: ``"a"``, ``"b"`` or ``"through"``.
    trade : str
        :class:`qa.choices.Trade` value of the trade that usually fixes it.
    correct : str
        What correct work looks like, for crews.
    usual_defect : str
        The defect most often found here.
    gap_kind : str
        :class:`qa.choices.GapKind` value prefilled on a new finding.
    gap : dict of str to float
        Default defect geometry in SI (see the module table). Read-only by
        convention: copy it before editing.
    at_edge : bool
        True for a slit along a wall edge (perimeter), False mid-panel.
    caution : str
        Key into :data:`qa.cautions.CAUTIONS`, or ``""``.
    channel : bool
        True for a check of the resilient channel: it belongs on the face that carries the channel,
        which :func:`template_for` reads from the wall type's layers (face A when unknown).

    Raises
    ------
    ValueError
        If a choice or geometry value breaks the rules; the message names the
        field.
    """

    key: str
    label: str
    face: str
    trade: str
    correct: str
    usual_defect: str
    gap_kind: str
    gap: dict[str, float] = field(hash=False)
    at_edge: bool = False
    caution: str = ""
    channel: bool = False

    def __post_init__(self) -> None:
        # Store plain strings, not enum members, so the data serialises as-is.
        for name, choices in (("face", Face), ("trade", Trade), ("gap_kind", GapKind)):
            value = getattr(self, name)
            if value not in choices.values:
                raise ValueError(f"seal point {self.key!r}: {name} {value!r} is not one of {choices.values}")
            object.__setattr__(self, name, str(choices(value).value))
        unknown = set(self.gap) - GAP_KEYS
        if unknown:
            raise ValueError(f"seal point {self.key!r}: gap keys {sorted(unknown)} not allowed")
        for name, value in self.gap.items():
            if not isinstance(value, (int, float)) or isinstance(value, bool) or not value > 0:
                raise ValueError(f"seal point {self.key!r}: gap[{name!r}] must be a positive number")
        if self.gap.get("length_fraction", 0) > 1:
            raise ValueError(f"seal point {self.key!r}: gap['length_fraction'] must be at most 1")


_P = SealPointTemplate
A, B, THRU = Face.A.value, Face.B.value, Face.THROUGH.value
DRY, FRM, INS = Trade.DRYWALL.value, Trade.FRAMING.value, Trade.INSULATION.value
ELEC, PLMB, HVAC = Trade.ELECTRICAL.value, Trade.PLUMBING.value, Trade.HVAC.value
DOORS, GC = Trade.DOORS.value, Trade.GENERAL.value
FIRE = "listed_firestop_systems"
#: Said wherever a joint may be fire-rated: sealant alone is never the rated fix (FP §3.1).
_RATED_JOINT = "In a rated wall, as the listed joint system requires."

MM = 1e-3
IN2 = 0.0254**2
#: 5/8 in (15.9 mm) Type X board, the usual face of a rated demising wall (FP §6 rows D, F, G, I).
BOARD = 15.9 * MM
#: One 4 ft x 8 ft sheet (1.219 m x 2.438 m), the patch a short-circuit or missing layer usually spans
#: (common practice, no source).
SHEET = 2.97
#: One stud bay at 16 in (406 mm) o.c. by about 0.55 m tall: a typical batt void (common practice, no source).
BAY_VOID = 0.22
#: Typical storey-height wall, 8 ft (2.44 m), for full-height vertical joints; edit to the wall's height.
STOREY = 2.44
#: Leakage of one unsealed back-box, 1 in^2 (FP §1.1 illustration, §1.3 row 7: 0.5-2 in^2 plausible).
BOX_LEAK = round(1 * IN2, 6)
#: Open single-gang cut-out, about 6 in^2 (FP §1.1, §1.3 row 7; illustrative, common practice).
GANG_CUTOUT = round(6 * IN2, 5)


# The templates below are tables of data: one seal point reads as one block, fields in a fixed
# order, so the formatter is kept out of them.
# fmt: off
def _light_frame(board: float, depth: float, stud: float, insulation: str = "") -> list[SealPointTemplate]:
    """Seal points shared by every stud-and-board wall (FP §1.3 rows 1-11, §1.4).

    Parameters
    ----------
    board : float
        Board thickness of one face, m (depth of a one-face gap).
    depth : float
        Overall wall depth, m (depth of a through path).
    stud : float
        Track or plate width, m (depth of a gap under the track).
    insulation : str
        What correct cavity insulation looks like, when it differs from the default.
    """
    # FP §1.3 row 1. Width 6 mm: the 1/4 in gap left for sealant (consultant notes, board-maker
    # guide). Length 25 %: beads are usually broken in stretches (corners, bays, obstructions), not
    # missing end to end (common practice, no source); a full missing bead is length_fraction 1.0.
    def each_face(key: str, label: str, *args, **kwargs) -> list[SealPointTemplate]:
        # Board joints, boxes and cut-outs exist on both faces of a stud wall: one check per face.
        return [_P(f"{key}-{f}", f"{label}, face {n}", f, *args, **kwargs) for f, n in ((A, "A"), (B, "B"))]

    def bottom(face: str, name: str) -> SealPointTemplate:
        return _P(
            f"bottom-perimeter-{face}", f"Bottom edge, face {name}", face, DRY,
            "Board held off the floor by a small even gap; continuous sealant bead fills it "
            "on this face (each layer where specified). " + _RATED_JOINT,
            "No bead, or a bead broken at corners and bays, or laid over dust.",
            GapKind.SLIT, {"width_m": 6 * MM, "length_fraction": 0.25, "depth_m": board},
            at_edge=True, caution=FIRE,
        )

    return [
        bottom(A, "A"),
        bottom(B, "B"),
        # FP §1.3 row 2: deflection gaps 1/2-1 in (13-25 mm); 13 mm is the low end. Through the wall.
        _P("head", "Top of wall at deck", THRU, DRY,
           "Wall runs to the deck; deflection gap packed and sealed to the detail on both faces. "
           + _RATED_JOINT,
           "Wall stops at the ceiling, or the deflection gap is open.",
           GapKind.SLIT, {"width_m": 13 * MM, "length_fraction": 0.25, "depth_m": depth},
           at_edge=True, caution=FIRE),
        # FP §1.3 row 2: "each open flute is several in^2" (common practice); 6 in^2 each, 4 flutes.
        _P("deck-flutes", "Deck flutes over wall", THRU, DRY,
           "Every flute of a metal deck above the wall filled and sealed. " + _RATED_JOINT,
           "Flutes left open above the head track.",
           GapKind.OPEN_AREA, {"area_m2": GANG_CUTOUT, "depth_m": depth, "count": 4}, caution=FIRE),
        # FP §1.3 row 3: slots 1/4-1 in, full height; 6 mm x one storey.
        *each_face("vertical-perimeter", "Wall ends and abutments", DRY,
           "Board held back 3-6 mm at walls, columns and mullions and sealed; no lining runs "
           "past the wall line. " + _RATED_JOINT,
           "Unsealed end joint, or exterior-wall lining continuous past the wall.",
           GapKind.SLIT, {"width_m": 6 * MM, "length_m": STOREY, "depth_m": board},
           at_edge=True, caution=FIRE),
        # FP §1.3 row 4: up to ~1/4 in under the track (common practice); 3 mm, air path = track width.
        _P("track-to-floor", "Track or plate to floor", THRU, FRM,
           "Bead or gasket under both edges of the bottom track or plate, and at the top track. "
           + _RATED_JOINT,
           "Daylight under the track on an uneven slab; no bead.",
           GapKind.SLIT, {"width_m": 3 * MM, "length_fraction": 0.25, "depth_m": stud},
           at_edge=True, caution=FIRE),
        # FP §1.3 row 5: joints open 1/8-1/2 in; 3 mm x half a sheet length.
        *each_face("board-joints", "Board joints", DRY,
           "Joints taped and finished; layers offset; vertical joints on opposite faces on "
           "different studs.",
           "Untaped base-layer or open joints, often above the ceiling.",
           GapKind.SLIT, {"width_m": 3 * MM, "length_m": 1.2, "depth_m": board}),
        # FP §1.3 row 6: "1/4 in rims to fist-size holes"; a 50 mm hole.
        *each_face("cut-outs", "Cut-outs and damage", DRY,
           "Cut-outs tight to the item; no open holes, above the ceiling or behind tubs included.",
           "Oversized or abandoned cut-outs, holes cut by other trades.",
           GapKind.HOLE, {"diameter_m": 50 * MM, "depth_m": board}),
        # FP §1.3 row 7, §1.4; NRC CTU No. 27.
        *each_face("back-box-seal", "Back-boxes sealed", ELEC,
           "Pad or airtight box where specified, wrapped and sealed; cable entries sealed.",
           "Open knockouts or cable entries; pad missing.",
           GapKind.OPEN_AREA, {"area_m2": BOX_LEAK, "depth_m": board}, caution="energised_boxes"),
        # IBC §714.4.2 (24 in / 610 mm across faces in rated walls); acoustic spec may ask more.
        _P("back-box-spacing", "Boxes not back to back", THRU, ELEC,
           "Boxes on opposite faces in different stud bays, 610 mm apart in rated walls or "
           "as the spec says.",
           "Boxes back to back in one bay.",
           GapKind.BACK_TO_BACK, {"area_m2": BOX_LEAK, "depth_m": depth}, caution="energised_boxes"),
        *each_face("box-cut-outs", "Box cut-outs tight", DRY,
           "Board cut within 3 mm (1/8 in) of the box all round.",
           "Oversized cut-out around the box.",
           GapKind.OPEN_AREA, {"area_m2": GANG_CUTOUT, "depth_m": board}, caution="energised_boxes"),
        # FP §1.3 row 8: annular gaps 1/4-1 in (common practice); 22 mm copper pipe, 6 mm radial gap.
        _P("pipe-penetrations", "Pipe penetrations", THRU, PLMB,
           "Hole cut close; annular space closed on both faces: acoustical sealant in a non-rated "
           "wall, the listed firestop system in a rated wall. Pipe not fixed to both faces.",
           "Annular gap open or stuffed with loose fibre only.",
           GapKind.RING, {"diameter_m": 22 * MM, "width_m": 6 * MM, "depth_m": depth}, caution=FIRE),
        # FP §1.3 row 9: gaps 1/2-1 in round ducts (common practice); 150 mm duct, 13 mm gap.
        _P("duct-penetrations", "Duct penetrations", THRU, HVAC,
           "Annular space treated per the approved detail; a fire damper's clearance left as "
           "its listing says.",
           "Open annular gap; damper clearance packed against its listing.",
           GapKind.RING, {"diameter_m": 150 * MM, "width_m": 13 * MM, "depth_m": depth},
           caution="fire_dampers"),
        # FP §1.3 row 10; IBC §1206.2. A cabinet about 14 x 24 in (0.22 m^2) with no board behind.
        _P("recessed-items", "Recessed cabinets, tubs, soffits", A, GC,
           "Sealed board box-out behind each cabinet or tub; soffits stop at the wall line. "
           "In a rated wall, as the listed system or the design requires.",
           "Board left out behind a cabinet or tub; soffit framed across the wall.",
           GapKind.MISSING_LAYER, {"area_m2": BAY_VOID}, caution=FIRE),
        # FP §1.3 row 11; TSIB 50.501: batts fit tight, compression lowers STC.
        _P("insulation", "Cavity insulation", THRU, INS,
           insulation or "Cavity full height and width; carried behind boxes and pipes; not compressed.",
           "Voids at the top, behind boxes or at bracing; batts compressed.",
           GapKind.MISSING_INSULATION, {"area_m2": BAY_VOID}),
    ]


def _swap(points: list[SealPointTemplate], key: str, **changes: Any) -> None:
    """Replace the point ``key`` in place with a copy carrying ``changes``."""
    i = next(i for i, p in enumerate(points) if p.key == key)
    points[i] = replace(points[i], **changes)


# Wall depths (m): stud + two 15.9 mm faces (FP §6). Wood 2x4 = 89 mm; steel 3-5/8 in = 92 mm;
# staggered on a 2x6 plate = 140 mm; double = two 89 mm rows + 25 mm gap; RC adds a 13 mm channel.
_D_WOOD, _D_STEEL, _D_STAG = 0.121, 0.124, 0.172
_D_DOUBLE, _D_RC = 0.235, 0.134

# FP §1.5 "single stud" (NRC CTU No. 1; AWCI "How walls affect sound": 18 mil at 24 in o.c. to
# 30 mil at 16 in o.c. lost about 4 STC).
_FRAMING = _P(
    "framing-as-designed", "Studs as designed", THRU, FRM,
    "Stud size, gauge and spacing match the tested design.",
    "Heavier or closer studs substituted.",
    GapKind.BRIDGE, {"length_fraction": 1.0}, caution="rated_assembly_changes",
)

_wood = _light_frame(BOARD, _D_WOOD, 89 * MM) + [_FRAMING]
_steel = _light_frame(BOARD, _D_STEEL, 92 * MM) + [_FRAMING]

# FP §1.5 "staggered stud" (common practice, no source).
_staggered = _light_frame(
    BOARD, _D_STAG, 140 * MM,
    insulation="Batt woven between the staggered studs, full height, not compressed.",
) + [
    _P("stud-contact", "No stud touches both faces", THRU, FRM,
       "Each stud carries one face only.",
       "A stud or backing plate fixed to both faces.",
       GapKind.BRIDGE, {"count": 1}),
    _P("cross-blocking", "No blocking across rows", THRU, FRM,
       "No blocking, fire blocking or backing spans both rows, unless the design team detailed it.",
       "Blocking or backing tying both rows.",
       GapKind.BRIDGE, {"count": 1}, caution="rated_assembly_changes"),
]

# FP §1.5 "double stud" (NRC IRC-IR-754 on fire stops across rows; rest common practice).
_double = _light_frame(BOARD, _D_DOUBLE, 89 * MM) + [
    _P("row-gap", "Gap between rows clear", THRU, FRM,
       "Air gap between rows kept along the whole wall; no debris, offcuts or bracing in it.",
       "Offcuts, bracing or debris wedged between rows.",
       GapKind.BRIDGE, {"count": 1}),
    _P("shared-blocking", "No shared blocking or ties", THRU, FRM,
       "No blocking, fire stop, shear panel or strap connects the rows, unless the design team "
       "detailed it.",
       "Shared blocking or fire stop tying both rows.",
       GapKind.BRIDGE, {"count": 1}, caution="rated_assembly_changes"),
    _P("services-between-rows", "Pipes not tied to both rows", THRU, PLMB,
       "Pipes and conduit fixed to one row only, with a resilient mount where specified.",
       "Pipe or conduit strapped to both rows.",
       GapKind.BRIDGE, {"count": 1}),
]

# FP §1.5 "resilient channel"; channel on face A unless the wall type's layers put it on face B
# (template_for moves the channel checks to that face). Screws into studs is the most common error
# (consultant installation blog); channel between layers costs ~15-20 STC (same source).
_rc = _light_frame(BOARD, _D_RC, 89 * MM) + [
    _P("rc-screws", "No screws into studs", A, DRY,
       "Board screwed only into the channel; screws short enough to miss the stud "
       "(1 in / 25 mm for one 5/8 in layer).",
       "Screws through the channel into studs.",
       GapKind.CHANNEL_SHORT, {"area_m2": SHEET}, channel=True),
    _P("rc-orientation", "Channel fixed and oriented", A, DRY,
       "Channel across the studs, flange down, slotted holes over studs, at most 610 mm o.c.",
       "Channel upside down, or hat furring used instead.",
       GapKind.CHANNEL_SHORT, {"area_m2": SHEET}, channel=True),
    _P("rc-direct", "Channel directly on framing", A, DRY,
       "Channel on the studs themselves, not between board layers or over shear panels.",
       "Channel sandwiched between board layers.",
       GapKind.CHANNEL_SHORT, {"area_m2": SHEET}, caution="rated_assembly_changes", channel=True),
    # Floated board touching the floor along a quarter of the wall (common practice, no source).
    _P("rc-edges", "Floated board clear of edges", A, DRY,
       "Channel-side board gapped and sealed at floor, ceiling and walls; touches nothing rigid.",
       "Board tight to the floor or ceiling.",
       GapKind.BRIDGE, {"length_fraction": 0.25}, at_edge=True, channel=True),
    _P("rc-fixtures", "Nothing fixed through to studs", A, GC,
       "Cabinets, brackets and grab-bar backing fixed without bypassing the channel.",
       "Cabinet or bracket bolted through to the studs.",
       GapKind.BRIDGE, {"count": 2}, channel=True),
]

# FP §1.5 "shaft walls" (build from memory, unverified; checks common practice). Face A = room
# side (board), face B = shaft side (1 in / 25.4 mm liner panels). Depth 2-1/2 in (64 mm) stud
# plus one 15.9 mm face, about 80 mm (from memory, unverified).
_LINER = 25.4 * MM
_BOARD_FACE_CHECKS = ("vertical-perimeter", "board-joints", "cut-outs", "back-box-seal", "box-cut-outs")
_shaft = [
    p
    for p in _light_frame(BOARD, 0.080, 64 * MM)
    # The shaft side is liner panel in runners: no board joints, boxes or cut-outs there.
    if not (p.face == B and p.key.startswith(_BOARD_FACE_CHECKS))
]
_swap(_shaft, "bottom-perimeter-a", label="Bottom edge, room side")
_swap(_shaft, "bottom-perimeter-b", label="Liner at bottom runner",
      gap={"width_m": 6 * MM, "length_fraction": 0.25, "depth_m": _LINER},
      correct="Liner panels seated fully in the bottom runner; runner sealed to the floor. " + _RATED_JOINT,
      usual_defect="Liner short of the runner, or runner not sealed.")
_swap(_shaft, "track-to-floor", label="J-runners sealed",
      correct="Runners at floor, deck and walls sealed to the structure on the room side. " + _RATED_JOINT,
      usual_defect="Runner unsealed where it meets the structure.")
_swap(_shaft, "back-box-spacing", label="No box opposite a shaft device",
      correct="No room-side box directly opposite a call station or other shaft device.",
      usual_defect="Box back to back with a shaft device.")
_shaft += [
    _P("liner-joints", "Liner panels seated", B, DRY,
       "Liner panels tight in the stud tabs and runners, joints closed.",
       "Liner panel short or out of its runner, leaving a slot.",
       GapKind.SLIT, {"width_m": 3 * MM, "length_m": STOREY, "depth_m": _LINER}),
    _P("shaft-devices", "Shaft devices sealed", THRU, GC,
       "Call stations, hoistway and chute openings protected as their listed systems require.",
       "Open gap around a device box or chute door.",
       GapKind.OPEN_AREA, {"area_m2": GANG_CUTOUT, "depth_m": 0.080}, caution=FIRE),
]

# FP §1.5 "concrete and masonry" (NRC CTU No. 13; checks common practice, no source).
# 8 in CMU is 194 mm actual; face shell about 32 mm (from memory, unverified).
_D_CMU, _SHELL = 0.194, 32 * MM
def _both(key: str, label: str, *args, **kwargs) -> list[SealPointTemplate]:
    return [_P(f"{key}-{f}", f"{label}, face {n}", f, *args, **kwargs) for f, n in ((A, "A"), (B, "B"))]


_masonry = [
    *_both("surface-seal", "Block face sealed", GC,
       "Porous block painted or plastered where the design calls for it; board on dabs does "
       "not count as a seal.",
       "Bare block face, or a patch missed.",
       GapKind.MISSING_LAYER, {"area_m2": 1.0}),
    _P("mortar-joints", "Mortar joints full", THRU, GC,
       "Head and bed joints fully mortared; no open cores.",
       "Open head joint or a gap in the bed.",
       GapKind.SLIT, {"width_m": 3 * MM, "length_m": 0.4, "depth_m": _D_CMU}),
    _P("head", "Top course to deck", THRU, GC,
       "Gap between the top course and the deck packed and sealed to the detail. " + _RATED_JOINT,
       "Head gap left open for deflection.",
       GapKind.SLIT, {"width_m": 13 * MM, "length_fraction": 0.25, "depth_m": _D_CMU},
       at_edge=True, caution=FIRE),
    _P("wall-ends", "Wall ends and columns", THRU, GC,
       "Joints at columns and abutting walls filled and sealed full height. " + _RATED_JOINT,
       "Open joint at a column or end wall.",
       GapKind.SLIT, {"width_m": 6 * MM, "length_m": STOREY, "depth_m": _D_CMU},
       at_edge=True, caution=FIRE),
    _P("pipe-penetrations", "Pipe penetrations", THRU, PLMB,
       "Annular space closed on both faces, no open cores: acoustical sealant in a non-rated "
       "wall, the listed firestop system in a rated wall.",
       "Annular gap open.",
       GapKind.RING, {"diameter_m": 22 * MM, "width_m": 6 * MM, "depth_m": _D_CMU}, caution=FIRE),
    _P("duct-penetrations", "Duct penetrations", THRU, HVAC,
       "Annular space treated per the approved detail; a fire damper's clearance left as "
       "its listing says.",
       "Open gap around the duct.",
       GapKind.RING, {"diameter_m": 150 * MM, "width_m": 13 * MM, "depth_m": _D_CMU},
       caution="fire_dampers"),
    _P("sleeves", "Sleeves closed", THRU, PLMB,
       "Spare or abandoned sleeves closed per the detail; in a rated wall, the listed firestop system.",
       "Empty sleeve left open.",
       GapKind.HOLE, {"diameter_m": 50 * MM, "depth_m": _D_CMU}, caution=FIRE),
    _P("back-box-spacing", "Boxes not back to back", THRU, ELEC,
       "Boxes on opposite faces in different cores and offset per code or spec.",
       "Boxes back to back in one core.",
       GapKind.BACK_TO_BACK, {"area_m2": BOX_LEAK, "depth_m": _D_CMU}, caution="energised_boxes"),
    *_both("box-cut-outs", "Box cut-outs in block", ELEC,
       "Box openings cut tight and grouted or sealed round the box.",
       "Ragged cut-out open to the core.",
       GapKind.OPEN_AREA, {"area_m2": GANG_CUTOUT, "depth_m": _SHELL}, caution="energised_boxes"),
    # Form-tie cones about 1 in (25 mm) (from memory, unverified).
    _P("form-ties", "Tie holes and cold joints", THRU, GC,
       "Form-tie holes and cold joints in concrete filled solid.",
       "Open tie holes or a porous cold joint.",
       GapKind.HOLE, {"diameter_m": 25 * MM, "depth_m": _D_CMU, "count": 4}),
    _P("recessed-items", "Recessed cabinets", A, GC,
       "Full-thickness wall or a sealed box-out behind any recess. "
       "In a rated wall, as the listed system or the design requires.",
       "Cabinet recessed into the block with thin wall left behind.",
       GapKind.MISSING_LAYER, {"area_m2": BAY_VOID}, caution=FIRE),
]

# FP §1.6 doors (IBC §1206.2 "tight fitting"; NFPA 80 clearances; field checks from a consultant
# blog). Leaf 36 x 80 in (0.91 x 2.03 m), 1-3/4 in (44.5 mm) thick.
_LEAF, _DOOR_W = 44.5 * MM, 0.91
_door = [
    # 1/2 in (12.7 mm) undercut with no working bottom seal (common practice, no source);
    # NFPA 80 allows at most 3/4 in (19 mm) on fire doors.
    _P("door-bottom", "Door bottom seal", THRU, DOORS,
       "Door bottom or sweep meets the threshold along its width; drop seal set to seal fully. "
       "Each leaf of a paired door has its own.",
       "No bottom seal, or the plunger set so the seal stops short.",
       GapKind.SLIT, {"width_m": 12.7 * MM, "length_m": _DOOR_W, "depth_m": _LEAF},
       at_edge=True, caution="fire_doors"),
    # NFPA 80 perimeter clearance 1/8 in (3.2 mm); a gasket gap over part of an edge.
    _P("head-seal", "Head gasket", THRU, DOORS,
       "Gasket continuous across the head, tight at both corners.",
       "Gasket gap at a corner or missing.",
       GapKind.SLIT, {"width_m": 3.2 * MM, "length_m": 0.3, "depth_m": _LEAF},
       at_edge=True, caution="fire_doors"),
    _P("jamb-seals", "Jamb gaskets", THRU, DOORS,
       "Gaskets continuous on both jambs, on the same side as the head; no gaps at hinges "
       "or strike.",
       "Gasket gap at the strike or hinges.",
       GapKind.SLIT, {"width_m": 3.2 * MM, "length_m": 0.5, "depth_m": _LEAF},
       at_edge=True, caution="fire_doors"),
    _P("leaf-fit", "Leaf closes evenly", THRU, DOORS,
       "Leaf latches and presses evenly on all gaskets; passes the light and card tests.",
       "Leaf out of line, so one edge does not touch its gasket.",
       GapKind.SLIT, {"width_m": 3.2 * MM, "length_m": _DOOR_W, "depth_m": _LEAF},
       at_edge=True, caution="fire_doors"),
    # Gap under the saddle; about 4 in (0.1 m) wide (from memory, unverified).
    _P("threshold", "Threshold bedded", THRU, DOORS,
       "Threshold set in sealant, no gap under it.",
       "Threshold missing or loose on an uneven floor.",
       GapKind.SLIT, {"width_m": 3 * MM, "length_m": _DOOR_W, "depth_m": 0.1},
       at_edge=True, caution="fire_doors"),
    _P("frame-perimeter-a", "Frame to wall, face A", A, DRY,
       "Joint between frame and wall sealed full length. " + _RATED_JOINT,
       "Joint left open behind the casing.",
       GapKind.SLIT, {"width_m": 6 * MM, "length_m": 1.0, "depth_m": BOARD},
       at_edge=True, caution=FIRE),
    _P("frame-perimeter-b", "Frame to wall, face B", B, DRY,
       "Joint between frame and wall sealed full length. " + _RATED_JOINT,
       "Joint left open behind the casing.",
       GapKind.SLIT, {"width_m": 6 * MM, "length_m": 1.0, "depth_m": BOARD},
       at_edge=True, caution=FIRE),
    # The hollow frame's path has no published size; 1 in^2 stands in (common practice, no source).
    _P("frame-fill", "Frame anchored and filled", THRU, GC,
       "Frame anchored to the listing; filled or insulated as specified.",
       "Hollow frame left empty and open to the wall cavity.",
       GapKind.OPEN_AREA, {"area_m2": BOX_LEAK, "depth_m": _LEAF}, caution="fire_doors"),
    # Viewer bore about 14 mm (from memory, unverified).
    _P("viewers-slots", "Viewers, slots, louvres", THRU, DOORS,
       "Viewers sealed in their bore; no mail slots or louvres unless the design has them.",
       "Viewer loose in an oversized bore.",
       GapKind.HOLE, {"diameter_m": 14 * MM, "depth_m": _LEAF}, caution="fire_doors"),
]

# fmt: on
#: Checklist template per :class:`qa.choices.Construction` value.
TEMPLATES: dict[str, tuple[SealPointTemplate, ...]] = {
    Construction.WOOD_STUD.value: tuple(_wood),
    Construction.STEEL_STUD.value: tuple(_steel),
    Construction.STAGGERED_STUD.value: tuple(_staggered),
    Construction.DOUBLE_STUD.value: tuple(_double),
    Construction.RESILIENT_CHANNEL.value: tuple(_rc),
    Construction.MASONRY.value: tuple(_masonry),
    Construction.SHAFT_WALL.value: tuple(_shaft),
    Construction.DOOR.value: tuple(_door),
}


def channel_face(layers: dict | None) -> str | None:
    """The face that carries a resilient channel in a wall type's layers: "a", "b" or None.

    ``layers["connection"]["resilient_channel"]["leaf"]`` is the leaf index (0 = face A, 1 = face B)
    in the engine's assembly format (:class:`acoustics.Assembly`).
    """
    if layers is None:
        return None
    try:
        leaf = layers["connection"]["resilient_channel"]["leaf"]
    except (KeyError, TypeError):  # a missing level, or a level that is not a mapping
        return None
    return {0: A, 1: B}.get(leaf)


def template_for(construction: str, layers: dict | None = None) -> tuple[SealPointTemplate, ...]:
    """Return the seal-point template for a kind of construction, placed on a wall type's faces.

    Parameters
    ----------
    construction : str
        A :class:`qa.choices.Construction` value, e.g. ``"wood_stud"``.
    layers : dict, optional
        The wall type's layers. When they put a resilient channel on a face, the channel checks
        (``channel=True``) are on that face; without layers the template is returned as stored.

    Returns
    -------
    tuple of SealPointTemplate

    Raises
    ------
    ValueError
        If ``construction`` has no template; the message names it and the known kinds.
    """
    # An enum member hashes by its name, not its value, so look up by value.
    kind = getattr(construction, "value", construction)
    try:
        points = TEMPLATES[kind]
    except (KeyError, TypeError):
        known = ", ".join(TEMPLATES)
        raise ValueError(
            f"construction {construction!r} has no checklist template; known kinds: {known}"
        ) from None
    face = channel_face(layers)
    if face is None or not any(p.channel and p.face != face for p in points):
        return points
    return tuple(replace(p, face=face) if p.channel else p for p in points)
