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

from django.db.models import Count, Q

from ..models import FieldTest, Finding, Wall
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


def test_plan(job) -> dict[str, Any]:
    """The job's walls ranked for field testing, JSON-ready: ``rows`` in test order, ``by_walk``."""
    from ..audit import audits_for_walls

    walls = list(Wall.objects.live().filter(job=job).select_related("wall_type").order_by("level", "tag"))
    fields = field_for_walls(walls, job.building_kind)
    audits = audits_for_walls(walls)
    counts = dict(
        Finding.objects.live()
        .filter(job=job)
        .values("wall_id")
        .annotate(n=Count("id", filter=Q(removed=False)))
        .values_list("wall_id", "n")
    )
    tested = set(FieldTest.objects.filter(wall__job=job).values_list("wall_id", flat=True))
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
