"""Leak-audit presentation: rating and size texts, the timeline, and the job and wall overviews.

The wall and job pages (:mod:`qa.views.pages`), the crew pages and the hand-over report use the
helpers here to present an audit summary (:func:`qa.audit.audit_summary`).
"""

from __future__ import annotations

from django.db.models import Q

from .. import units
from ..access import can
from ..cautions import CAUTIONS
from ..choices import OPEN_STATUSES, STATUS_GROUPS, FindingStatus, GapKind, Trade
from ..models import Event
from . import chart
from .fix_order import fix_steps
from .verdicts import GAINS, NEEDED, RATINGS, STATES, by_level, face_name, rollup

OPEN = OPEN_STATUSES


# --------------------------------------------------------------------------- presentation helpers
def rating_text(summary: dict, value, terms: dict | None = None) -> str:
    """'STC 47' or 'Rw 52 (C -1; Ctr -5)'; '—' when there is no value."""
    if value is None:
        return "—"
    text = f"{summary['rating_name']} {value}"
    if terms:
        text += f" (C {terms['c']:+d}; Ctr {terms['ctr']:+d})".replace("-", "−")
    return text


def open_area_text(m2: float | None, u: str) -> str:
    """A small equivalent open area in the job's units: cm² (metric) or in² (imperial)."""
    if m2 is None:
        return "—"
    value = units.from_si(m2, "small_area", u)
    if value == 0:
        return f"0 {units.symbol('small_area', u)}"
    digits = 2 if value < 1 else 1 if value < 10 else 0
    return f"{value:.{digits}f} {units.symbol('small_area', u)}"


def finding_size(f, u: str) -> str:
    """A finding's recorded size in the job's units; small areas in cm² or in², never '0 m²'."""

    def gap(v):
        return units.fmt(v, "gap", u)

    parts = []
    if f.width_m and f.length_m:
        parts.append(f"{gap(f.width_m)} × {gap(f.length_m)}")
    elif f.width_m and f.diameter_m:
        parts.append(f"{gap(f.width_m)} gap round ⌀ {gap(f.diameter_m)}")
    elif f.diameter_m:
        parts.append(f"⌀ {gap(f.diameter_m)}")
    if f.area_m2:
        small = f.area_m2 < (0.1 if u != "imperial" else 0.0929)
        parts.append(open_area_text(f.area_m2, u) if small else units.fmt(f.area_m2, "area", u))
    if f.count and f.count > 1:
        parts.append(f"× {f.count}")
    return " ".join(parts) or "—"


def position_text(f, wall, u: str) -> str:
    """Where along the wall: '1.2 m from the left end (seen from Unit 201), low'; '' if not recorded."""
    parts = []
    if f.along_m is not None:
        end = "right" if f.along_from == "end" else "left"
        parts.append(f"{units.fmt(f.along_m, 'size', u)} from the {end} end (seen from {wall.face_a_label})")
    if f.height_band:
        parts.append(f.get_height_band_display().lower())
    return ", ".join(parts)


def item_caution(finding):
    """The caution of a finding's seal point (from its checklist template), or None."""
    point = finding.seal_point
    return CAUTIONS.get(point.caution) if point is not None and point.caution else None


def timeline(job, wall=None, findings=()) -> list[Event]:
    """Events on a wall, its findings and their photos, oldest first (one query)."""
    ids = [str(f.pk) for f in findings]
    q = Q(target_type="finding", target_id__in=ids) | Q(
        target_type="photo", data__finding__in=[f.pk for f in findings]
    )
    if wall is not None:
        q |= Q(target_type="wall", target_id=str(wall.pk))
    return list(Event.objects.filter(job=job).filter(q).select_related("actor").order_by("at", "id"))


def event_text(event: Event, labels: dict) -> str:
    who = (event.actor.get_full_name() or event.actor.username) if event.actor else "system"
    verb = event.verb.replace(".", " ").replace("_", " ")
    what = labels.get((event.target_type, event.target_id), "")
    note = event.data.get("note") if isinstance(event.data, dict) else ""
    text = f"{who}: {verb}{' — ' + what if what else ''}"
    return f"{text} · “{note}”" if note else text


def modelled_paths(summary: dict) -> dict[int, str]:
    """{finding id: how the whole-wall model priced it} for every finding of the walked wall."""
    rows = ((summary.get("views") or {}).get("walked") or {}).get("rows") or summary.get("rows") or []
    return {r["finding"]: r.get("path", "") for r in rows}


def interaction_rows(summary: dict, by_id: dict, member=None) -> list[dict]:
    """Pairs of findings the wall's model joins (through the cavity or under a plate), with the note.

    A crew member sees the pairs that include one of their trade's findings.
    """
    out = []
    for x in summary.get("interactions") or []:
        pair = [by_id.get(i) for i in x["findings"]]
        if member is not None and member.is_crew and not any(f and f.trade == member.trade for f in pair):
            continue
        out.append(
            {
                "ids": x["findings"],
                "findings": pair,
                "path": x.get("path", ""),
                "note": x.get("note", ""),
                "fix_both": x.get("fix_both"),
                "fix_alone": x.get("fix_alone") or [],
                "both_faces": x.get("note", "").startswith("fix both faces"),
            }
        )
    return out


