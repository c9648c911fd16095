"""Page contexts of the field rating: the wall's panel (predicted, and measured beside it) and its chart.

The chart reuses the audit's chart geometry (:mod:`qa.audit.chart`): the predicted apparent
transmission loss (R' = ATL) now and as designed, and each test's measured R' or ATL, per band.
"""

from __future__ import annotations

import math
from html import escape
from typing import Any

from django.utils.safestring import SafeString, mark_safe

from ..audit import chart as ch
from .choices import BuildingKind, JunctionPosition
from .prediction import DESCRIPTOR_NAMES, field_prediction, headline

ROUTE_WORDS = {
    "wall": "through the wall as designed",
    "findings": "through the walk's findings",
    **{p.value: f"flanking at the {p.label.lower()}" for p in JunctionPosition},
}
STATE_WORDS = {"designed": "As designed", "walked": "As walked", "now": "Now"}
TEST_COLOURS = ("#0b6e69", "#6b4fa0", "#8a5a00")


def _single(d: dict | None, key: str) -> Any:
    if d is None:
        return None
    v = d.get(key)
    return v.get("value") if isinstance(v, dict) else v


def _rw_text(d: dict, key: str) -> str:
    v = d.get(key) or {}
    if v.get("value") is None:
        return "—"
    return f"{v['value']} ({v['c']:+d}; {v['ctr']:+d})"


def compare(test: dict, pair: dict | None) -> list[dict]:
    """Rows of measured beside predicted now, one per descriptor the test rated."""
    rows = []
    now = pair["states"]["now"] if pair else None
    for key, name in DESCRIPTOR_NAMES.items():
        measured = _single(test["results"], key)
        if measured is None:
            continue
        predicted = _single(now, key)
        rows.append(
            {
                "name": name,
                "measured": measured,
                "predicted": predicted,
                "difference": None if predicted is None else measured - predicted,
            }
        )
    return rows


def pair_for(result: dict, test: dict) -> dict | None:
    """The predicted pair a test is compared with: its room pair's, else the wall's deciding pair."""
    for p in result.get("pairs") or []:
        if test["room_pair"] is not None and p["room_pair"] == test["room_pair"]:
            return p
    return headline(result)


def field_chart(pair: dict, tests: list[dict]) -> SafeString:
    """Inline SVG: predicted R' now and as designed, and each test's measured R' (or ATL)."""
    series = [
        (
            "designed",
            "predicted as designed",
            pair["states"]["designed"]["bands"]["r_prime"],
            "#1f3a3d",
            2.0,
            "6 4",
        ),
        ("now", "predicted now", pair["states"]["now"]["bands"]["r_prime"], "#b3261e", 2.6, ""),
    ]
    for k, t in enumerate(tests[: len(TEST_COLOURS)]):
        bands = t["results"].get("bands", {})
        measured = (
            bands.get("r_prime") if any(v is not None for v in bands.get("r_prime", [])) else bands.get("atl")
        )
        if measured:
            label = f"measured {t['tested_on']} ({t['standard']})"
            series.append((f"test-{t['id']}", label, measured, TEST_COLOURS[k], 2.2, "2 3"))
    vals = [v for s in series for v in s[2] if v is not None and math.isfinite(v)]
    if not vals:
        return ch.svg(None)
    y_min = 10 * math.floor(min(min(vals), 10) / 10)
    y_max = 10 * math.ceil(max(vals) / 10)

    def y_of(val: float) -> float:
        return ch.TOP + (ch.H - ch.TOP - ch.BOTTOM) * (y_max - val) / (y_max - y_min)

    chart = ch.Chart(
        y_min,
        y_max,
        [(round(y_of(t), 1), f"{t}") for t in range(int(y_min), int(y_max) + 1, 10)],
        [(round(ch._x(ch.BANDS.index(f)), 1), t) for f, t in ch.TICKS.items()],
    )
    for key, label, values, stroke, width, dash in series:
        chart.series.append(ch.Series(key, label, ch._segments(values, y_of), stroke, width, dash))
    return ch.svg(chart, title="Apparent transmission loss by frequency: predicted and measured")


def wall_field_context(wall, job) -> dict[str, Any]:
    """Everything the wall page's field panel shows."""
    wall.job = job
    result = field_prediction(wall)
    head = headline(result)
    tests = result.get("tests", [])
    ctx: dict[str, Any] = {
        "result": result,
        "head": head,
        "building_kind": BuildingKind(job.building_kind).label,
        "tests": [{"t": t, "rows": compare(t, pair_for(result, t))} for t in tests],
    }
    if head is None:
        return ctx
    target = head["target"]
    key = target["descriptor"] if target else "astc"
    ctx.update(
        {
            "descriptor": DESCRIPTOR_NAMES[key],
            "states": [
                {
                    "word": STATE_WORDS[s],
                    "value": _single(head["states"][s], key),
                    "margin": head["states"][s]["margin"],
                }
                for s in ("designed", "walked", "now")
            ],
            "now": {
                "r_prime_w": _rw_text(head["states"]["now"], "r_prime_w"),
                "dnt_w": _rw_text(head["states"]["now"], "dnt_w"),
                "astc": head["states"]["now"]["astc"],
                "nnic": head["states"]["now"]["nnic"],
            },
            "routes": [
                {"word": ROUTE_WORDS.get(r, r), "share": round(100 * v), "bar": round(100 * v, 1)}
                for r, v in sorted(head["states"]["now"]["share_by_route"].items(), key=lambda kv: -kv[1])
                if v >= 0.005
            ],
            "chart": field_chart(head, tests),
        }
    )
    return ctx


