"""The TL chart of a wall: designed, as found, after each fix, and the rating's reference contour.

One geometry (:func:`tl_chart`) in chart units drawn two ways: inline SVG for pages (:func:`svg`,
presentation attributes only, since the content security policy forbids style attributes) and
fpdf2 primitives for the hand-over report (:mod:`qa.report`). Each curve differs by dash pattern as
well as colour, so the chart reads in greyscale print.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from html import escape

from django.utils.safestring import SafeString, mark_safe

from acoustics.bands import BANDS as _BANDS

BANDS = tuple(int(f) for f in _BANDS)  # nominal centres, Hz, as ints for labels
TICKS = {63: "63", 125: "125", 250: "250", 500: "500", 1000: "1k", 2000: "2k", 4000: "4k"}

# Chart box in its own units (the SVG viewBox; the PDF scales it to millimetres).
W, H = 420.0, 300.0
LEFT, RIGHT, TOP, BOTTOM = 46.0, 10.0, 12.0, 44.0

STYLES = {  # stroke colour, width, dash ("" = solid)
    "designed": ("#1f3a3d", 2.2, ""),
    "walked": ("#8a5a00", 1.6, "9 4"),
    "current": ("#b3261e", 3.0, ""),
    "after": ("#0b6e69", 1.2, "6 4"),
    "contour": ("#6b4fa0", 1.8, "2 3"),
}
#: The current curve takes the colour of the wall's state (qa.audit.verdicts tones): red only when
#: the wall is below target, so a wall that meets its target is never drawn red.
TONE_STROKE = {"bad": "#b3261e", "good": "#1c7c3a", "pending": "#5d4a8a", "neutral": "#37474f"}


@dataclass
class Series:
    key: str
    label: str
    segments: list[list[tuple[float, float]]]
    stroke: str
    width: float
    dash: str


@dataclass
class Chart:
    y_min: float
    y_max: float
    y_ticks: list[tuple[float, str]]
    x_ticks: list[tuple[float, str]]
    series: list[Series] = field(default_factory=list)
    title: str = ""


def _x(i: int) -> float:
    return LEFT + (W - LEFT - RIGHT) * i / (len(BANDS) - 1)


def _segments(values, y_of) -> list[list[tuple[float, float]]]:
    segs: list[list[tuple[float, float]]] = [[]]
    for i, v in enumerate(values):
        if v is None or not math.isfinite(v):
            if segs[-1]:
                segs.append([])
            continue
        segs[-1].append((round(_x(i), 1), round(y_of(v), 1)))
    return [s for s in segs if len(s) > 1]


def tl_chart(summary: dict, view: str = "verified", verdict: dict | None = None) -> Chart | None:
    """Chart geometry of a wall's audit (``summary`` from :func:`qa.audit.audit_summary`).

    Returns None when the wall has no rating (no curve). Curves on all 21 bands, labelled with the
    words of :mod:`qa.audit.verdicts`: designed TL; *current* TL (the ``view``, verified fixes
    only), coloured by the wall's state when ``verdict`` is given; *as found* TL (every recorded
    finding open) when it differs from current; TL after each step of the fix-first order; the
    rating's reference contour placed at the current rating (:func:`acoustics.contour`).
    """
    import acoustics

    from .verdicts import RATINGS

    if summary.get("error") or summary.get("designed") is None:
        return None
    v = summary["views"][view]
    walked = summary["views"].get("walked") or v
    name = summary["rating_name"]
    contour = acoustics.contour(summary["scheme"], v["as_found"]).tolist()
    curves = [summary["designed_tl"], v["as_found_tl"], walked["as_found_tl"], contour, *v["after_tl"]]
    vals = [x for c in curves for x in c if x is not None and math.isfinite(x)]
    y_min = 10 * math.floor(min(min(vals), 10) / 10)
    y_max = 10 * math.ceil(max(vals) / 10)

    def y_of(val: float) -> float:
        return TOP + (H - TOP - BOTTOM) * (y_max - val) / (y_max - y_min)

    step = 10 if y_max - y_min <= 80 else 20
    chart = Chart(
        y_min,
        y_max,
        [(round(y_of(t), 1), f"{t}") for t in range(int(y_min), int(y_max) + 1, step)],
        [(round(_x(BANDS.index(f)), 1), t) for f, t in TICKS.items()],
    )
    for k, (tl, rating) in enumerate(zip(v["after_tl"][:-1], v["after"][:-1], strict=True), start=1):
        stroke, width, dash = STYLES["after"]
        chart.series.append(
            Series(f"after-{k}", f"after fix {k}: {name} {rating}", _segments(tl, y_of), stroke, width, dash)
        )
    # The last step of the order is the designed wall itself, drawn below.
    lines = [
        ("contour", f"{name} reference contour at {v['as_found']}", contour),
        (
            "designed",
            f"{RATINGS['designed'].word.lower()}: {name} {summary['designed']}",
            summary["designed_tl"],
        ),
    ]
    if walked is not v and walked["as_found"] != v["as_found"]:
        label = f"{RATINGS['as_found'].word.lower()}: {name} {walked['as_found']} (every finding open)"
        lines.append(("walked", label, walked["as_found_tl"]))
    label = f"{RATINGS['current'].word.lower()}: {name} {v['as_found']} (verified fixes only)"
    lines.append(("current", label, v["as_found_tl"]))
    for key, label, values in lines:
        stroke, width, dash = STYLES[key]
        if key == "current" and verdict is not None:
            stroke = TONE_STROKE.get(verdict["tone"], stroke)
        chart.series.append(Series(key, label, _segments(values, y_of), stroke, width, dash))
    return chart


def _path(seg: list[tuple[float, float]]) -> str:
    return "M" + " L".join(f"{x:g} {y:g}" for x, y in seg)


def svg(chart: Chart | None, *, title: str = "Transmission loss by frequency") -> SafeString:
    """Inline SVG of ``chart`` (a scalable viewBox; no style attributes, no script)."""
    if chart is None:
        return mark_safe("")
    t = escape(title)
    out = [
        f'<svg class="tl-chart" viewBox="0 0 {W:g} {H:g}" role="img" aria-labelledby="tl-title" '
        f'xmlns="http://www.w3.org/2000/svg" font-family="system-ui, sans-serif" font-size="12">',
        f'<title id="tl-title">{t}</title>',
        f'<rect x="{LEFT}" y="{TOP}" width="{W - LEFT - RIGHT}" height="{H - TOP - BOTTOM}" '
        f'fill="#ffffff" stroke="#8a948f" stroke-width="1"/>',
    ]
    for y, label in chart.y_ticks:
        out.append(
            f'<line x1="{LEFT}" x2="{W - RIGHT}" y1="{y}" y2="{y}" stroke="#d5dad7" stroke-width="1"/>'
        )
        out.append(f'<text x="{LEFT - 5}" y="{y + 4}" text-anchor="end" fill="#14211f">{label}</text>')
    for x, label in chart.x_ticks:
        out.append(
            f'<line x1="{x}" x2="{x}" y1="{TOP}" y2="{H - BOTTOM}" stroke="#e3e7e4" stroke-width="1"/>'
        )
        out.append(f'<text x="{x}" y="{H - BOTTOM + 15}" text-anchor="middle" fill="#14211f">{label}</text>')
    out.append(
        f'<text x="{(LEFT + W - RIGHT) / 2}" y="{H - 8}" text-anchor="middle" fill="#14211f" '
        f'font-weight="600">Frequency (Hz)</text>'
    )
    cy = (TOP + H - BOTTOM) / 2
    out.append(
        f'<text x="13" y="{cy}" text-anchor="middle" fill="#14211f" font-weight="600" '
        f'transform="rotate(-90 13 {cy})">Transmission loss (dB)</text>'
    )
    for s in chart.series:
        dash = f' stroke-dasharray="{s.dash}"' if s.dash else ""
        d = " ".join(_path(seg) for seg in s.segments)
        if d:
            out.append(
                f'<path d="{d}" fill="none" stroke="{s.stroke}" stroke-width="{s.width}"{dash} '
                f'stroke-linejoin="round" data-series="{escape(s.key)}">'
                f"<title>{escape(s.label)}</title></path>"
            )
    out.append("</svg>")
    return mark_safe("".join(out))


def legend(chart: Chart | None) -> list[dict]:
    """Legend rows for a template: label, colour, width, dash (drawn as a tiny SVG line)."""
    if chart is None:
        return []
    rows, after = [], [s for s in chart.series if s.key.startswith("after-")]
    for s in chart.series:
        if s.key.startswith("after-"):
            continue
        rows.append({"label": s.label, "stroke": s.stroke, "width": s.width, "dash": s.dash})
    if after:
        s = after[0]
        label = "after each fix step, in fix-first order (the last step is the designed curve)"
        rows.insert(2, {"label": label, "stroke": s.stroke, "width": s.width, "dash": s.dash})
    return rows
