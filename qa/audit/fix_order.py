"""Fix-first steps: an audit summary's fix order as per-finding rows for pages and reports.

Reads a summary of :func:`qa.audit.audit_summary` (one of its views, by default the wall as
verified) and says, for each finding in the fix-first order, its step, what fixing it buys back, the
rating after it and whether it is needed to reach the target.
"""

from __future__ import annotations


def fix_steps(summary: dict, view: str = "verified") -> dict[int, dict]:
    """{finding id: {step, buys, after, alone, share, needed}} from a view's fix-first order."""
    v = summary.get("views", {}).get(view)
    if not v:
        return {}
    rows = {r["finding"]: r for r in v["rows"]}
    needed = set(v["needed"] or [])
    out, before = {}, v["as_found"]
    for k, (fid, after) in enumerate(zip(v["order"], v["after"], strict=True), start=1):
        r = rows[fid]
        out[fid] = {
            "step": k,
            "buys": after - before,
            "after": after,
            "alone": r["gain"],
            "share": r["power_share"],
            "open_area": r["open_area_500"],
            "needed": fid in needed,
            "flags": r["flags"],
        }
        before = after
    return out