# --------------------------------------------------------------------------- job and wall overviews
FIX_LIST_SHOWN = 40


def _bar(value: int, top: int) -> int:
    return 0 if top <= 0 or value <= 0 else max(4, round(100 * value / top))


def job_overview(params, job, walls: list, audits: dict, findings: list, verdicts: dict) -> dict:
    """Context of the job page: filtered walls, the fix-first list and repeated defects.

    ``findings`` are tuples (id, wall id, trade, status, kind, seal point label) of live findings
    (a crew member's page passes only their trade's); ``verdicts`` come from
    :func:`qa.audit.verdicts.verdicts_for_walls`.
    """
    kinds, trades = dict(GapKind.choices), dict(Trade.choices)
    f = {k: params.get(k, "") for k in ("level", "type", "trade", "status", "below", "all")}
    statuses = STATUS_GROUPS.get(f["status"])
    by_wall: dict[int, list] = {}
    for row in findings:
        by_wall.setdefault(row[1], []).append(row)

    def matches(row) -> bool:
        return (not f["trade"] or row[2] == f["trade"]) and (statuses is None or row[3] in statuses)

    rows, shown_ids = [], set()
    for w in walls:
        a = audits[w.pk]
        mine = by_wall.get(w.pk, [])
        if f["level"] and w.level != f["level"]:
            continue
        if f["type"] and str(w.wall_type_id) != f["type"]:
            continue
        if (f["trade"] or statuses is not None) and not any(matches(r) for r in mine):
            continue
        if f["below"] and not a["shortfall"]:
            continue
        shown_ids.add(w.pk)
        reported = a["reported"]["as_found"] if a.get("reported") else None
        rows.append(
            {
                "wall": w,
                "a": a,
                "v": verdicts[w.pk],
                "target": rating_text(a, a["target"]),
                "designed": rating_text(a, a["designed"]),
                "walked": rating_text(a, a.get("walked")),
                "current": rating_text(a, a["as_found"]),
                "reported": rating_text(a, reported)
                if reported is not None and reported != a["as_found"]
                else "",
                "open": sum(r[3] in OPEN for r in mine),
                "fixed": sum(r[3] == FindingStatus.FIXED for r in mine),
                "below": verdicts[w.pk]["state"] == "below",
            }
        )
    fix_list, walls_by_id = [], {w.pk: w for w in walls}
    steps_of = {pk: fix_steps(audits[pk]) for pk in shown_ids}
    for row in findings:
        if row[1] not in shown_ids or row[3] not in OPEN or (f["trade"] and row[2] != f["trade"]):
            continue
        st = steps_of[row[1]].get(row[0])
        a = audits[row[1]]
        fix_list.append(
            {
                "id": row[0],
                "wall": walls_by_id[row[1]],
                "kind": kinds.get(row[4], row[4]),
                "trade": trades.get(row[2], row[2]),
                "point": row[5] or "",
                "rating": a["rating_name"],
                "buys": st["buys"] if st else None,
                "alone": st["alone"] if st else None,
                "step": st["step"] if st else None,
                "after": st["after"] if st else None,
                "share": round(100 * st["share"]) if st else None,
                "needed": bool(st and st["needed"]),
            }
        )
    fix_list.sort(key=lambda r: (r["buys"] is None, -(r["buys"] or 0), -(r["share"] or 0), r["wall"].tag))
    top = max((r["buys"] or 0 for r in fix_list), default=0)
    for r in fix_list:
        r["bar"] = _bar(r["buys"] or 0, top)
    repeated: dict[tuple, dict] = {}
    for row in findings:
        item = repeated.setdefault(
            (row[4], row[2]),
            {
                "kind": kinds.get(row[4], row[4]),
                "trade": trades.get(row[2], row[2]),
                "count": 0,
                "open": 0,
                "walls": set(),
            },
        )
        item["count"] += 1
        item["open"] += row[3] in OPEN
        item["walls"].add(row[1])
    repeated_rows = sorted(
        ({**v, "walls": len(v["walls"])} for v in repeated.values()), key=lambda v: (-v["count"], v["kind"])
    )
    top_rep = max((v["count"] for v in repeated_rows), default=0)
    for v in repeated_rows:
        v["bar"] = _bar(v["count"], top_rep)
    levels = sorted({w.level for w in walls})
    types = sorted({(w.wall_type_id, w.wall_type.code) for w in walls}, key=lambda t: t[1])
    return {
        "rows": rows,
        "filters": f,
        "levels": levels,
        "types": types,
        "trades": Trade.choices,
        "statuses": [("open", "Open"), ("fixed", "Fixed, awaiting check"), ("verified", "Verified")],
        "fix_list": fix_list if f["all"] else fix_list[:FIX_LIST_SHOWN],
        "fix_total": len(fix_list),
        "repeated": repeated_rows[:15],
        "below_count": sum(r["below"] for r in rows),
        "unwalked_count": sum(r["v"]["state"] in ("not_walked", "partly_walked") for r in rows),
        "wall_count": len(walls),
        "job_cov": rollup(walls, verdicts),
        "level_cov": by_level(walls, verdicts),
        "states": STATES,
        "rating_words": RATINGS,
        "gains": GAINS,
        "needed_term": NEEDED,
        "waiting": sum(r[3] == FindingStatus.FIXED for r in findings),
        "filtered": any(f[k] for k in ("level", "type", "trade", "status", "below")),
    }


