"""The job's test plan: which room pairs to field-test first.

Consultants pick field-test locations where a failure is most likely and where the walk found most:
walls are ranked by predicted field margin now (smallest first; walls with no field target last)
and, second, by what the walk found (the rating the recorded findings cost the wall, then their
number). Both orders are given; the CSV and the printable page follow the first.
"""

from __future__ import annotations

import csv
import io
from typing import Any

import numpy as np
from django.db.models import Count, Q

from ..models import Finding, Wall
from .inputs import CAUTION
from .prediction import DESCRIPTOR_NAMES, field_for_walls, headline

CSV_HEADER = [
    "rank",
    "wall",
    "level",
    "location",
    "rooms",
    "descriptor",
    "predicted_now",
    "target",
    "margin",
    "predicted_designed",
    "findings",
    "walk_cost",
    "walk_rank",
    "tested",
]


def _row(wall, result: dict, audit: dict, counts: dict, tested: set) -> dict[str, Any]:
    head = headline(result)
    target = head["target"] if head else None
    descriptor = target["descriptor"] if target else "astc"

    def value(state: str) -> Any:
        if head is None:
            return None
        v = head["states"][state][descriptor]
        return v["value"] if isinstance(v, dict) else v

    designed, walked = audit.get("designed"), audit.get("walked")
    return {
        "wall": wall.pk,
        "tag": wall.tag,
        "level": wall.level,
        "location": wall.location,
        "rooms": head["label"] if head else "",
        "descriptor": DESCRIPTOR_NAMES[descriptor],
        "predicted_now": value("now"),
        "predicted_designed": value("designed"),
        "target": None if target is None else target["value"],
        "target_derived": bool(target and target["derived"]),
        "margin": None if head is None else head["states"]["now"]["margin"],
        "findings": counts.get(wall.pk, 0),
        "walk_cost": (designed - walked) if designed is not None and walked is not None else 0,
        "tested": wall.pk in tested,
        "error": result.get("error"),
    }


def job_walls(job) -> tuple[list, dict[int, dict]]:
    """The job's live walls (wall types loaded) and their cached field predictions."""
    walls = list(Wall.objects.live().filter(job=job).select_related("wall_type").order_by("level", "tag"))
    return walls, field_for_walls(walls, job)


def job_test_plan(job, walls_fields: tuple[list, dict] | None = None) -> dict[str, Any]:
    """The job's walls ranked for field testing, JSON-ready: ``rows`` in test order, ``by_walk``.

    ``walls_fields`` is :func:`job_walls`'s answer when the caller already has it.
    """
    from ..audit import audits_for_walls

    walls, fields = walls_fields or job_walls(job)
    audits = audits_for_walls(walls)
    counts = dict(
        Finding.objects.live()
        .filter(job=job)
        .values("wall_id")
        .annotate(n=Count("id", filter=Q(removed=False)))
        .values_list("wall_id", "n")
    )
    tested = {pk for pk, res in fields.items() if res.get("tests")}
    rows = [_row(w, fields[w.pk], audits[w.pk], counts, tested) for w in walls]
    by_walk = sorted(rows, key=lambda r: (-r["walk_cost"], -r["findings"], r["tag"]))
    for i, r in enumerate(by_walk, start=1):
        r["walk_rank"] = i
    rows.sort(
        key=lambda r: (r["margin"] is None, r["margin"] if r["margin"] is not None else 0, r["walk_rank"])
    )
    for i, r in enumerate(rows, start=1):
        r["rank"] = i
    return {
        "job": job.pk,
        "building_kind": job.building_kind,
        "caution": CAUTION,
        "rows": rows,
        "by_walk": [r["wall"] for r in by_walk],
    }


def plan_csv(plan: dict) -> str:
    """The plan as CSV, one row a wall in test order (values as in the JSON)."""
    buf = io.StringIO()
    w = csv.writer(buf)
    w.writerow(CSV_HEADER)
    for r in plan["rows"]:
        w.writerow(["" if r.get(k) is None else _cell(r, k) for k in CSV_HEADER])
    return buf.getvalue()


def _cell(row: dict, key: str) -> Any:
    value = row["tag"] if key == "wall" else row[key]
    if isinstance(value, str) and value[:1] in ("=", "+", "-", "@"):
        return "'" + value  # a spreadsheet must not run a cell as a formula
    return value


#: Measured this far below predicted (dB) marks a wall to look at: about 1.5 times the ~2 dB standard
#: deviation ISO 12354-1 gives for homogeneous buildings (from memory); common practice, no source.
FAR_BELOW_DB = 3
LOOK_FOR = {
    "wall": "the wall itself: board layers, fastening, cavity fill and stud type against the design",
    "findings": "seals the walk recorded: perimeter joints, boxes and penetrations, door seals",
    "floor": "the floor junction: a topping or subfloor running under the wall, a continuous slab",
    "ceiling": "the ceiling junction: a ceiling or joist space running over the wall",
    "end_a": "the side-wall junction at end A: a continuous leaf or an unsealed corner",
    "end_b": "the side-wall junction at end B: a continuous leaf or an unsealed corner",
}


def measured_summary(job, walls_fields: tuple[list, dict] | None = None) -> dict[str, Any]:
    """Over the job's field tests: measured minus predicted now (mean, spread) and walls far below.

    Each test is compared in the descriptor of its wall's field target (ASTC when none), against the
    prediction of its room pair (or the wall's deciding pair).
    """
    from .presentation import compare, pair_for

    walls, fields = walls_fields or job_walls(job)
    points, far = [], []
    for w in walls:
        for t in fields[w.pk].get("tests", []):
            pair = pair_for(fields[w.pk], t)
            target = pair["target"] if pair else None
            descriptor = DESCRIPTOR_NAMES[target["descriptor"] if target else "astc"]
            rows = {r["name"]: r for r in compare(t, pair)}
            row = rows.get(descriptor) or next(iter(rows.values()), None)
            if row is None or row["difference"] is None:
                continue
            point = {"wall": w.tag, "wall_id": w.pk, "test": t["id"], **row}
            points.append(point)
            if row["difference"] <= -FAR_BELOW_DB:
                assert pair is not None  # a difference needs a predicted pair (compare)
                share = pair["states"]["now"]["share_by_route"]
                top = max(share, key=share.get)
                far.append({**point, "look_for": LOOK_FOR.get(top, top)})
    diffs = np.array([p["difference"] for p in points], float)
    return {
        "points": points,
        "count": len(points),
        "mean": None if not len(diffs) else round(float(diffs.mean()), 1),
        "spread": None if len(diffs) < 2 else round(float(diffs.std(ddof=1)), 1),
        "far_below": far,
        "far_db": FAR_BELOW_DB,
    }
