"""Benchmark: the job view and the hand-over PDF for a job of 300 walls and 1000 findings.

Run: python tests/bench/bench_views.py  (uses the test settings and a throw-away database).

Targets (issue "leak audit in the product"): job view server-side median <= 300 ms with a warm audit
cache and <= 1.5 s cold (every audit computed); the PDF for that job <= 10 s. Prints the machine, the
median of 5 runs for each, and the ratio to its target. Not a test: nothing here asserts a time.
"""

from __future__ import annotations

import os
import platform
import random
import statistics
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]

# Findings as the walk records them: kind, face, trade, SI geometry (template-like defaults, invented).
PATTERNS = [
    ("slit", "a", "drywall", {"width_m": 0.006, "length_m": 1.2, "depth_m": 0.0159}),
    ("slit", "through", "drywall", {"width_m": 0.008, "length_m": 0.9}),
    ("hole", "a", "electrical", {"diameter_m": 0.012, "count": 2}),
    ("back_to_back", "through", "electrical", {"area_m2": 0.0006}),
    ("ring", "through", "plumbing", {"diameter_m": 0.022, "width_m": 0.006}),
    ("ring", "through", "hvac", {"diameter_m": 0.10, "width_m": 0.010}),
    ("missing_insulation", "through", "insulation", {"area_m2": 0.5}),
    ("slit", "through", "drywall", {"width_m": 0.012, "length_m": 2.0}),
    ("open_area", "a", "drywall", {"area_m2": 0.004}),
    ("bridge", "through", "framing", {"count": 1}),
]
LAYERS = {
    "leaves": [{"layers": ["gypsum_15.9_x"]}, {"layers": ["gypsum_15.9_x"]}],
    "cavity": {"depth": 0.140, "absorber": {"thickness": 0.089, "flow_resistivity": 10000}},
    "connection": {"type": "staggered_studs", "spacing": 0.406},
}
LAB_50 = [18, 22, 26, 29, 32, 35, 38, 41, 44, 47, 48, 49, 50, 51, 52, 52, 52, 52, 52, 52, 52]


