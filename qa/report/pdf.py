"""The hand-over report as PDF (fpdf2): A4, core fonts, TL charts drawn with lines, photo thumbnails.

:func:`render_pdf` draws the content gathered by :func:`qa.report.report_content`, so what is signed
(its SHA-256, :func:`qa.report.content_sha256`) is what is printed.
"""

from __future__ import annotations

import io

from ..audit import chart as chart_mod
from ..audit.verdicts import GAINS, NEEDED, RATINGS
from ..choices import FindingStatus
from ..models import Photo
from .content import _when, _who, content_sha256, last_sign_off

_LATIN = str.maketrans(
    {
        "—": "-",
        "–": "-",
        "−": "-",
        "’": "'",
        "‘": "'",
        "“": '"',
        "”": '"',
        "…": "...",
        "≥": ">=",
        "≤": "<=",
        "⌀": "dia. ",
        "→": "->",
        "›": ">",
        "•": "-",
        "\u00a0": " ",
    }
)


#: Text colours of the wall states' tones (qa.audit.verdicts): the same meaning as on the pages.
TONE_RGB = {"good": (28, 124, 58), "bad": (179, 38, 30), "pending": (93, 74, 138), "neutral": (55, 71, 79)}


def pdf_text(value) -> str:
    """Text for the PDF's core fonts (Latin-1): common typography mapped, anything else '?'."""
    return (
        str(value if value is not None else "")
        .replace("⌀ ", "⌀")
        .translate(_LATIN)
        .encode("latin-1", "replace")
        .decode("latin-1")
    )


def _rating(w: dict, value) -> str:
    if value is None:
        return "-"
    return f"{w['rating_name']} {value}"


