"""The demo job: an invented building, invented people, generated photos. Demo only, never a test oracle.

Harbourline Residences is a fictional four-storey apartment block. Levels 2–4 each have six units
off one corridor; every level has five walls between units, two corridor walls with unit entry
doors and one wall at the lift shaft.
"""

from __future__ import annotations

import io
import random
from datetime import UTC, datetime, timedelta

from django.contrib.auth import get_user_model
from django.db import transaction
from PIL import Image, ImageDraw, ImageFilter

from . import actions
from .audit import resolve_wall_type_curve
from .choices import FindingStatus, PhotoPurpose, Role, SealStatus
from .field.demo import load_field_demo
from .models import Event, Finding, Job, Member, Opening, Photo, SealPoint, Wall, WallType

JOB_NAME = "Harbourline Residences"
PASSWORD = "walk-the-walls"

PEOPLE = [
    # username, first, last, role, trade
    ("inspector", "Noor", "Castellan", Role.INSPECTOR, ""),
    ("owner", "Helena", "Marsh", Role.OWNER, ""),
    ("drywall", "Tomasz", "Ferreira", Role.CREW, "drywall"),
    ("electrical", "Ada", "Okonkwo", Role.CREW, "electrical"),
    ("plumbing", "Ravi", "Lindqvist", Role.CREW, "plumbing"),
    ("hvac", "Mina", "Sato", Role.CREW, "hvac"),
    ("doors", "Jonah", "Pell", Role.CREW, "doors"),
    ("insulation", "Lucia", "Brandt", Role.CREW, "insulation"),
]

BATT = {"thickness": 0.089, "flow_resistivity": 10000}
X16 = "gypsum_15.9_x"
X16_TWO = {"material": X16, "count": 2}
WALL_TYPES = [
    dict(
        code="W1",
        name="Staggered wood studs, two layers 15.9 mm fire-rated board each face",
        construction="staggered_stud",
        thickness_m=0.204,
        layers={
            "leaves": [{"layers": [X16_TWO]}, {"layers": [X16_TWO]}],
            "cavity": {"depth": 0.140, "absorber": BATT},
            "connection": {"type": "staggered_studs", "spacing": 0.406},
        },
    ),
    dict(
        code="W2",
        name="Double wood studs with 25 mm gap, one layer 15.9 mm fire-rated board each face",
        construction="double_stud",
        thickness_m=0.235,
        layers={
            "leaves": [{"layers": [X16]}, {"layers": [X16]}],
            "cavity": {"depth": 0.203, "absorber": BATT},
            "connection": {"type": "double_studs", "spacing": 0.406},
        },
    ),
    dict(
        code="W3",
        name="Steel studs 92 mm, resilient channel on the unit face, 15.9 mm fire-rated board "
        "(two layers on the channel)",
        construction="resilient_channel",
        thickness_m=0.153,
        layers={
            "leaves": [{"layers": [X16]}, {"layers": [X16_TWO]}],
            "cavity": {"depth": 0.092, "absorber": {"thickness": 0.076, "flow_resistivity": 10000}},
            "connection": {
                "type": "steel_stud",
                "spacing": 0.61,
                "resilient_channel": {"leaf": 1, "spacing": 0.61},
            },
        },
    ),
    dict(
        code="W4",
        name="Concrete block 190 mm, faces sealed",
        construction="masonry",
        thickness_m=0.19,
        layers={"leaves": [{"layers": ["cmu_190"]}]},
    ),
]

