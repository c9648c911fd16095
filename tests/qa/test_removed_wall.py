"""A removed wall's findings stay in the record but never count: not in the finding list, the walk's
bundle, the report totals or the punch-list CSV (issue: consistency after a wall is deleted).

Each test builds the same job: a kept wall with one finding and a second wall with two findings,
then removes the second wall through the API (DELETE, as a user would).
"""

from __future__ import annotations

import csv
import io

import pytest

from qa.models import Finding, Wall
from qa.report import content

pytestmark = pytest.mark.django_db


@pytest.fixture
def two_walls(world, api):
    gone = Wall.objects.create(
        job=world.job, wall_type=world.wall_type, tag="2-02", level="2", length_m=4.0, height_m=2.7
    )
    kept = Finding.objects.create(
        job=world.job,
        wall=world.wall,
        kind="hole",
        diameter_m=0.02,
        trade="electrical",
        created_by=world.inspector,
    )
    lost = [
        Finding.objects.create(
            job=world.job, wall=gone, kind="hole", diameter_m=0.02, trade=trade, created_by=world.inspector
        )
        for trade in ("electrical", "drywall")
    ]
    r = api(world.inspector).delete(f"/api/jobs/{world.job.id}/walls/{gone.id}/")
    assert r.status_code == 204
    gone.refresh_from_db()
    assert gone.removed
    # Kept in the record: the rows are still there, only no longer counted.
    assert Finding.objects.filter(pk__in=[f.pk for f in lost], removed=False).count() == 2
    return kept, lost


def test_removed_walls_findings_are_not_in_the_finding_list(world, api, two_walls):
    kept, lost = two_walls
    r = api(world.inspector).get(f"/api/jobs/{world.job.id}/findings/")
    assert r.status_code == 200
    assert [f["id"] for f in r.json()["results"]] == [kept.pk]
    assert r.json()["count"] == 1
    for f in lost:
        assert api(world.inspector).get(f"/api/jobs/{world.job.id}/findings/{f.pk}/").status_code == 404


def test_removed_walls_findings_are_not_in_the_bundle(world, api, two_walls):
    kept, _ = two_walls
    for user in (world.inspector, world.electrician):
        body = api(user).get(f"/api/jobs/{world.job.id}/bundle/").json()
        assert [f["client_id"] for f in body["findings"]] == [str(kept.client_id)]


def test_removed_walls_findings_are_not_in_the_report_totals(world, two_walls):
    kept, _ = two_walls
    data = content.report_content(world.job)
    assert data["totals"]["walls"] == 1
    assert data["totals"]["findings"] == 1 and data["totals"]["open"] == 1
    assert [f["id"] for f in data["findings"]] == [kept.pk]


def test_removed_walls_findings_are_not_in_the_csv(world, two_walls):
    kept, _ = two_walls
    rows = list(csv.DictReader(io.StringIO(content.punch_list_csv(world.job).lstrip("\ufeff"))))
    assert [r["finding"] for r in rows] == [str(kept.pk)]
    assert {r["wall"] for r in rows} == {"2-01"}


def test_removed_walls_findings_do_not_change_the_report_hash(world, two_walls):
    # The hash covers what is printed: findings of a removed wall are not printed, so editing one
    # must not make a signed report look changed.
    _, lost = two_walls
    before = content.content_sha256(content.report_content(world.job))
    Finding.objects.filter(pk=lost[0].pk).update(note="edited after the wall went")
    assert content.content_sha256(content.report_content(world.job)) == before