def render_pdf(job, content: dict, *, photos: bool = True) -> bytes:
    """The hand-over report as PDF bytes (A4, core fonts, charts drawn with fpdf2 lines)."""
    from fpdf import FPDF
    from fpdf.enums import XPos, YPos

    digest = content_sha256(content)
    signed = last_sign_off(job)
    # Everything printed comes from ``content`` (hashed for sign-off); photos are looked up by the
    # SHA-256 the content lists, so what is signed is what is printed.
    thumbs = _thumbs(job, content) if photos else {}

    pdf = FPDF(format="A4")
    pdf.set_auto_page_break(True, margin=15)
    pdf.set_title(pdf_text(f"Hand-over report - {job.name}"))
    pdf.set_creator("Sealwalk")
    pdf.alias_nb_pages()
    W = pdf.epw

    def para(text, size=10, style="", h=5):
        # Own word wrap: fpdf2's multi_cell costs about 4 ms a paragraph, too slow for 1000 findings.
        pdf.set_font("Helvetica", style, size)
        for line in _wrap(pdf, pdf_text(text), W):
            pdf.cell(W, h, line, new_x=XPos.LMARGIN, new_y=YPos.NEXT)

    def heading(text, size=14):
        pdf.ln(2)
        para(text, size, "B", 7)

    def row(cells, widths, style="", size=8, fill=False, tone=None):
        # A cell too narrow for its text wraps onto more lines (the row grows); nothing is cut.
        pdf.set_font("Helvetica", style, size)
        wrapped = [_wrap(pdf, pdf_text(text), width - 1) for text, width in zip(cells, widths, strict=True)]
        h = 4 * max(len(lines) for lines in wrapped) + 1
        if pdf.will_page_break(h):
            pdf.add_page()
        x, y = pdf.get_x(), pdf.get_y()
        for k, (lines, width) in enumerate(zip(wrapped, widths, strict=True)):
            # The state cell (the one before last) takes its tone's colour: meeting the target is never red.
            if tone and k == len(cells) - 2:
                pdf.set_text_color(*TONE_RGB.get(tone, (0, 0, 0)))
            for i, line in enumerate(lines):
                pdf.set_xy(x, y + 0.5 + 4 * i)
                pdf.cell(width, 4, line, fill=fill)
            pdf.set_text_color(0, 0, 0)
            x += width
        pdf.line(pdf.l_margin, y + h, x, y + h)
        pdf.set_xy(pdf.l_margin, y + h)

    pdf.add_page()
    j = content["job"]
    para(f"Hand-over report: {j['name']}", 18, "B", 9)
    para(j["address"])
    para(f"Rule set: {j['rule_set'] or 'not recorded - confirm with the authority having jurisdiction'}")
    para(f"Rating scheme: {j['rating_scheme']}. Units: {j['units']}.")
    if content["targets"]:
        para("Targets: " + "; ".join(f"{n} {t}" for n, t in content["targets"]))
    t = content["totals"]
    cov = content["coverage"]["job"]
    para(
        f"{t['walls']} walls: {t['meets']} meet their target, {t['below_target']} below target now, "
        f"{t['not_fully_walked']} not fully walked ({cov['text']}). "
        f"{t['findings']} findings: {t['open']} open, "
        f"{t['fixed']} reported fixed awaiting check, {t['verified']} verified.",
        11,
        "B",
    )
    para(f"Report content SHA-256: {digest}", 8)
    if signed is not None:
        state = (
            "matches this report"
            if signed.data.get("sha256") == digest
            else "DOES NOT match this report: the record changed after sign-off"
        )
        para(
            f"Signed off by {signed.data.get('who', _who(signed.actor))} on {_when(signed.at)}; "
            f"signed content {signed.data.get('sha256', '')[:16]}... {state}.",
            9,
            "B",
        )
    else:
        para("Not signed off yet.", 9, "B")
    para(
        "Ratings are laboratory-type estimates from the recorded gaps (designed curve with the findings as "
        f"leaks). {RATINGS['current'].word}: {RATINGS['current'].meaning} {RATINGS['as_found'].word}: "
        f"{RATINGS['as_found'].meaning} A wall meets its target only when every seal point is checked.",
        9,
    )

    heading("Coverage")
    cw = [30, 40, 28, 28, 28, 28]
    row(["Level", "Seal points checked", "Meets", "Below", "Partly walked", "Not walked"], cw, "B")
    for c in [*content["coverage"]["levels"], {**cov, "level": "Job"}]:
        row(
            [
                c["level"],
                f"{c['checked']} of {c['total']}",
                c["meets"],
                c["below"],
                c["partly_walked"],
                c["not_walked"],
            ],
            cw,
            "B" if c["level"] == "Job" else "",
        )

    heading("Glossary")
    for g in content["glossary"]:
        para(f"{g['word']} ({g['group'].lower()}): {g['meaning']}", 8, h=4)

    heading("Cautions")
    for title, text, basis in content["cautions"]:
        para(title, 9, "B")
        para(f"{text} ({basis})", 8, h=4)

    heading("Walls")
    widths = [16, 10, 30, 16, 18, 18, 18, 40, 14]
    row(
        [
            "Wall",
            "Level",
            "Wall type",
            RATINGS["target"].word,
            RATINGS["designed"].word,
            RATINGS["as_found"].word,
            RATINGS["current"].word,
            "State (seal points checked)",
            "Open",
        ],
        widths,
        "B",
    )
    open_by_wall: dict[str, int] = {}
    for f in content["findings"]:
        if f["status"] in (FindingStatus.OPEN, FindingStatus.REOPENED):
            open_by_wall[f["wall"]] = open_by_wall.get(f["wall"], 0) + 1
    for w in content["walls"]:
        row(
            [
                w["tag"],
                w["level"],
                w["wall_type"],
                _rating(w, w["target"]),
                _rating(w, w["designed"]),
                _rating(w, w["walked"]),
                _rating(w, w["current"]),
                f"{w['state_word']}{' by ' + str(w['shortfall']) if w['state'] == 'below' else ''} "
                f"({w['checked']}/{w['points']})",
                open_by_wall.get(w["tag"], 0),
            ],
            widths,
            tone=w["tone"],
        )

    by_wall: dict[str, list] = {}
    for f in content["findings"]:
        by_wall.setdefault(f["wall"], []).append(f)
    for w in content["walls"]:
        items = by_wall.get(w["tag"], [])
        if not items:
            continue
        if pdf.will_page_break(95):
            pdf.add_page()
        heading(f"Wall {w['tag']} - level {w['level']}, {w['location']}", 12)
        pdf.set_text_color(*TONE_RGB.get(w["tone"], (0, 0, 0)))
        para(f"{w['state_text']}.", 10, "B")
        pdf.set_text_color(0, 0, 0)
        para(
            f"{w['wall_type']}"
            f"{' (' + w['lab_reference'] + ')' if w['lab_reference'] else ''}"
            f"{', fire-rated' if w['fire_rated'] else ''}; faces A: {w['face_a']}, B: {w['face_b']}; "
            f"{w['size']}. {RATINGS['target'].word} {_rating(w, w['target'])}, "
            f"{RATINGS['designed'].word.lower()} {_rating(w, w['designed'])}, "
            f"{RATINGS['as_found'].word.lower()} {_rating(w, w['walked'])}, "
            f"{RATINGS['current'].word.lower()} {_rating(w, w['current'])}, "
            f"{RATINGS['reported'].word.lower()} {_rating(w, w['reported'])}. Seal points checked: "
            f"{w['faces_text'] or 'none on this wall'}.",
            9,
        )
        if w["field"] is not None:
            fd = w["field"]
            margin = f", margin {fd['margin']:+.0f}" if fd["margin"] is not None else ""
            target = (
                f" against a field target of {fd['descriptor']} {fd['target']}"
                f"{' (derived from the STC target)' if fd['target_derived'] else ''}"
                if fd["target"] is not None
                else ""
            )
            measured = f"; measured {fd['descriptor']} {fd['measured']}" if fd["measured"] is not None else ""
            para(
                f"Predicted field rating now: {fd['descriptor']} {fd['now']}{target}{margin} "
                f"(as designed {fd['designed']}, as walked {fd['walked']}){measured}. "
                f"{content['field_caution']}",
                8,
            )
        if w["terms"]:
            para(f"Current spectrum terms: C {w['terms']['c']}, Ctr {w['terms']['ctr']} dB (ISO 717-1).", 8)
        if w["error"]:
            para(f"No rating: {w['error']}", 9, "B")
        else:
            _draw_chart(pdf, chart_mod.tl_chart(w["chart"], verdict={"tone": w["tone"]}))
        for text in w["flags"]:
            para(f"Model note: {text}", 7, h=3.5)
        for u in w["unmodelled"]:
            para(f"Finding #{u['finding']} not in the rating: {u['reason']}", 7, h=3.5)
        for f in items:
            if pdf.will_page_break(12):
                pdf.add_page()
            buys = (
                f", fix-first step {f['step']} buys +{f['buys']} {w['rating_name']} {GAINS['in_order'].word}"
                f" (+{f['alone']} {GAINS['alone'].word}){', ' + NEEDED.word if f['needed'] else ''}"
                if f["step"]
                else ""
            )
            para(
                f"#{f['id']} {f['kind']}, {f['size']}, {f['face'].lower()}, {f['trade']}: "
                f"{f['status_label']}{buys}",
                8.5,
                "B",
                4.2,
            )
            fixed = f"Fixed by {f['fixed_by']} {f['fixed_at']}" if f["fixed_at"] else ""
            checked = f"verified by {f['verified_by']} {f['verified_at']}" if f["verified_at"] else ""
            detail = "; ".join(
                x
                for x in (
                    f["seal_point"] and f"At {f['seal_point'].lower()}",
                    f["note"],
                    f"Found by {f['found_by']} {f['found_at']}",
                    fixed,
                    f["fix_note"] and f"fix note: {f['fix_note']}",
                    checked,
                )
                if x
            )
            para(detail, 7.5, h=3.6)
            pics = [thumbs[sha] for sha in f["photos"] if sha in thumbs][:3]
            if pics:
                if pdf.will_page_break(26):
                    pdf.add_page()
                y = pdf.get_y() + 1
                for k, data in enumerate(pics):
                    pdf.image(io.BytesIO(data), x=pdf.l_margin + k * 27, y=y, w=25, h=25)
                pdf.set_y(y + 26)

    heading("Open items (fix-first order within each wall)")
    para(
        f"Buys = rating points {GAINS['in_order'].word}: {GAINS['in_order'].meaning} Items marked "
        f"'{NEEDED.word}' (bold) are the ones that bring their wall to its target.",
        8,
        h=4,
    )
    ow = [16, 12, 34, 40, 30, 14, 34]
    row(["Wall", "#", "Kind", "Size", "Trade", "Buys", "Seal point"], ow, "B")
    open_items = [f for f in content["findings"] if f["status"] != FindingStatus.VERIFIED]
    open_items.sort(key=lambda f: (-(f["buys"] or 0), f["wall"], f["step"] or 0))
    for f in open_items:
        row(
            [
                f["wall"],
                f["id"],
                f["kind"],
                f["size"],
                f["trade"],
                f"+{f['buys']}" if f["buys"] else "",
                f["seal_point"],
            ],
            ow,
            "B" if f["needed"] else "",
        )
    return bytes(pdf.output())


