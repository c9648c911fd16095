"""The hand-over report: its content (hashed for sign-off), the PDF (fpdf2) and the punch-list CSV.

:func:`report_content` gathers everything the report states — job, rule set, walls with their
ratings, findings with fixes, verifications and photo hashes, cautions — as plain data. Its
SHA-256 (:func:`content_sha256`, canonical JSON) is what the owner signs: a later change to the
record gives another hash, so the signed report shows as out of date. The PDF is drawn from the
same content, so what is signed is what is printed.

The PDF drawing lives in :mod:`qa.report.pdf`.
"""

from __future__ import annotations

import csv
import hashlib
import io
import json
import re
from datetime import datetime

from django.utils import timezone

from .. import units
from ..audit import audits_for_walls, fix_steps
from ..audit.presentation import finding_size, position_text
from ..audit.verdicts import by_level, face_name, glossary, rollup, verdicts_for_walls
from ..cautions import CAUTIONS, GENERAL_CAUTIONS
from ..choices import FindingStatus
from ..field.prediction import field_for_walls
from ..field.presentation import FIELD_CAUTION, field_summary
from ..models import Event, Finding, Photo, SealPoint, Wall

#: Spreadsheet programs run a cell starting with one of these as a formula (CSV injection).
FORMULA_START = ("=", "+", "-", "@", "\t", "\r")


def _who(user) -> str:
    return (user.get_full_name() or user.username) if user else ""


def _when(moment: datetime | None) -> str:
    return timezone.localtime(moment).strftime("%Y-%m-%d %H:%M") if moment else ""


def size_text(f, u: str) -> str:
    """A finding's recorded size in the job's units."""
    return finding_size(f, u)


def chart_data(summary: dict) -> dict:
    """The part of an audit summary the report's chart draws (:func:`qa.audit.chart.tl_chart`)."""
    views = summary.get("views") or {}

    def view(name: str) -> dict:
        v = views.get(name) or {}
        return {k: v.get(k) for k in ("as_found", "as_found_tl", "after", "after_tl")}

    keys = ("error", "designed", "rating_name", "scheme", "designed_tl")
    return {
        **{k: summary.get(k) for k in keys},
        "views": {"verified": view("verified"), "walked": view("walked")},
    }


