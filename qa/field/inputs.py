"""From the record to the field prediction's inputs: rooms, junctions and the field target of a wall.

Nobody has to fill anything in: a wall with no rooms gets one pair of box rooms spanning the wall
(:data:`DEFAULT_DEPTH_M` deep), the receiving room a furnished reverberation time of
:data:`FURNISHED_T_S`, the separating area the wall's, and its four junctions come from the job's
building kind (:func:`acoustics.building_kinds.default_junctions`). A consultant may enter any of them.

References
----------
.. [1] ISO 12354-1:2017, Clause 4 (rooms, junctions) and Formula 5b (DnT from R').
.. [2] International Building Code, Section 1206.2 (STC 50 in the laboratory, 45 when field tested;
   from memory): the basis of the derived field target of an STC wall.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass
from typing import Any

from acoustics.building_kinds import default_junctions, wall_defaults
from acoustics.field_inputs import Junction, Room

#: Depth of a default room perpendicular to the wall, m (a bedroom or living room).
#: Common practice, no source.
DEFAULT_DEPTH_M = 4.0
#: Reverberation time of a furnished room, s (ISO 12354-1 reference T0; common practice as a default).
FURNISHED_T_S = 0.5
#: A field target derived from an STC target: the laboratory target minus this (IBC 1206.2, from memory).
STC_FIELD_ALLOWANCE = 5
MAX_VOLUME_M3 = 1e5
MAX_T_S = 20.0

CAUTION = (
    "A prediction is not a field test; tests follow ASTM E336 or ISO 16283-1 by qualified testers; "
    "local codes and the authority having jurisdiction govern."
)


@dataclass(frozen=True)
class Rooms:
    """The engine's rooms for one room pair, and which of its values were defaults."""

    source: Room
    receiving: Room
    area: float | None
    defaults: tuple[str, ...]
    label: str
    pair_id: int | None


def default_volume(wall) -> float:
    """Volume of a default room on a face of ``wall``, m³: length × 4 m × height."""
    return wall.length_m * DEFAULT_DEPTH_M * wall.height_m


def check_rooms(wall, data: dict[str, Any]) -> dict[str, str]:
    """The rules a room pair breaks, {field: rule}; ``data`` in SI with the model's field names."""
    errors = {}
    for key in ("source_volume_m3", "receiving_volume_m3"):
        v = data.get(key)
        if v is not None and not (0 < v <= MAX_VOLUME_M3):
            errors[key] = f"must be > 0 m³ and at most {MAX_VOLUME_M3:g} m³"
    t = data.get("receiving_t_s")
    if t is not None and not (0 < t <= MAX_T_S):
        errors["receiving_t_s"] = f"a reverberation time must be > 0 s and at most {MAX_T_S:g} s"
    area = data.get("area_m2")
    if area is not None and not (0 < area <= wall.area_m2 + 1e-9):
        errors["area_m2"] = f"must be > 0 m² and at most the wall's area ({wall.area_m2:.2f} m²)"
    if (data.get("field_target") is None) != (not data.get("field_descriptor")):
        errors["field_target"] = "give a field target and its descriptor together"
    return errors


def rooms_of(wall, pair=None) -> Rooms:
    """Engine rooms of ``pair`` (a :class:`qa.models.RoomPair` or None for the wall's default pair)."""
    d = default_volume(wall)
    defaults = []
    src = getattr(pair, "source_volume_m3", None)
    rcv = getattr(pair, "receiving_volume_m3", None)
    t = getattr(pair, "receiving_t_s", None)
    area = getattr(pair, "area_m2", None)
    for name, value in (
        ("source_volume", src),
        ("receiving_volume", rcv),
        ("receiving_t", t),
        ("area", area),
    ):
        if value is None:
            defaults.append(name)
    return Rooms(
        source=Room(src if src is not None else d, name="source_room"),
        receiving=Room(rcv if rcv is not None else d, t=t, name="receiving_room"),
        area=area,
        defaults=tuple(defaults),
        label=(
            pair.label if pair is not None and pair.label else f"{wall.face_a_label} to {wall.face_b_label}"
        ),
        pair_id=getattr(pair, "pk", None),
    )


def junctions_of(overrides: Iterable, building_kind: str) -> dict[str, Junction]:
    """Junctions a consultant entered (:class:`qa.models.JunctionOverride`), as the engine takes them.

    The flanking element is the one the named building kind (default: the job's) has at that position.
    """
    out = {}
    for o in overrides:
        kind = o.element_from or building_kind
        element = next(j.flank for j in default_junctions(kind) if j.position == o.position)
        out[o.position] = Junction(o.position, o.kind, element)
    return out


def job_rule(rules: Iterable[dict[str, Any]], wall) -> dict[str, Any] | None:
    """The job's field target for ``wall``: the rule for its wall type, else the rule for every wall."""
    rules = list(rules or ())
    code = wall.wall_type.code
    return next((r for r in rules if r.get("wall_type") == code), None) or next(
        (r for r in rules if not r.get("wall_type")), None
    )


def field_target(wall, pair=None, rules: Iterable[dict[str, Any]] = ()) -> dict[str, Any] | None:
    """The field target of a room pair: entered for the pair, else the job's rule set for the kind of
    wall (:attr:`qa.models.Job.field_targets`), else derived from an STC target (module References).

    Returns {"descriptor", "value", "derived", "basis"} or None when none can be set like for like.
    """
    if pair is not None and pair.field_target is not None and pair.field_descriptor:
        return {
            "descriptor": pair.field_descriptor,
            "value": pair.field_target,
            "derived": False,
            "basis": "entered for these rooms",
        }
    rule = job_rule(rules, wall)
    if rule is not None:
        applies = f"wall type {rule['wall_type']}" if rule.get("wall_type") else "every wall"
        return {
            "descriptor": rule["descriptor"],
            "value": int(rule["value"]),
            "derived": False,
            "basis": f"the job's rule set, for {applies}",
        }
    if wall.target_rating is not None and (wall.rating_scheme or "stc") == "stc":
        return {
            "descriptor": "astc",
            "value": wall.target_rating - STC_FIELD_ALLOWANCE,
            "derived": True,
            "basis": f"STC {wall.target_rating} target less {STC_FIELD_ALLOWANCE} for a field result "
            "(the building code's allowance for field-tested walls); set the rooms' field target "
            "or the job's field targets to replace it",
        }
    return None


def wall_structure(wall) -> dict[str, Any]:
    """The separating wall's structural data for the engine, from its wall type's construction.

    A masonry wall is heavy (the concrete-masonry kind's 190 mm block: 220 kg/m², fc 120 Hz); every
    framed construction (studs, channels, shaft wall) is lightweight (25 kg/m²), whatever the
    building kind: a steel-stud partition in a concrete building is still a lightweight wall.
    """
    kind = "concrete_masonry" if wall.wall_type.construction == "masonry" else "wood_frame"
    d = wall_defaults(kind)
    return {"wall_mass": d["mass"], "wall_kind": d["kind"], "wall_fc": d["fc"]}
