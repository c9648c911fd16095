"""The one vocabulary of wall verdicts: the state of a wall, how much of it was walked, the gains.

Every place that tells a person how a wall stands — the job and wall pages, the API, the walk's
bundle, the hand-over report (page, PDF, CSV) — takes its words from here, so a wall reads the same
everywhere:

- **coverage**: seal points checked (pass, defect or not applicable) of the wall's total, per face;
- **state**: one of :data:`STATES`. A wall *meets* its target only when every seal point is checked
  and the current rating reaches the target. A wall whose current rating is already short is
  *below target* however much of it was walked (unchecked points can only add leaks). Otherwise an
  unfinished walk says so: *not walked* (nothing checked) or *partly walked* (some checked), with
  the count;
- **ratings**: :data:`RATINGS` names the views of one wall's audit (designed, as found, current, if
  reported fixes hold, target) — the summary's key ``as_found`` is the *current* rating;
- **gains**: :data:`GAINS` names the two kinds of gain of a fix — *in order* (what it buys after
  the fixes before it in the fix-first order) and *alone* (what it buys by itself).

Coverage is read from the seal points on every call (one query for many walls), never from the
cached audit: ticking a seal point does not change the audit, but it changes the verdict.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass
from typing import Any

from django.db.models import Count

from ..choices import Face, SealStatus
from ..models import SealPoint


@dataclass(frozen=True)
class Term:
    """One word of the vocabulary: the key code uses, the word people read, what it means."""

    key: str
    word: str
    meaning: str
    tone: str = "neutral"  # good | bad | pending | neutral: the colour, the same on every surface


#: The states of a wall, most decisive first. ``tone`` picks the colour: meeting the target is
#: "good" (green), never "bad" (red); an unfinished walk is "pending" (amber).
STATES: dict[str, Term] = {
    t.key: t
    for t in (
        Term(
            "meets",
            "Meets target",
            "Every seal point is checked and the current rating reaches the target.",
            "good",
        ),
        Term(
            "below",
            "Below target",
            "The current rating is short of the target. Seal points not checked yet can only lower it.",
            "bad",
        ),
        Term(
            "partly_walked",
            "Partly walked",
            "Some seal points are not checked yet: the rating counts only what was recorded so far, "
            "so the wall cannot be called meeting its target.",
            "pending",
        ),
        Term(
            "not_walked",
            "Not walked",
            "No seal point is checked yet: the rating is the designed wall with nothing recorded, "
            "not a finding that the wall is sound.",
            "pending",
        ),
        Term(
            "no_target", "No target", "Every seal point is checked; the wall has no target rating.", "neutral"
        ),
        Term(
            "no_rating", "No rating", "No rating can be estimated for this wall (see the reason).", "neutral"
        ),
    )
}

#: The ratings of one wall's audit, in reading order. Keys are the words' own, not the summary's.
RATINGS: dict[str, Term] = {
    t.key: t
    for t in (
        Term("target", "Target", "The rating the wall must reach."),
        Term("designed", "Designed", "The wall type as designed, with its openings and no defects."),
        Term("as_found", "As found", "Every recorded finding open: the wall as the inspector found it."),
        Term(
            "current",
            "Current",
            "Only fixes the inspector verified count as fixed: the wall as it stands now.",
        ),
        Term(
            "reported",
            "If reported fixes hold",
            "Fixes a crew reported also count as fixed, before the inspector checks them.",
        ),
    )
}

#: The two kinds of gain of one fix.
GAINS: dict[str, Term] = {
    t.key: t
    for t in (
        Term(
            "in_order",
            "in order",
            "Rating points the fix buys back when the wall's fixes are done in the fix-first order, "
            "after the fixes before it. The steps add up to the whole gain of the wall.",
        ),
        Term(
            "alone",
            "alone",
            "Rating points the fix buys back by itself, every other finding left open. Several small "
            "leaks on one wall often buy little alone and much together.",
        ),
    )
}

#: Marks the fix-first items that are needed to reach the target (the highlighted ones).
NEEDED = Term(
    "needed",
    "needed for target",
    "The fixes of the shortest start of the fix-first order that brings the wall to its target.",
    "good",
)

#: Added to a verdict shown from an audit a moment old while the wall's newest changes are counted
#: (lists only; see :func:`qa.audit.summary.audits_for_walls`).
RECOUNTING = "(from a moment ago; the newest changes are being counted)"

#: What "checked" means for a seal point.
CHECKED_STATUSES = (SealStatus.PASS, SealStatus.DEFECT, SealStatus.NA)
FACE_ORDER = (Face.A.value, Face.B.value, Face.THROUGH.value)


def glossary() -> list[dict]:
    """Every term of the vocabulary as rows {group, word, meaning} (the report's glossary)."""
    rows = [{"group": "Wall state", "word": t.word, "meaning": t.meaning} for t in STATES.values()]
    rows += [{"group": "Rating", "word": t.word, "meaning": t.meaning} for t in RATINGS.values()]
    rows += [{"group": "Gain of a fix", "word": t.word, "meaning": t.meaning} for t in GAINS.values()]
    rows.append({"group": "Fix-first list", "word": NEEDED.word, "meaning": NEEDED.meaning})
    rows.append(
        {
            "group": "Coverage",
            "word": "checked",
            "meaning": "A seal point marked pass, defect or not applicable; 'n of m checked' counts them.",
        }
    )
    return rows


# --------------------------------------------------------------------------- coverage
def face_name(wall, face: str) -> str:
    """The name people use for a face: the wall's own face label, or 'through the wall'."""
    if face == Face.A:
        return wall.face_a_label or "Face A"
    if face == Face.B:
        return wall.face_b_label or "Face B"
    return "Through the wall"


def _coverage(wall, counts: dict[str, list[int]]) -> dict:
    faces = [
        {"face": f, "name": face_name(wall, f), "checked": c[0], "total": c[1]}
        for f in FACE_ORDER
        if (c := counts.get(f))
    ]
    return {
        "checked": sum(f["checked"] for f in faces),
        "total": sum(f["total"] for f in faces),
        "faces": faces,
    }


def coverage_of(wall, points: Iterable) -> dict:
    """Coverage of one wall from its live seal points already loaded (no query)."""
    counts: dict[str, list[int]] = {}
    for p in points:
        slot = counts.setdefault(p.face, [0, 0])
        slot[1] += 1
        slot[0] += p.status in CHECKED_STATUSES
    return _coverage(wall, counts)


def coverage_for_walls(walls: Iterable) -> dict[int, dict]:
    """{wall id: coverage} for ``walls`` in one query.

    Coverage is ``{"checked", "total", "faces": [{"face", "name", "checked", "total"}]}`` over the
    wall's live seal points; ``faces`` lists A, B and through-the-wall points that exist.
    """
    walls = list(walls)
    counts: dict[int, dict[str, list[int]]] = {w.pk: {} for w in walls}
    rows = (
        SealPoint.objects.filter(wall__in=[w.pk for w in walls], removed=False)
        .values_list("wall_id", "face", "status")
        .annotate(n=Count("id"))
        .order_by()
    )
    for wall_id, face, status, n in rows:
        slot = counts[wall_id].setdefault(face, [0, 0])
        slot[1] += n
        if status in CHECKED_STATUSES:
            slot[0] += n
    return {w.pk: _coverage(w, counts[w.pk]) for w in walls}


def coverage_text(cov: dict) -> str:
    """'7 of 11 seal points checked'."""
    return f"{cov['checked']} of {cov['total']} seal point{'s' if cov['total'] != 1 else ''} checked"


def faces_text(cov: dict) -> str:
    """'Unit 201: 3 of 5 · Unit 202: 2 of 5 · Through the wall: 4 of 7'."""
    return " · ".join(f"{f['name']}: {f['checked']} of {f['total']}" for f in cov["faces"])


# --------------------------------------------------------------------------- verdict
def state_of(summary: dict, cov: dict) -> str:
    """The key of the wall's state in :data:`STATES` (see the module docstring for the rules)."""
    if summary.get("error") or summary.get("as_found") is None:
        return "no_rating"
    if summary.get("shortfall"):
        return "below"
    if cov["total"] == 0 or cov["checked"] < cov["total"]:
        return "not_walked" if cov["checked"] == 0 else "partly_walked"
    if summary.get("target") is None:
        return "no_target"
    return "meets"


def verdict(summary: dict, cov: dict) -> dict:
    """A wall's verdict as JSON-ready data, the same on every surface.

    Returns
    -------
    dict
        ``state`` (key of :data:`STATES`), ``word``, ``tone``, ``meaning``, ``text`` (the word with
        the short-by or the coverage count, e.g. "Partly walked: 5 of 17 seal points checked"), ``coverage``
        (see :func:`coverage_for_walls`), ``coverage_text``, ``faces_text``, ``rating_name``,
        ``ratings`` ({key of :data:`RATINGS`: value or None}), ``shortfall`` and ``recounting`` (the
        audit is a moment old and the wall's newest changes are being counted; :data:`RECOUNTING`
        is then added to ``text``).
    """
    state = state_of(summary, cov)
    term = STATES[state]
    if state == "below":
        text = f"{term.word} by {summary['shortfall']} ({coverage_text(cov)})"
    elif state in ("not_walked", "partly_walked"):
        text = f"{term.word}: {coverage_text(cov)}"
    elif state == "no_rating":
        text = f"{term.word}: {summary.get('error') or 'no curve'}"
    else:
        text = term.word
    recounting = bool(summary.get("recounting"))
    if recounting:  # an audit a moment old, served to a list while the wall's latest changes are counted
        text += f" {RECOUNTING}"
    reported = (summary.get("reported") or {}).get("as_found")
    return {
        "state": state,
        "word": term.word,
        "tone": term.tone,
        "text": text,
        "meaning": term.meaning,
        "coverage": cov,
        "coverage_text": coverage_text(cov),
        "faces_text": faces_text(cov),
        "rating_name": summary.get("rating_name", ""),
        "ratings": {
            "target": summary.get("target"),
            "designed": summary.get("designed"),
            "as_found": summary.get("walked"),
            "current": summary.get("as_found"),
            "reported": reported,
        },
        "shortfall": summary.get("shortfall"),
        "recounting": recounting,
    }


def verdicts_for_walls(
    walls: Iterable, audits: dict[int, dict] | None = None, *, max_age: float = 0
) -> dict[int, dict]:
    """{wall id: :func:`verdict`} for ``walls`` (audits looked up when not given, with ``max_age``:
    see :func:`qa.audit.summary.audits_for_walls`)."""
    from .summary import audits_for_walls

    walls = list(walls)
    if audits is None:
        audits = audits_for_walls(walls, max_age=max_age, whole=False)
    covs = coverage_for_walls(walls)
    return {w.pk: verdict(audits[w.pk], covs[w.pk]) for w in walls}


def rollup(walls: Iterable, verdicts: dict[int, dict]) -> dict:
    """Coverage and states summed over ``walls``: {checked, total, walls, <state key>: count, text}."""
    out: dict[str, Any] = {"checked": 0, "total": 0, "walls": 0, **dict.fromkeys(STATES, 0)}
    for w in walls:
        v = verdicts[w.pk]
        out["checked"] += v["coverage"]["checked"]
        out["total"] += v["coverage"]["total"]
        out["walls"] += 1
        out[v["state"]] += 1
    out["text"] = coverage_text(out)
    out["walked_walls"] = out["walls"] - out["not_walked"] - out["partly_walked"]
    return out


def by_level(walls: Iterable, verdicts: dict[int, dict]) -> list[dict]:
    """:func:`rollup` per level, in the walls' order: [{level, ...rollup}]."""
    levels: dict[str, list] = {}
    for w in walls:
        levels.setdefault(w.level, []).append(w)
    return [{"level": level, **rollup(ws, verdicts)} for level, ws in levels.items()]