# (kind, seal-point key fragment, face, trade, geometry in SI, note). Sizes are typical of what a walk finds.
FINDING_PATTERNS = [
    (
        "slit",
        "bottom-perimeter-a",
        "a",
        "drywall",
        {"width_m": 0.006, "length_m": 1.2, "depth_m": 0.0159},
        "Bead missing under the board between two studs.",
    ),
    (
        "slit",
        "track",
        "through",
        "drywall",
        {"width_m": 0.003, "length_m": 0.6, "depth_m": 0.14},
        "Track not bedded; daylight under the plate on both faces.",
    ),
    (
        "hole",
        "back-box-seal",
        "a",
        "electrical",
        {"diameter_m": 0.012, "depth_m": 0.0159, "count": 2},
        "Knockouts open on the back-box.",
    ),
    (
        "back_to_back",
        "box-spacing",
        "through",
        "electrical",
        {"area_m2": 0.0004, "depth_m": 0.15},
        "Boxes back to back in the same stud bay, no pad.",
    ),
    (
        "ring",
        "pipe",
        "through",
        "plumbing",
        {"diameter_m": 0.022, "width_m": 0.004, "depth_m": 0.15},
        "Annular space around the supply line left open.",
    ),
    (
        "ring",
        "duct",
        "through",
        "hvac",
        {"diameter_m": 0.10, "width_m": 0.006, "depth_m": 0.15},
        "Exhaust duct sleeve not packed.",
    ),
    (
        "missing_insulation",
        "insulation",
        "through",
        "insulation",
        {"area_m2": 0.5},
        "Batt missing in one bay behind the vanity.",
    ),
    (
        "slit",
        "head",
        "through",
        "drywall",
        {"width_m": 0.004, "length_m": 0.8, "depth_m": 0.15},
        "Deflection gap at the head open over 800 mm.",
    ),
    (
        "open_area",
        "cut-outs",
        "a",
        "drywall",
        {"area_m2": 0.004, "depth_m": 0.0159},
        "Oversized cut-out left by another trade.",
    ),
]
DOOR_PATTERN = (
    "slit",
    "door-bottom",
    "through",
    "doors",
    {"width_m": 0.012, "length_m": 0.9, "depth_m": 0.045},
    "Door bottom seal not fitted; 12 mm undercut.",
)


#: What each crew reports it did, by the seal-point fragment of the pattern (invented, trade-typical).
FIX_NOTES = {
    "bottom-perimeter-a": "Cleaned the slab edge; continuous acoustical sealant bead run under the board.",
    "track": "Bedded the bottom track on a sealant bead both edges; no daylight left under the plate.",
    "back-box-seal": "Circuit off and tested dead; knockouts plugged, putty pad wrapped on the box.",
    "box-spacing": "Moved the unit-side box one stud bay over; old cut-out patched and both boxes padded.",
    "pipe": "Annular space packed and closed with the listed firestop sealant on both faces.",
    "duct": "Sleeve packed to the approved detail; damper clearance left as its listing says.",
    "insulation": "Fitted a full batt in the empty bay behind the vanity, cut to width, not compressed.",
    "head": "Deflection gap packed with mineral wool and closed with the listed joint sealant.",
    "cut-outs": "Cut back to sound board, patched with a screwed board insert and taped.",
    "door-bottom": "Fitted the automatic door bottom and set the plunger to seal on the threshold.",
}


def _users():
    User = get_user_model()
    users = {}
    for username, first, last, _role, _trade in PEOPLE:
        user, created = User.objects.get_or_create(
            username=username, defaults={"first_name": first, "last_name": last}
        )
        if created:
            user.set_password(PASSWORD)
            user.save()
        users[username] = user
    return users