def scatter_svg(points: list[dict], far_db: int) -> SafeString:
    """Inline SVG: measured against predicted, one dot a test, with the line of agreement and ±far_db.

    Presentation attributes only (the content security policy forbids style attributes).
    """
    pts = [p for p in points if p.get("predicted") is not None and p.get("measured") is not None]
    if not pts:
        return mark_safe("")
    vals = [v for p in pts for v in (p["predicted"], p["measured"])]
    lo, hi = 5 * math.floor((min(vals) - far_db) / 5), 5 * math.ceil((max(vals) + far_db) / 5)
    size, pad = 260.0, 36.0

    def xy(pred: float, meas: float) -> tuple[float, float]:
        k = (size - 2 * pad) / (hi - lo)
        return round(pad + (pred - lo) * k, 1), round(size - pad - (meas - lo) * k, 1)

    out = [
        f'<svg class="scatter" viewBox="0 0 {size:g} {size:g}" role="img" aria-labelledby="sc-title" '
        'xmlns="http://www.w3.org/2000/svg" font-family="system-ui, sans-serif" font-size="11">',
        '<title id="sc-title">Measured against predicted, dB; dots below the line fell short</title>',
    ]
    (x0, y0), (x1, y1) = xy(lo, lo), xy(hi, hi)
    out.append(
        f'<rect x="{pad}" y="{pad}" width="{size - 2 * pad}" height="{size - 2 * pad}" '
        'fill="#fff" stroke="#8a948f"/>'
    )
    out.append(f'<line x1="{x0}" y1="{y0}" x2="{x1}" y2="{y1}" stroke="#1f3a3d" stroke-width="1.5"/>')
    for d in (far_db, -far_db):
        (a0, b0), (a1, b1) = xy(lo, lo + d), xy(hi, hi + d)
        out.append(f'<line x1="{a0}" y1="{b0}" x2="{a1}" y2="{b1}" stroke="#8a948f" stroke-dasharray="4 3"/>')
    for t in range(int(lo), int(hi) + 1, 5):
        x, _ = xy(t, lo)
        _, y = xy(lo, t)
        out.append(f'<text x="{x}" y="{size - pad + 14}" text-anchor="middle" fill="#14211f">{t}</text>')
        out.append(f'<text x="{pad - 4}" y="{y + 4}" text-anchor="end" fill="#14211f">{t}</text>')
    out.append(
        f'<text x="{size / 2}" y="{size - 4}" text-anchor="middle" fill="#14211f">predicted now</text>'
    )
    out.append(
        f'<text x="10" y="{size / 2}" text-anchor="middle" fill="#14211f" '
        f'transform="rotate(-90 10 {size / 2})">measured</text>'
    )
    for p in pts:
        x, y = xy(p["predicted"], p["measured"])
        short = p["measured"] - p["predicted"] <= -far_db
        label = escape(f"{p['wall']}: {p['name']} measured {p['measured']}, predicted {p['predicted']}")
        out.append(
            f'<circle cx="{x}" cy="{y}" r="5" fill="{"#b3261e" if short else "#0b6e69"}" '
            f'data-test="{int(p["test"])}"><title>{label}</title></circle>'
        )
    out.append("</svg>")
    return mark_safe("".join(out))


#: What goes with every field figure the product prints.
FIELD_CAUTION = (
    "A field prediction is not a field test: field tests follow ASTM E336 or ISO 16283-1 and are done by "
    "qualified testers; local codes and the authority having jurisdiction govern."
)


def field_target_rows(rules: list[dict] | None) -> list[dict[str, Any]]:
    """The job's field targets for a page: wall types first, the rule for every other wall last."""
    rows = [
        {
            "applies": f"wall type {r['wall_type']}" if r.get("wall_type") else "every other wall",
            "descriptor": DESCRIPTOR_NAMES.get(r["descriptor"], r["descriptor"]),
            "value": r["value"],
        }
        for r in sorted(rules or [], key=lambda r: (not r.get("wall_type"), r.get("wall_type") or ""))
    ]
    if len(rows) == 1 and rows[0]["applies"] == "every other wall":
        rows[0]["applies"] = "every wall"
    return rows


def field_summary(result: dict) -> dict[str, Any] | None:
    """One wall's field rating for the report and the CSV: the deciding room pair's descriptor, its
    target, the prediction as designed / as walked / now with the margin now, and the latest measured
    value in the same descriptor (None when no test rated it)."""
    head = headline(result)
    if head is None:
        return None
    target = head["target"]
    key = target["descriptor"] if target else "astc"
    measured = None
    for test in result.get("tests", []):
        if head.get("room_pair") in (None, test.get("room_pair")):
            measured = _single(test.get("results"), key)
            if measured is not None:
                break
    return {
        "descriptor": DESCRIPTOR_NAMES[key],
        "target": target["value"] if target else None,
        "target_derived": bool(target and target["derived"]),
        "designed": _single(head["states"]["designed"], key),
        "walked": _single(head["states"]["walked"], key),
        "now": _single(head["states"]["now"], key),
        "margin": head["states"]["now"]["margin"],
        "measured": measured,
    }