def _widths(pdf) -> dict[str, float]:
    """Character widths (mm) of the current font, remembered per font: a string's width is their sum."""
    key = (pdf.font_family, pdf.font_style, pdf.font_size_pt)
    cache = _WIDTHS.setdefault(key, {})
    return cache


_WIDTHS: dict[tuple, dict[str, float]] = {}


def _width(pdf, text: str, table: dict[str, float]) -> float:
    total = 0.0
    for ch in text:
        w = table.get(ch)
        if w is None:
            w = table[ch] = pdf.get_string_width(ch)
        total += w
    return total


def _wrap(pdf, text: str, width: float) -> list[str]:
    """Lines of ``text`` no wider than ``width`` mm in the current font.

    Linear in the length of the text: each character's width is measured once per font. A word wider
    than the line is broken across lines, never cut: the printed text is the whole hashed text.
    """
    table = _widths(pdf)
    space = _width(pdf, " ", table)
    lines: list[str] = []
    for raw in text.split("\n"):
        line, used = "", 0.0
        for word in raw.split(" "):
            w = _width(pdf, word, table)
            if line and used + space + w <= width:
                line, used = f"{line} {word}", used + space + w
                continue
            if line:
                lines.append(line)
            while w > width and len(word) > 1:  # break a long word where the line is full
                part, part_w = "", 0.0
                for ch in word:
                    cw = table[ch]
                    if part and part_w + cw > width:
                        break
                    part, part_w = part + ch, part_w + cw
                lines.append(part)
                word = word[len(part) :]
                w = _width(pdf, word, table)
            line, used = word, w
        lines.append(line)
    return lines