def demo_photo(seed: int, label: str, when: datetime) -> bytes:
    """A generated 'site photo': board, stud shadow, a dark gap, a tape measure, EXIF capture time."""
    rng = random.Random(seed)
    w, h = 1280, 960
    img = Image.new("RGB", (w, h), (196 + rng.randint(-8, 8), 194, 186))
    draw = ImageDraw.Draw(img)
    for x in range(0, w, 4):  # paper texture
        shade = 188 + rng.randint(-6, 6)
        draw.line([(x, 0), (x, h)], fill=(shade, shade - 2, shade - 8))
    floor = int(h * 0.78)
    draw.rectangle([0, floor, w, h], fill=(120, 118, 112))
    gap_y = floor - rng.randint(4, 14)
    draw.rectangle([0, gap_y, w, floor], fill=(28, 26, 24))
    stud = rng.randint(200, 1000)
    draw.rectangle([stud, 0, stud + 36, floor], fill=(175, 170, 160))
    draw.rectangle([80, floor - 70, 560, floor - 30], fill=(236, 196, 40), outline=(40, 40, 40), width=3)
    for i in range(0, 480, 24):
        draw.line(
            [(80 + i, floor - 70), (80 + i, floor - 52 if i % 120 else floor - 40)],
            fill=(30, 30, 30),
            width=2,
        )
    draw.rectangle([20, 20, 20 + 14 * len(label), 64], fill=(255, 255, 255))
    draw.text((30, 30), label, fill=(20, 20, 20))
    img = img.filter(ImageFilter.GaussianBlur(0.6))
    exif = Image.Exif()
    exif[0x0132] = when.strftime("%Y:%m:%d %H:%M:%S")
    out = io.BytesIO()
    img.save(out, "JPEG", quality=82, exif=exif.tobytes())
    return out.getvalue()


def _store_photo(job, wall, finding, user, purpose, data: bytes) -> Photo:
    member = Member.objects.select_related("job", "user").get(job=job, user=user)
    actor = actions.Actor(member, device_id="demo-phone-1")
    return actions.store_photo(actor, data, wall=wall, finding=finding, purpose=purpose)


def _point(wall: Wall, fragment: str) -> SealPoint | None:
    for point in wall.seal_points.all():
        if fragment in point.template_key:
            return point
    return None


