"""The demo job's field rating: rooms for its walls, the lift-shaft walls' junctions and two invented
field tests (fictional testers).

One test passes (measured a little above its prediction); one falls short of its prediction (a
flanking or workmanship problem the walk could not see). Idempotent: running it again changes nothing.
"""

from __future__ import annotations

from datetime import date

from django.db import transaction

from ..models import FieldTest, JunctionOverride, RoomPair, Wall
from .measurements import compute_results
from .prediction import field_prediction, headline

ROOM_DEPTH = {"D": 4.2, "C": 1.8, "L": 2.2}  # m: unit rooms, the corridor, the lift lobby (invented)
TESTER = "Northbank Acoustic Testing (fictional)"
# (level, date, measured minus predicted in dB, note). Each test goes to the unit-to-unit wall of its
# level with the largest predicted margin now, so the shortfall of the second is the test's, not the walk's.
TESTS = [
    ("2", date(2026, 11, 24), 1, "Demo test: passes; measured a little above the prediction."),
    (
        "3",
        date(2026, 11, 25),
        -6,
        "Demo test: falls short of its prediction; the walk saw nothing here: look at the junctions.",
    ),
]


def _rooms(wall: Wall) -> RoomPair:
    kind = wall.tag.split("-")[1][0]
    unit_volume = round(wall.length_m * ROOM_DEPTH["D"] * wall.height_m, 1)
    source = round(wall.length_m * ROOM_DEPTH.get(kind, 4.0) * wall.height_m, 1)
    pair, _ = RoomPair.objects.get_or_create(
        wall=wall,
        label=f"{wall.face_a_label} to {wall.face_b_label}",
        defaults={
            "source_face": "a",
            "source_volume_m3": source,
            "receiving_volume_m3": unit_volume,
            "receiving_t_s": 0.5,
        },
    )
    return pair


def _levels(pair_result: dict, shift: int) -> dict[str, list]:
    """Invented measured levels whose DnT is the predicted DnT now plus ``shift`` (T2 = 0.5 s)."""
    dnt = pair_result["states"]["now"]["bands"]["dnt"]
    l1 = [round(98.0 - 0.1 * i, 1) for i in range(len(dnt))]
    l2 = [round(a - (d + shift), 1) for a, d in zip(l1, dnt, strict=True)]
    b2 = [round(x - 15.0, 1) for x in l2]
    b2[8] = round(l2[8] - 8.0, 1)  # 315 Hz: a background 8 dB down, corrected by the standard's formula
    return {"l1": l1, "l2": l2, "b2": b2, "t2": [0.5] * len(l1)}


@transaction.atomic
def load_field_demo(job) -> None:
    """Rooms for every wall of the demo job and its two field tests (once)."""
    walls = {w.tag: w for w in Wall.objects.live().filter(job=job).select_related("wall_type")}
    for wall in walls.values():
        _rooms(wall)
        if "-L" in wall.tag:
            # The shaft's own block walls meet this one at both ends: a consultant's entry, not a default.
            for end in ("end_a", "end_b"):
                JunctionOverride.objects.get_or_create(
                    wall=wall, position=end, defaults={"kind": "rigid_t", "element_from": "concrete_masonry"}
                )
    if FieldTest.objects.filter(wall__job=job, tester=TESTER).exists():
        return
    for wall in walls.values():
        wall.job = job
    for level, on, shift, note in TESTS:
        units = [w for w in walls.values() if w.level == level and "-D" in w.tag]
        predicted = [(headline(field_prediction(w)), w) for w in units]
        ranked = [(h, w) for h, w in predicted if h is not None and h["states"]["now"]["margin"] is not None]
        if not ranked:
            continue
        head, wall = max(ranked, key=lambda hw: (hw[0]["states"]["now"]["margin"], hw[1].tag))
        pair = RoomPair.objects.filter(wall=wall).order_by("id").first()
        volume, area = head["rooms"]["receiving_volume_m3"], head["rooms"]["area_m2"]
        bands = _levels(head, shift)
        FieldTest.objects.create(
            wall=wall,
            room_pair=pair,
            tested_on=on,
            tester=TESTER,
            standard="ASTM E336",
            source="levels",
            volume_m3=volume,
            area_m2=area,
            bands=bands,
            results=compute_results("levels", bands, volume=volume, area=area),
            note=note,
        )