def build_job(n_walls: int = 300, n_findings: int = 1000, seed: int = 1, password: str = "bench-pass-1"):
    """A job of ``n_walls`` walls (two wall types, a door on every tenth wall) and ``n_findings`` findings.

    Returns (job, {"inspector": user, "owner": user, "drywall": user}). Bulk inserts: no signals fire,
    which is right for a fresh job with an empty cache.
    """
    from django.contrib.auth import get_user_model

    from qa.audit import resolve_wall_type_curve
    from qa.models import Finding, Job, Member, Opening, Wall, WallType

    rng = random.Random(seed)
    User = get_user_model()
    tag = f"{n_walls}x{n_findings}x{seed}"
    users = {}
    for name in ("inspector", "owner", "drywall"):
        users[name] = User.objects.create_user(f"b-{name}-{tag}", password=password)
    job = Job.objects.create(
        name=f"Bench block {tag}", units="imperial", rule_set="Bench: STC 50 between units"
    )
    for name, role, trade in (
        ("inspector", "inspector", ""),
        ("owner", "owner", ""),
        ("drywall", "crew", "drywall"),
    ):
        Member.objects.create(job=job, user=users[name], role=role, trade=trade)
    tl, rating = resolve_wall_type_curve(tl=[], tl_source="predicted", layers=LAYERS, rating_scheme="stc")
    predicted = WallType.objects.create(
        job=job,
        code="P1",
        name="Staggered studs",
        construction="staggered_stud",
        layers=LAYERS,
        tl=tl,
        design_rating=rating,
        thickness_m=0.172,
    )
    lab = WallType.objects.create(
        job=job,
        code="L1",
        name="Lab stud wall",
        construction="wood_stud",
        tl=LAB_50,
        tl_source="lab",
        design_rating=50,
        thickness_m=0.12,
    )
    walls = Wall.objects.bulk_create(
        [
            Wall(
                job=job,
                wall_type=predicted if i % 3 else lab,
                tag=f"{1 + i // 20}-{i % 20:02d}",
                level=str(1 + i // 20),
                location=f"between unit {i} and {i + 1}",
                length_m=round(rng.uniform(4, 10), 2),
                height_m=2.7,
                target_rating=50 if i % 7 else 55,
            )
            for i in range(n_walls)
        ]
    )
    Opening.objects.bulk_create(
        [
            Opening(wall=w, kind="door", label="Entry door", width_m=0.91, height_m=2.13, rating=30)
            for w in walls[::10]
        ]
    )
    findings = []
    for n in range(n_findings):
        kind, face, trade, geo = PATTERNS[n % len(PATTERNS)]
        findings.append(
            Finding(
                job=job,
                wall=walls[rng.randrange(n_walls)],
                kind=kind,
                face=face,
                trade=trade,
                created_by=users["inspector"],
                at_edge=kind == "slit",
                status=rng.choice(("open", "open", "open", "fixed", "verified")),
                **geo,
            )
        )
    Finding.objects.bulk_create(findings)
    return job, users


def median_ms(fn, runs: int = 5) -> float:
    times = []
    for _ in range(runs):
        t = time.perf_counter()
        fn()
        times.append((time.perf_counter() - t) * 1000)
    return statistics.median(times)


def main() -> None:
    sys.path.insert(0, str(ROOT))
    os.environ.setdefault("DJANGO_SETTINGS_MODULE", "qa.settings_test")
    import django
    from django.conf import settings

    django.setup()
    # The audit cache holds one entry per wall plus its stamps: the backend must keep more than the
    # default 300 entries, or a 300-wall job evicts itself on every request (see DEVELOPERS notes).
    settings.CACHES["default"].setdefault("OPTIONS", {})["MAX_ENTRIES"] = 100_000
    from django.core.cache import cache
    from django.test import Client
    from django.test.runner import DiscoverRunner
    from django.test.utils import setup_test_environment

    setup_test_environment()
    runner = DiscoverRunner(verbosity=0)
    old = runner.setup_databases()
    try:
        from qa import report

        job, users = build_job()
        client = Client()
        client.force_login(users["owner"])
        url = f"/jobs/{job.pk}/"

        def cold():
            cache.clear()
            assert client.get(url).status_code == 200

        def warm():
            assert client.get(url).status_code == 200

        def pdf():
            report.render_pdf(job, report.report_content(job))

        client.get(url)  # imports, template compilation
        figures = [
            ("job view, cold cache", median_ms(cold), 1500.0),
            ("job view, warm cache", median_ms(warm), 300.0),
            ("hand-over PDF", median_ms(pdf), 10000.0),
        ]
        size = len(report.render_pdf(job, report.report_content(job)))

        # 100 fix notes of 2000 characters, half of them one unbroken word (the case that was quadratic).
        from qa.models import Finding

        for k, f in enumerate(Finding.objects.filter(job=job).order_by("id")[:100]):
            f.fix_note = ("x" * 2000) if k % 2 else ("sealed the track and tooled the bead " * 55)[:2000]
            f.save(update_fields=["fix_note"])

        def pdf_cold():
            cache.clear()
            report.cached_pdf(job, report.report_content(job))

        def pdf_served():
            report.cached_pdf(job, report.report_content(job))

        figures += [
            ("PDF, 100 notes of 2000 characters, cold", median_ms(pdf_cold), 10000.0),
            ("same PDF again (from the cache)", median_ms(pdf_served), 10000.0),
        ]
    finally:
        runner.teardown_databases(old)
    print(
        f"machine: {platform.node()} {platform.machine()} {platform.processor() or ''} "
        f"cpus={os.cpu_count()} python={platform.python_version()} ({platform.system()} {platform.release()})"
    )
    print("job: 300 walls x 1000 findings; median of 5 runs")
    for name, ms, target in figures:
        print(f"{name:<42} {ms:9.1f} ms   target {target:7.0f} ms   ratio {ms / target:5.2f}")
    print(f"PDF size: {size / 1e6:.2f} MB")


if __name__ == "__main__":
    main()
