"""Hand-over report: content hash, PDF text, punch-list CSV with formula cells neutralised.

CSV injection rule: a cell starting with = + - @ (or tab / carriage return) is prefixed with a quote
(OWASP "CSV Injection" guidance). PDF text is read from the inflated content streams with zlib, no
PDF library involved.
"""

from __future__ import annotations

import csv
import io

import pytest

from qa import report
from qa.models import Finding
from qa.report import content, pdf
from tests.qa.pdftext import pdf_strings


@pytest.fixture
def findings(world):
    made = [
        Finding.objects.create(
            job=world.job,
            wall=world.wall,
            kind="slit",
            trade="drywall",
            width_m=0.006,
            length_m=1.2,
            created_by=world.inspector,
            note='=HYPERLINK("http://x")',
        ),
        Finding.objects.create(
            job=world.job,
            wall=world.wall,
            kind="hole",
            trade="electrical",
            diameter_m=0.012,
            count=2,
            created_by=world.inspector,
            note="+1 box",
        ),
    ]
    made[1].mark_fixed(world.electrician, "-pad fitted")
    return made


@pytest.mark.parametrize(
    "text, expected",
    [
        ("=1+1", "'=1+1"),
        ("+1", "'+1"),
        ("-3", "'-3"),
        ("@SUM(A1)", "'@SUM(A1)"),
        ("\tx", "'\tx"),
        ("plain", "plain"),
        (None, ""),
        (12, "12"),
    ],
)
def test_neutralise(text, expected):
    assert content.neutralise(text) == expected


def test_csv_punch_list(world, findings):
    text = report.punch_list_csv(world.job)
    # RFC 3629 §6 / Unicode FAQ: U+FEFF at the start is the UTF-8 signature spreadsheet programs read.
    assert text.startswith("\ufeff") and text.encode("utf-8")[:3] == b"\xef\xbb\xbf"
    rows = list(csv.reader(io.StringIO(text.removeprefix("\ufeff"))))
    head = rows[0]
    assert head[0] == "finding" and len(rows) == 3
    notes = {r[0]: dict(zip(head, r, strict=True)) for r in rows[1:]}
    assert notes[str(findings[0].pk)]["note"] == '\'=HYPERLINK("http://x")'
    assert notes[str(findings[1].pk)]["fix note"] == "'-pad fitted"
    assert all(not cell.startswith(("=", "+", "-", "@")) for r in rows for cell in r)
    # Faces by the wall's own labels, never the generic "Face A only".
    faces = {r["face"] for r in notes.values()}
    assert faces <= {world.wall.face_a_label, world.wall.face_b_label, "Through the wall"}
    assert all("only" not in f for f in faces)
    # The wall state comes with its coverage; a wall with unchecked points never reads "Meets".
    for r in notes.values():
        checked, total = (int(x) for x in r["wall seal points checked"].split(" of "))
        assert checked < total and not r["wall state"].startswith("Meets")


def test_content_hash_stable_and_changes_with_the_record(world, findings):
    a = report.content_sha256(report.report_content(world.job))
    assert a == report.content_sha256(report.report_content(world.job))
    findings[1].verify(world.inspector)
    assert report.content_sha256(report.report_content(world.job)) != a


def test_pdf_states_walls_findings_cautions_rule_set(world, findings):
    world.job.rule_set = "Test spec: STC 50 between units"
    world.job.save()
    content = report.report_content(world.job)
    data = report.render_pdf(world.job, content)
    assert data.startswith(b"%PDF-")
    text = pdf_strings(data)
    for expected in (
        "Hand-over report: Test Block A",
        "Rule set: Test spec: STC 50 between units",
        "Wall 2-01",
        f"#{findings[0].pk} Slit (long narrow gap)",
        "Fixed by elec",
        "Estimates, not field tests",
        "Acoustical sealant is not a firestop",
        "Frequency (Hz)",
        "Transmission loss (dB)",
        report.content_sha256(content),
    ):
        assert expected in text, expected
    assert content["totals"] == {
        "walls": 1,
        "below_target": 1,
        "meets": 0,
        "not_fully_walked": 0,
        "findings": 2,
        "open": 1,
        "fixed": 1,
        "verified": 0,
    }


def test_pdf_text_is_latin1_safe():
    assert pdf.pdf_text("6 mm × 900 mm — ⌀ 22 mm ≥ 1 m²") == "6 mm × 900 mm - dia. 22 mm >= 1 m²"
    assert pdf.pdf_text("漢") == "?"