def report_content(job) -> dict:
    """Everything the report states, as JSON-ready data (3 queries when the audits are cached)."""
    walls = list(Wall.objects.live().filter(job=job).select_related("wall_type").order_by("level", "tag"))
    audits = audits_for_walls(walls)
    findings = list(
        Finding.objects.live()
        .filter(job=job)
        .select_related("wall", "seal_point", "created_by", "fixed_by", "verified_by")
        .order_by("wall__level", "wall__tag", "id")
    )
    photos: dict[int, list[str]] = {}
    wall_photos: dict[int, list[str]] = {}
    for wid, fid, sha in (
        Photo.objects.filter(job=job, removed=False)
        .order_by("uploaded_at", "id")
        .values_list("wall_id", "finding_id", "sha256")
    ):
        if fid is None:
            wall_photos.setdefault(wid, []).append(sha)
        else:
            photos.setdefault(fid, []).append(sha)
    points: dict[int, list[list[str]]] = {}
    for wid, label, face, point_status in (
        SealPoint.objects.filter(wall__in=walls, removed=False)
        .order_by("wall_id", "position", "id")
        .values_list("wall_id", "label", "face", "status")
    ):
        points.setdefault(wid, []).append([label, face, point_status])
    u = job.units
    steps = {w.pk: fix_steps(audits[w.pk]) for w in walls}
    verdicts = verdicts_for_walls(walls, audits)
    fields = field_for_walls(walls, job)
    wall_rows = []
    for w in walls:
        a = audits[w.pk]
        v = verdicts[w.pk]
        wall_rows.append(
            {
                "id": w.pk,
                "tag": w.tag,
                "level": w.level,
                "location": w.location,
                "face_a": w.face_a_label,
                "face_b": w.face_b_label,
                "state": v["state"],
                "state_word": v["word"],
                "state_text": v["text"],
                "tone": v["tone"],
                "checked": v["coverage"]["checked"],
                "points": v["coverage"]["total"],
                "faces_text": v["faces_text"],
                "wall_type": f"{w.wall_type.code} {w.wall_type.name}",
                "lab_reference": w.wall_type.lab_reference,
                "fire_rated": w.wall_type.fire_rated,
                "seal_points": points.get(w.pk, []),
                "photos": wall_photos.get(w.pk, []),
                # What the PDF's chart draws, so the hash covers the curves as well as the numbers.
                "chart": chart_data(a),
                "field": field_summary(fields[w.pk]),
                "size": f"{units.fmt(w.length_m, 'size', u)} x {units.fmt(w.height_m, 'size', u)}",
                "scheme": a["scheme"],
                "rating_name": a["rating_name"],
                "target": a["target"],
                "designed": a["designed"],
                "walked": a.get("walked"),
                "current": a["as_found"],
                "reported": a["reported"]["as_found"] if a.get("reported") else None,
                "shortfall": a["shortfall"],
                "error": a["error"],
                "terms": (a.get("verified") or {}).get("terms"),
                "flags": [a["flag_text"][f] for f in a.get("flags", [])],
                "unmodelled": a.get("unmodelled", []),
            }
        )
    finding_rows = []
    for f in findings:
        st = steps.get(f.wall_id, {}).get(f.pk, {})
        finding_rows.append(
            {
                "id": f.pk,
                "wall": f.wall.tag,
                "level": f.wall.level,
                "kind": f.get_kind_display(),
                "face": face_name(f.wall, f.face),
                "size": size_text(f, u),
                "position": position_text(f, f.wall, u),
                "trade": f.get_trade_display(),
                "status": f.status,
                "status_label": f.get_status_display(),
                "seal_point": f.seal_point.label if f.seal_point else "",
                "note": f.note,
                "fix_note": f.fix_note,
                "found_by": _who(f.created_by),
                "found_at": _when(f.device_time or f.created_at),
                "fixed_by": _who(f.fixed_by),
                "fixed_at": _when(f.fixed_at),
                "verified_by": _who(f.verified_by),
                "verified_at": _when(f.verified_at),
                "buys": st.get("buys"),
                "alone": st.get("alone"),
                "needed": st.get("needed", False),
                "wall_state": verdicts[f.wall_id]["word"],
                "step": st.get("step"),
                "share": st.get("share"),
                "photos": photos.get(f.pk, []),
            }
        )
    status = [f["status"] for f in finding_rows]
    totals = {
        "walls": len(wall_rows),
        "below_target": sum(1 for w in wall_rows if w["state"] == "below"),
        "meets": sum(1 for w in wall_rows if w["state"] == "meets"),
        "not_fully_walked": sum(1 for w in wall_rows if w["state"] in ("not_walked", "partly_walked")),
        "findings": len(finding_rows),
        "open": sum(s in (FindingStatus.OPEN, FindingStatus.REOPENED) for s in status),
        "fixed": status.count(FindingStatus.FIXED),
        "verified": status.count(FindingStatus.VERIFIED),
    }
    return {
        "job": {
            "id": job.pk,
            "name": job.name,
            "address": job.address,
            "units": job.get_units_display(),
            "rating_scheme": job.get_rating_scheme_display(),
            "rule_set": job.rule_set,
        },
        "targets": sorted({(w["rating_name"], w["target"]) for w in wall_rows if w["target"]}),
        "walls": wall_rows,
        "findings": finding_rows,
        "totals": totals,
        "coverage": {
            "job": _plain_rollup(rollup(walls, verdicts)),
            "levels": [_plain_rollup(r) for r in by_level(walls, verdicts)],
        },
        "glossary": glossary(),
        "cautions": [[c.title, c.text, c.basis] for c in (CAUTIONS[k] for k in GENERAL_CAUTIONS)],
        "field_caution": FIELD_CAUTION,
    }


def _plain_rollup(r: dict) -> dict:
    keys = ("level", "checked", "total", "walls", "meets", "below", "partly_walked", "not_walked", "text")
    return {k: r[k] for k in keys if k in r}


