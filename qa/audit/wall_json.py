"""A wall's leak audit as the API serves it, read from the cached summary (:func:`qa.audit.audit_summary`).

One shape for scripts and consultants: the ratings of the wall designed, as found (every live finding
open), now (only verified fixes count) and if the reported fixes hold; each finding still costing
the wall with its cost alone and in the fix-first order and the path the whole-wall model priced;
the order, the rating after each step, the findings needed to reach the target; the pairs that leak
together; the validity flags with their words; the engine and adapter versions. Ratings are
laboratory-type estimates from the recorded defects, not a field test.
"""

from __future__ import annotations

from typing import Any

from .fix_order import fix_steps

#: Keys of each finding in :func:`audit_json` (the documented shape).
FINDING_KEYS = (
    "id",
    "kind",
    "label",
    "status",
    "cost_alone",
    "cost_in_order",
    "step",
    "needed",
    "path",
    "path_kind",
    "power_share",
    "open_area_500_m2",
    "flags",
)


def audit_json(summary: dict, wall) -> dict[str, Any]:
    """The API form of a wall's audit summary (plain JSON types; ids are finding ids).

    Parameters
    ----------
    summary : dict
        From :func:`qa.audit.audit_summary`.
    wall : Wall

    Returns
    -------
    dict
        ``wall``, ``tag``, ``rating``, ``target``, ``designed``, ``as_found``, ``now``,
        ``if_reported_fixes_hold``, ``shortfall``, ``findings`` (each: :data:`FINDING_KEYS`; ratings
        points, areas m^2), ``order``, ``after``, ``needed``, ``interactions``, ``unmodelled``,
        ``flags``, ``flag_text``, ``engine_version``, ``audit_version``, ``estimate``, ``error``.
    """
    views = summary.get("views") or {}
    now = views.get("verified") or {}
    steps = fix_steps(summary)
    findings = []
    for r in now.get("rows") or []:
        st = steps.get(r["finding"]) or {}
        findings.append(
            {
                "id": r["finding"],
                "kind": r.get("kind"),
                "label": r.get("label"),
                "status": r.get("status"),
                "cost_alone": r.get("alone", r.get("gain")),
                "cost_in_order": st.get("buys"),
                "step": st.get("step"),
                "needed": bool(st.get("needed")),
                "path": r.get("path", ""),
                "path_kind": r.get("path_kind", ""),
                "power_share": r.get("power_share"),
                "open_area_500_m2": r.get("open_area_500"),
                "flags": list(r.get("flags") or []),
            }
        )
    return {
        "wall": wall.pk,
        "tag": wall.tag,
        "rating": summary.get("rating_name"),
        "target": summary.get("target"),
        "designed": summary.get("designed"),
        "as_found": summary.get("walked"),
        "now": summary.get("as_found"),
        "if_reported_fixes_hold": (views.get("reported") or {}).get("as_found"),
        "shortfall": summary.get("shortfall"),
        "findings": findings,
        "order": list(now.get("order") or []),
        "after": list(now.get("after") or []),
        "needed": now.get("needed"),
        "interactions": list(summary.get("interactions") or []),
        "unmodelled": list(summary.get("unmodelled") or []),
        "flags": list(summary.get("flags") or []),
        "flag_text": dict(summary.get("flag_text") or {}),
        "engine_version": summary.get("engine_version"),
        "audit_version": summary.get("v"),
        "estimate": "laboratory-type estimate from the recorded defects; not a field test",
        "error": summary.get("error"),
    }