@transaction.atomic
def load_demo(photos: bool = True) -> tuple[Job, bool]:
    """Create the demo job once; return (job, created). Running it again changes nothing."""
    users = _users()
    existing = Job.objects.filter(name=JOB_NAME).first()
    if existing is not None:
        load_field_demo(existing)  # rooms and field tests, added once
        return existing, False
    job = Job.objects.create(
        name=JOB_NAME,
        address="418 Quarry Lane, Millbrook (fictional)",
        units="metric",
        rating_scheme="stc",
        rule_set="Project specification (demo): STC 50 between units and at "
        "the lift shaft; STC 45 composite for corridor walls "
        "with their entry doors; field tests ASTC 45 between units, ASTC 40 at corridors",
        field_targets=[
            {"wall_type": None, "descriptor": "astc", "value": 45},
            {"wall_type": "W3", "descriptor": "astc", "value": 40},
        ],
    )
    for username, _first, _last, role, trade in PEOPLE:
        Member.objects.create(job=job, user=users[username], role=role, trade=trade)
    types = {}
    for spec in WALL_TYPES:
        tl, rating = resolve_wall_type_curve(
            tl=[], tl_source="predicted", layers=spec["layers"], rating_scheme="stc"
        )
        types[spec["code"]] = WallType.objects.create(
            job=job, tl=tl, design_rating=rating, tl_source="predicted", rating_scheme="stc", **spec
        )
    inspector = users["inspector"]
    rng = random.Random(2026)
    start = datetime(2026, 11, 16, 8, 30, tzinfo=UTC)
    walls = []
    for level in ("2", "3", "4"):
        for i in range(1, 6):
            code = "W2" if i in (2, 4) else "W1"
            walls.append(
                Wall.objects.create(
                    job=job,
                    wall_type=types[code],
                    tag=f"{level}-D{i}",
                    level=level,
                    location=f"between unit {level}0{i} and {level}0{i + 1}",
                    face_a_label=f"Unit {level}0{i}",
                    face_b_label=f"Unit {level}0{i + 1}",
                    length_m=round(rng.uniform(6.5, 9.5), 2),
                    height_m=2.74,
                    target_rating=50,
                    rating_scheme="stc",
                )
            )
        for side, units_ in (("N", "01–03"), ("S", "04–06")):
            walls.append(
                Wall.objects.create(
                    job=job,
                    wall_type=types["W3"],
                    tag=f"{level}-C{side}",
                    level=level,
                    location=f"corridor wall at units {level}{units_[:2]}–{level}{units_[-2:]}",
                    face_a_label="Corridor",
                    face_b_label=f"Units {level}{units_}",
                    length_m=18.0,
                    height_m=2.74,
                    target_rating=45,
                    rating_scheme="stc",
                )
            )
        walls.append(
            Wall.objects.create(
                job=job,
                wall_type=types["W4"],
                tag=f"{level}-L1",
                level=level,
                location=f"lift shaft beside unit {level}06",
                face_a_label="Lift shaft",
                face_b_label=f"Unit {level}06",
                length_m=2.6,
                height_m=2.74,
                target_rating=50,
                rating_scheme="stc",
            )
        )
    for wall in walls:
        wall.add_template_seal_points()
        Event.record(job, inspector, "wall.created", wall, {"tag": wall.tag})
        if "-C" in wall.tag:
            for n in range(3):
                door = Opening.objects.create(
                    wall=wall,
                    kind="door",
                    label=f"Entry door {n + 1}",
                    width_m=0.91,
                    height_m=2.13,
                    rating=35,
                    fire_rated=True,
                )
                Event.record(job, inspector, "opening.created", door, {"wall": wall.tag})
            wall.add_door_seal_points()

    made = 0
    photo_budget = 14 if photos else 0
    for n, wall in enumerate(walls):
        count = rng.choice((1, 2, 2, 3)) if wall.level != "4" else rng.randint(0, 2)
        patterns = [DOOR_PATTERN] if "-C" in wall.tag and n % 2 == 0 else []
        patterns += rng.sample(FINDING_PATTERNS, k=count)
        for kind, frag, face, trade, geometry, note in patterns:
            if wall.wall_type.construction == "masonry" and kind in ("missing_insulation",):
                continue
            point = _point(wall, frag)
            moment = start + timedelta(minutes=17 * made)
            finding = Finding.objects.create(
                job=job,
                wall=wall,
                seal_point=point,
                kind=kind,
                face=face,
                trade=trade,
                note=note,
                created_by=inspector,
                device_time=moment,
                at_edge=any(k in frag for k in ("bottom", "head", "track")),
                **{k: v for k, v in geometry.items()},
            )
            Event.record(
                job,
                inspector,
                "finding.created",
                finding,
                {"wall": wall.tag, "kind": kind, "trade": trade},
                device_at=moment,
                device_id="demo-phone-1",
            )
            if point is not None:
                point.status = SealStatus.DEFECT
                point.save(update_fields=["status"])
            if photo_budget > 0:
                photo_budget -= 1
                _store_photo(
                    job,
                    wall,
                    finding,
                    inspector,
                    PhotoPurpose.DEFECT,
                    demo_photo(made, f"{wall.tag} {kind}", moment),
                )
            made += 1
            # Level 2 was walked first: its crews have fixed everything and most fixes are verified.
            # On level 3 a few fixes wait for the inspector; level 4 was walked today.
            crew = users.get(trade, inspector)
            if wall.level == "2" or (wall.level == "3" and made % 3 == 0):
                finding.mark_fixed(
                    crew, FIX_NOTES.get(frag, "Repaired to the detail."), device_id="demo-phone-2"
                )
                if wall.level == "2" and made % 3 != 1:
                    finding.verify(inspector, "Checked on site.", device_id="demo-phone-1")
    # Levels 2 and 3 are walked: every seal point without a defect passed.
    for point in SealPoint.objects.filter(
        wall__job=job, wall__level__in=("2", "3"), status=SealStatus.UNCHECKED
    ):
        point.status = SealStatus.PASS
        point.save(update_fields=["status"])
    assert Finding.objects.filter(job=job).count() == made
    assert Finding.objects.filter(job=job, status=FindingStatus.OPEN).exists()
    load_field_demo(job)
    return job, True
