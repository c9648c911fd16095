"""Field-rating pages: the wall page's field panel (predicted, margin, caution; measured beside
predicted once a test exists) and the printable test-plan page linked from the job page."""

from __future__ import annotations

import pytest
from django.test import Client

from qa.field.measurements import compute_results
from qa.models import FieldTest
from tests.conftest import FLAT_50

pytestmark = pytest.mark.django_db
CAUTION_WORDS = [
    "a prediction is not a field test",
    "ASTM E336 or ISO 16283-1 by qualified testers",
    "authority having jurisdiction govern",
]


def client_for(user=None) -> Client:
    c = Client()
    if user is not None:
        c.force_login(user)
    return c


def report_test(wall, astc: int, on="2026-11-20") -> FieldTest:
    """A test report whose ATL and NNR are FLAT_50 moved to rate ``astc`` (E413: the curve rates STC 50)."""
    bands = {"atl": [v + astc - 50 for v in FLAT_50], "nnr": [v + astc - 50 for v in FLAT_50]}
    return FieldTest.objects.create(
        wall=wall,
        tested_on=on,
        tester="Field lab (fictional)",
        standard="ASTM E336",
        source="report",
        bands=bands,
        results=compute_results("report", bands),
    )


def test_wall_page_shows_the_prediction_margin_and_caution(world):
    r = client_for(world.owner).get(f"/jobs/{world.job.id}/walls/{world.wall.id}/")
    assert r.status_code == 200
    html = r.content.decode()
    assert "Field rating (predicted)" in html and "data-field-rating" in html
    assert "Field target" in html and "ASTC 45" in html and "margin" in html
    for words in CAUTION_WORDS:
        assert words.lower() in html.lower(), words
    assert "Measured beside predicted" not in html


def test_wall_page_shows_measured_beside_predicted(world):
    test = report_test(world.wall, 40)
    assert test.results["astc"] == 40
    html = client_for(world.electrician).get(f"/jobs/{world.job.id}/walls/{world.wall.id}/").content.decode()
    assert "Measured beside predicted" in html and f'data-field-test="{test.pk}"' in html
    assert 'data-series="now"' in html and f'data-series="test-{test.pk}"' in html  # the chart


def test_test_plan_page_for_every_member_and_404_for_outsiders(world):
    report_test(world.wall, 38)
    for user in (world.inspector, world.electrician, world.owner):
        r = client_for(user).get(f"/jobs/{world.job.id}/test-plan/")
        assert r.status_code == 200
        html = r.content.decode()
        assert "data-test-plan" in html and world.wall.tag in html and "Download CSV" in html
        assert "data-far-below" in html  # ASTC 38 measured against a prediction in the mid 40s
        assert "data-scatter" in html and "<circle" in html and 'fill="#b3261e"' in html  # the short dot
    assert client_for(world.outsider).get(f"/jobs/{world.job.id}/test-plan/").status_code == 404
    assert client_for().get(f"/jobs/{world.job.id}/test-plan/").status_code == 302
    assert client_for(world.inspector).post(f"/jobs/{world.job.id}/test-plan/").status_code == 405


def test_job_page_links_the_test_plan(world):
    html = client_for(world.owner).get(f"/jobs/{world.job.id}/").content.decode()
    assert f"/jobs/{world.job.id}/test-plan/" in html


def test_job_page_shows_each_walls_predicted_field_rating_and_margin(world):
    """The job view's field column is the same figure the report carries (qa.field.presentation)."""
    from qa.field.prediction import field_for_walls
    from qa.field.presentation import FIELD_CAUTION, field_summary
    from qa.models import Wall

    report_test(world.wall, 40)
    html = client_for(world.owner).get(f"/jobs/{world.job.id}/").content.decode()
    walls = list(Wall.objects.live().filter(job=world.job).select_related("wall_type"))
    summary = field_summary(field_for_walls(walls, world.job)[world.wall.pk])
    assert summary is not None and summary["now"] is not None
    row = html.split(f'data-wall-id="{world.wall.id}"', 1)[1].split("</tr>", 1)[0]
    assert f'data-field-now="{summary["now"]}"' in row
    assert f"{summary['descriptor']} {summary['now']}" in row
    sign = "+" if summary["margin"] >= 0 else ""
    assert f"{sign}{summary['margin']} vs target {summary['target']}" in row
    assert 'data-field-measured="40"' in row, "the latest field test beside the prediction"
    assert "Field, predicted" in html
    assert FIELD_CAUTION in html, "the usual caution goes with the prediction"


def test_job_page_lists_the_rule_sets_field_targets(world):
    html = client_for(world.owner).get(f"/jobs/{world.job.id}/").content.decode()
    assert "Field targets:</strong> none set" in html
    world.job.field_targets = [
        {"wall_type": None, "descriptor": "astc", "value": 45},
        {"wall_type": world.wall_type.code, "descriptor": "dnt_w", "value": 50},
    ]
    world.job.save()
    html = client_for(world.owner).get(f"/jobs/{world.job.id}/").content.decode()
    line = html.split("data-field-targets>", 1)[1].split("</p>", 1)[0]
    assert f"wall type {world.wall_type.code} DnT,w 50 · every other wall ASTC 45" in line