def _thumbs(job, content: dict) -> dict[str, bytes]:
    """Thumbnails of the photos the content lists, by the SHA-256 of the stored image."""
    wanted = {sha for f in content["findings"] for sha in f["photos"][:3]}
    out: dict[str, bytes] = {}
    for p in Photo.objects.filter(job=job, removed=False, sha256__in=wanted):
        try:
            with p.thumbnail.open("rb") as fh:
                out[p.sha256] = fh.read()
        except (OSError, ValueError):
            continue  # a missing file must not stop the report; the photo's hash is still listed
    return out


def _draw_chart(pdf, chart) -> None:
    """Draw a :class:`qa.audit.chart.Chart` with fpdf2 lines at the current position (about 80 mm tall)."""
    if chart is None:
        return
    if pdf.will_page_break(84):
        pdf.add_page()
    scale = 0.26  # mm per chart unit: 420 units -> 109 mm
    x0, y0 = pdf.l_margin, pdf.get_y() + 1

    def P(x, y):
        return x0 + x * scale, y0 + y * scale

    L, T, R, B = chart_mod.LEFT, chart_mod.TOP, chart_mod.W - chart_mod.RIGHT, chart_mod.H - chart_mod.BOTTOM
    pdf.set_line_width(0.2)
    pdf.set_draw_color(200, 205, 202)
    pdf.set_font("Helvetica", "", 6)
    for y, label in chart.y_ticks:
        pdf.line(*P(L, y), *P(R, y))
        pdf.text(P(L - 16, y + 3)[0], P(L, y + 3)[1], label)
    for x, label in chart.x_ticks:
        pdf.line(*P(x, T), *P(x, B))
        pdf.text(P(x - 6, 0)[0], P(0, B + 12)[1], label)
    pdf.set_draw_color(120, 128, 124)
    pdf.rect(*P(L, T), (R - L) * scale, (B - T) * scale)
    pdf.set_font("Helvetica", "B", 6.5)
    pdf.text(P((L + R) / 2 - 25, 0)[0], P(0, chart_mod.H - 10)[1], "Frequency (Hz)")
    with pdf.rotation(90, *P(12, (T + B) / 2 + 70)):
        pdf.text(*P(12, (T + B) / 2 + 70), "Transmission loss (dB)")
    for s in chart.series:
        r, g, b = (int(s.stroke[i : i + 2], 16) for i in (1, 3, 5))
        pdf.set_draw_color(r, g, b)
        pdf.set_line_width(s.width * scale * 0.9)
        if s.dash:
            dash, gap = (float(v) * scale for v in s.dash.split())
            pdf.set_dash_pattern(dash, gap)
        for seg in s.segments:
            pdf.polyline([P(x, y) for x, y in seg], style="D")
        pdf.set_dash_pattern()
    # Legend beside the chart.
    lx, ly = x0 + chart_mod.W * scale + 4, y0 + 4
    pdf.set_font("Helvetica", "", 7)
    for item in chart_mod.legend(chart):
        r, g, b = (int(item["stroke"][i : i + 2], 16) for i in (1, 3, 5))
        pdf.set_draw_color(r, g, b)
        pdf.set_line_width(item["width"] * scale * 0.9)
        if item["dash"]:
            pdf.set_dash_pattern(*(float(v) * scale for v in item["dash"].split()))
        pdf.line(lx, ly, lx + 8, ly)
        pdf.set_dash_pattern()
        for k, line in enumerate(_wrap(pdf, pdf_text(item["label"]), pdf.w - pdf.r_margin - lx - 10)):
            pdf.set_xy(lx + 10, ly - 2.5 + 3.5 * k)
            pdf.cell(pdf.w - pdf.r_margin - lx - 10, 3.5, line)
        ly = pdf.get_y() + 5.5
    pdf.set_draw_color(0, 0, 0)
    pdf.set_line_width(0.2)
    pdf.set_xy(pdf.l_margin, y0 + chart_mod.H * scale + 2)


#: A rendered report is kept this long in the cache, s; its key changes whenever what it prints changes.
PDF_CACHE_SECONDS = 7 * 24 * 3600


def cached_pdf(job, content: dict) -> bytes:
    """The report's PDF, rendered once per printed content: the key is the content's SHA-256 and the
    sign-off the PDF states, so a change to either renders anew and a repeat download is served from
    Django's cache (shared by every server process)."""
    from django.core.cache import cache

    signed = last_sign_off(job)
    key = f"sealwalk:report-pdf:{content_sha256(content)}:{signed.pk if signed is not None else '-'}"
    pdf = cache.get(key)
    if pdf is None:
        pdf = render_pdf(job, content)
        cache.set(key, pdf, PDF_CACHE_SECONDS)
    return pdf