def wall_overview(job, member, wall, summary: dict, findings: list, verdict: dict) -> dict:
    """Context of the wall page: verdict, chart, audit table, findings with actions, timeline.

    A crew member sees only their trade's findings and fix-first steps (step numbers stay those of
    the whole wall's order).
    """
    u = job.units
    steps = fix_steps(summary)
    by_id = {f.pk: f for f in findings}
    paths = modelled_paths(summary)
    audit_rows, reached = [], False
    target = summary.get("target")
    verified = summary.get("verified") or {}
    for fid in verified.get("order", []):
        st, f = steps[fid], by_id.get(fid)
        hits = target is not None and st["after"] >= target and not reached
        reached = reached or hits
        if member.is_crew and (f is None or f.trade != member.trade):
            continue
        audit_rows.append(
            {
                "finding": f,
                "step": st["step"],
                "buys": st["buys"],
                "alone": st["alone"],
                "after": rating_text(summary, st["after"]),
                "area": open_area_text(st["open_area"], u),
                "share": f"{100 * st['share']:.0f} %" if st["share"] >= 0.005 else "< 1 %",
                "share_bar": _bar(round(1000 * st["share"]), 1000),
                "needed": st["needed"],
                "reaches": hits,
                "path": paths.get(fid, ""),
            }
        )
    chart_obj = chart.tl_chart(summary, verdict=verdict)
    crew_trade = member.trade if member.is_crew else None
    items = []
    for f in findings:
        mine = crew_trade is None or f.trade == crew_trade
        if member.is_crew and not mine:
            continue
        items.append(
            {
                "f": f,
                "size": finding_size(f, u),
                "position": position_text(f, wall, u),
                "face": face_name(wall, f.face),
                "caution": item_caution(f),
                "feedback": [],
                "photos": list(f.photos.all()),
                "step": steps.get(f.pk),
                "path": paths.get(f.pk, ""),
                "can_fix": can(member, "fix") and mine and f.status in OPEN,
                "can_check": can(member, "verify") and f.status == FindingStatus.FIXED,
                "can_reopen": can(member, "verify") and f.status == FindingStatus.VERIFIED,
            }
        )
    events = timeline(job, wall, findings)
    labels = {("wall", str(wall.pk)): f"wall {wall.tag}"}
    labels.update({("finding", str(f.pk)): f"{f.get_kind_display().lower()} #{f.pk}" for f in findings})
    for e in events:
        if e.target_type == "photo" and isinstance(e.data, dict) and e.data.get("finding"):
            labels[("photo", e.target_id)] = f"photo of #{e.data['finding']}"
    names = dict(summary.get("flag_text", {}))
    unmodelled = [
        {"finding": by_id.get(x["finding"]), "id": x["finding"], "reason": x["reason"]}
        for x in summary.get("unmodelled", [])
    ]
    s = summary
    return {
        "summary": s,
        "v": verdict,
        "states": STATES,
        "rating_words": RATINGS,
        "gains": GAINS,
        "needed_term": NEEDED,
        "audit_rows": audit_rows,
        "chart_svg": chart.svg(chart_obj),
        "legend": chart.legend(chart_obj),
        "ratings": {
            "designed": rating_text(s, s.get("designed"), s.get("designed_terms")),
            "walked": rating_text(
                s, s.get("walked"), ((s.get("views") or {}).get("walked") or {}).get("terms")
            ),
            "current": rating_text(s, s.get("as_found"), verified.get("terms")),
            "reported": rating_text(
                s, (s.get("reported") or {}).get("as_found"), (s.get("reported") or {}).get("terms")
            ),
            "target": rating_text(s, target),
        },
        "reaches": verified.get("reaches_target"),
        "needed_count": len(verified.get("needed") or []),
        "items": items,
        "events": [{"e": e, "text": event_text(e, labels)} for e in reversed(events)],
        "flags": [names[k] for k in s.get("flags", [])],
        "unmodelled": unmodelled,
        "interactions": interaction_rows(summary, by_id, member),
        "fixed_waiting": sum(f.status == FindingStatus.FIXED for f in findings),
    }
