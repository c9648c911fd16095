"""Query counts do not grow with the job: the job view for 30 walls x 100 findings and for 300 walls x
1000 findings issue the same number of queries, cold and warm; the wall view likewise for 2 and 40
findings. (Counts, not times: timings live in tests/bench/bench_views.py.)
"""

from __future__ import annotations

import pytest
from bench.bench_views import build_job
from django.db import connection
from django.test import Client
from django.test.utils import CaptureQueriesContext

pytestmark = pytest.mark.slow


@pytest.fixture(autouse=True)
def big_cache(settings):
    # One audit entry per wall: more than locmem's default 300 entries (see bench notes).
    settings.CACHES = {
        "default": {
            "BACKEND": "django.core.cache.backends.locmem.LocMemCache",
            "LOCATION": "query-counts",
            "OPTIONS": {"MAX_ENTRIES": 100_000},
        }
    }
    from django.core.cache import cache

    cache.clear()


def count(client, url) -> int:
    with CaptureQueriesContext(connection) as ctx:
        assert client.get(url).status_code == 200
    return len(ctx)


def test_job_view_queries_do_not_grow(db):
    counts = {}
    for walls, findings in ((30, 100), (300, 1000)):
        job, users = build_job(walls, findings, seed=walls)
        c = Client()
        c.force_login(users["owner"])
        url = f"/jobs/{job.pk}/"
        counts[walls] = (count(c, url), count(c, url))  # cold (every audit computed), then warm
    assert counts[30] == counts[300], counts
    cold, warm = counts[300]
    # Warm: the stamps are rows (one query per lookup). Cold adds the audits' openings and findings, the
    # field prediction's rooms, junctions and tests, and its look-up of the audits it builds on.
    assert warm <= 8 and cold <= warm + 6, counts


def test_wall_view_queries_do_not_grow(db):
    from qa.models import Finding, Wall

    job, users = build_job(4, 0, seed=7)
    walls = list(Wall.objects.filter(job=job).order_by("id"))
    for n, wall in ((2, walls[0]), (40, walls[1])):
        Finding.objects.bulk_create(
            [
                Finding(
                    job=job,
                    wall=wall,
                    kind="slit",
                    face="through",
                    trade="drywall",
                    width_m=0.002 + 0.0001 * i,
                    length_m=0.5,
                    created_by=users["inspector"],
                )
                for i in range(n)
            ]
        )
    c = Client()
    c.force_login(users["owner"])
    small = [count(c, f"/jobs/{job.pk}/walls/{walls[0].pk}/") for _ in range(2)]
    large = [count(c, f"/jobs/{job.pk}/walls/{walls[1].pk}/") for _ in range(2)]
    assert small == large, (small, large)
    assert large[1] <= 10
