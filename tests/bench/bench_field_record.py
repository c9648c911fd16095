"""Benchmark: the field prediction of a job through the record (qa.field), 300 walls and 1000 findings.

Run: python tests/bench/bench_field_record.py  (test settings, a throw-away database).

The engine's own figures (one wall with four junctions <= 5 ms; 300 walls <= 1.5 s cold) are in
tests/bench/bench_field.py. Here: the adapter around it — every wall's field prediction with its audits
already cached (only the field prediction cold), with every cache empty, warm, and the test-plan page
for the owner. Prints medians of 5 runs and the ratio to 1.5 s (cold) / 300 ms (warm). Not a test:
nothing here asserts a time.
"""

from __future__ import annotations

import os
import platform
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]


def main() -> None:
    sys.path.insert(0, str(ROOT))
    os.environ.setdefault("DJANGO_SETTINGS_MODULE", "qa.settings_test")
    import django
    from django.conf import settings

    django.setup()
    # One audit, one field entry and their stamps per wall: keep more than the default 300 entries.
    settings.CACHES["default"].setdefault("OPTIONS", {})["MAX_ENTRIES"] = 100_000
    from django.core.cache import cache
    from django.test import Client
    from django.test.runner import DiscoverRunner
    from django.test.utils import setup_test_environment

    from tests.bench.bench_views import build_job, median_ms

    setup_test_environment()
    runner = DiscoverRunner(verbosity=0)
    old = runner.setup_databases()
    try:
        from qa.audit import audits_for_walls
        from qa.field.prediction import field_for_walls
        from qa.models import Wall

        job, users = build_job()
        walls = list(Wall.objects.live().filter(job=job).select_related("wall_type"))
        client = Client()
        client.force_login(users["owner"])

        def field_only_cold():
            cache.clear()
            audits_for_walls(walls)  # audits warm: time the field prediction alone
            t = time.perf_counter()
            field_for_walls(walls, job)
            return time.perf_counter() - t

        def all_cold():
            cache.clear()
            field_for_walls(walls, job)

        def warm():
            field_for_walls(walls, job)

        def page():
            assert client.get(f"/jobs/{job.pk}/test-plan/").status_code == 200

        field_for_walls(walls, job)
        only = sorted(field_only_cold() * 1000 for _ in range(5))[2]
        figures = [
            ("field only, audits warm", only, 1500.0),
            ("field + audits, all cold", median_ms(all_cold), 1500.0 + 1500.0),
            ("field, warm cache", median_ms(warm), 300.0),
            ("test-plan page, warm", median_ms(page), 300.0),
        ]
    finally:
        runner.teardown_databases(old)
    print(
        f"machine: {platform.node()} {platform.machine()} {platform.processor() or ''} "
        f"cpus={os.cpu_count()} python={platform.python_version()} ({platform.system()} {platform.release()})"
    )
    print("job: 300 walls x 1000 findings, wood frame, default rooms and junctions; median of 5 runs")
    for name, ms, target in figures:
        print(f"{name:<26} {ms:9.1f} ms   target {target:7.0f} ms   ratio {ms / target:5.2f}")


if __name__ == "__main__":
    main()