def outstanding(content: dict) -> dict:
    """What is still open before sign-off: open items, walls below target, walls not fully walked."""
    walls = content["walls"]
    return {
        "open": [
            f for f in content["findings"] if f["status"] in (FindingStatus.OPEN, FindingStatus.REOPENED)
        ],
        "waiting": [f for f in content["findings"] if f["status"] == FindingStatus.FIXED],
        "below": [w for w in walls if w["state"] == "below"],
        "unwalked": [w for w in walls if w["state"] in ("not_walked", "partly_walked")],
        "no_rating": [w for w in walls if w["state"] == "no_rating"],
    }


def content_sha256(content: dict) -> str:
    """SHA-256 (hex) of the canonical JSON of the report content."""
    text = json.dumps(content, sort_keys=True, separators=(",", ":"), ensure_ascii=False, default=str)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def last_sign_off(job) -> Event | None:
    return (
        Event.objects.filter(job=job, verb="report.signed")
        .select_related("actor")
        .order_by("-at", "-id")
        .first()
    )


def file_stem(job) -> str:
    return re.sub(r"[^A-Za-z0-9]+", "-", job.name).strip("-").lower() or f"job-{job.pk}"


# --------------------------------------------------------------------------- CSV
def neutralise(value) -> str:
    """A cell that a spreadsheet will show as text, never run as a formula (OWASP CSV injection)."""
    text = "" if value is None else str(value)
    return "'" + text if text.startswith(FORMULA_START) else text


#: Spreadsheet programs read a CSV as UTF-8 only when it starts with the byte order mark; without
#: it they garble cm², × and ⌀.
BOM = "\ufeff"


def _field_cells(field: dict | None) -> list:
    """The wall's field prediction in the CSV: descriptor and value, target, margin, measured."""
    if field is None:
        return ["", "", "", ""]
    name = field["descriptor"]
    return [
        f"{name} {field['now']}" if field["now"] is not None else "",
        f"{name} {field['target']}" if field["target"] is not None else "",
        f"{field['margin']:+.0f}" if field["margin"] is not None else "",
        f"{name} {field['measured']}" if field["measured"] is not None else "",
    ]


def punch_list_csv(job, content: dict | None = None) -> str:
    """The punch list (every live finding) as CSV, one row per finding, sizes in the job's units.

    Starts with a UTF-8 byte order mark; faces are named by the wall's face labels; each row carries
    the state of its wall in the words of :mod:`qa.audit.verdicts` with the seal points checked.
    """
    content = content or report_content(job)
    out = io.StringIO()
    out.write(BOM)
    writer = csv.writer(out)
    walls = {w["tag"]: w for w in content["walls"]}
    writer.writerow(
        [
            "finding",
            "wall",
            "level",
            "kind",
            "face",
            "size",
            "trade",
            "seal point",
            "status",
            "position",
            "fix-first step",
            "fix buys in order",
            "fix buys alone",
            "needed for target",
            "wall state",
            "wall seal points checked",
            "wall field rating predicted now",
            "wall field target",
            "wall field margin now",
            "wall field rating measured",
            "note",
            "found by",
            "found at",
            "fix note",
            "fixed by",
            "fixed at",
            "verified by",
            "verified at",
            "photos",
        ]
    )
    for f in content["findings"]:
        writer.writerow(
            [
                neutralise(v)
                for v in (
                    f["id"],
                    f["wall"],
                    f["level"],
                    f["kind"],
                    f["face"],
                    f["size"],
                    f["trade"],
                    f["seal_point"],
                    f["status_label"],
                    f.get("position", ""),
                    f["step"] or "",
                    f["buys"] if f["buys"] is not None else "",
                    f["alone"] if f["alone"] is not None else "",
                    "yes" if f["needed"] else "",
                    walls[f["wall"]]["state_text"],
                    f"{walls[f['wall']]['checked']} of {walls[f['wall']]['points']}",
                    *_field_cells(walls[f["wall"]]["field"]),
                    f["note"],
                    f["found_by"],
                    f["found_at"],
                    f["fix_note"],
                    f["fixed_by"],
                    f["fixed_at"],
                    f["verified_by"],
                    f["verified_at"],
                    len(f["photos"]),
                )
            ]
        )
    return out.getvalue()
