"""Benchmark of the walk's sync on the server: one batch of 500 queued operations, and batches of 10.

Run: ``python tests/bench/bench_sync.py`` from the project folder. It uses a temporary SQLite file
and Django's test client (no browser, no network), so the figure is the server's share of a sync.
Prints medians of RUNS runs; run it from two checkouts side by side to compare a change.

Operations per batch mix what a walk sends: ticks of seal points, new findings with their seal point
marked defect, edits and lifecycle steps, spread over 25 walls.
"""

from __future__ import annotations

import os
import platform
import statistics
import sys
import tempfile
import time
import uuid
from pathlib import Path

ROOT = Path(os.environ.get("BENCH_ROOT", Path(__file__).resolve().parents[2]))
sys.path.insert(0, str(ROOT))
TMP = tempfile.mkdtemp(prefix="sync-bench-")
os.environ["DJANGO_SETTINGS_MODULE"] = "qa.settings_test"
os.environ["DATABASE_URL"] = f"sqlite:///{TMP}/bench.sqlite3"
os.environ["SEALWALK_DATA_DIR"] = TMP
os.environ.setdefault("SEALWALK_DEBUG", "1")

import django  # noqa: E402

django.setup()

from django.core.management import call_command  # noqa: E402
from rest_framework.test import APIClient  # noqa: E402

RUNS = int(os.environ.get("BENCH_RUNS", "5"))
N_WALLS = 25
FLAT_50 = [50.0] * 21


def make_job(tag: str):
    from django.contrib.auth import get_user_model

    from qa.models import Job, Member, Wall, WallType

    user = get_user_model().objects.create_user(f"insp-{tag}", password="x-bench-password-1")
    job = Job.objects.create(name=f"Bench {tag}", units="metric")
    Member.objects.create(job=job, user=user, role="inspector")
    wt = WallType.objects.create(
        job=job,
        code="B1",
        name="Bench wall",
        construction="wood_stud",
        tl=FLAT_50,
        tl_source="lab",
        design_rating=50,
        thickness_m=0.12,
    )
    walls = []
    for i in range(N_WALLS):
        w = Wall.objects.create(
            job=job, wall_type=wt, tag=f"B-{i:03d}", level="1", length_m=6, height_m=2.7, target_rating=50
        )
        w.add_template_seal_points()
        walls.append(w)
    return job, user, walls


def ops_for(walls, n: int, ticks_only: bool = False) -> list[dict]:
    ops, created = [], []
    points = [(w, list(w.seal_points.order_by("position"))) for w in walls]
    i = 0
    while len(ops) < n:
        w, pts = points[i % len(points)]
        p = pts[(i // len(points)) % len(pts)]
        kind = 0 if ticks_only else i % 4
        when = "2026-03-02T09:15:00+00:00"
        if kind in (0, 1):
            ops.append(
                {
                    "op_id": str(uuid.uuid4()),
                    "kind": "seal_point.status",
                    "base_version": None,
                    "device_at": when,
                    "payload": {"seal_point": p.id, "status": "pass"},
                }
            )
        elif kind == 2:
            cid = str(uuid.uuid4())
            created.append(cid)
            ops.append(
                {
                    "op_id": str(uuid.uuid4()),
                    "kind": "finding.create",
                    "base_version": None,
                    "device_at": when,
                    "payload": {
                        "client_id": cid,
                        "wall": w.id,
                        "seal_point": p.id,
                        "kind": "slit",
                        "face": "a",
                        "width": 6,
                        "length": 900,
                        "trade": "drywall",
                        "note": "gap at the track",
                    },
                }
            )
        elif created:
            ops.append(
                {
                    "op_id": str(uuid.uuid4()),
                    "kind": "finding.update",
                    "base_version": 1,
                    "device_at": when,
                    "payload": {"finding": created.pop(), "changes": {"width": 8}},
                }
            )
        i += 1
    return ops[:n]


def timed(client, job, ops, batch: int) -> tuple[float, float, int]:
    """Wall seconds, CPU seconds of this process (the server's work: no other process takes part) and
    SQL statements to sync ``ops`` in batches of ``batch``."""
    from django.db import connection
    from django.test.utils import CaptureQueriesContext

    with CaptureQueriesContext(connection) as queries:
        t0, c0 = time.perf_counter(), time.process_time()
        for k in range(0, len(ops), batch):
            body = {"device_id": "bench", "ops": ops[k : k + batch]}
            r = client.post(f"/api/jobs/{job.id}/sync/", body, format="json")
            assert r.status_code == 200, r.content[:300]
        seconds, cpu = time.perf_counter() - t0, time.process_time() - c0
    return seconds, cpu, len(queries)


def main() -> None:
    call_command("migrate", verbosity=0)
    call_command("createcachetable", verbosity=0)
    one, tens, q_one, q_tens, c_one, c_tens = [], [], [], [], [], []
    ticks, c_ticks, q_ticks = [], [], []
    for run in range(RUNS):
        job, user, walls = make_job(f"{run}a")
        client = APIClient()
        client.force_authenticate(user)
        seconds, cpu, queries = timed(client, job, ops_for(walls, 500), 500)
        one.append(seconds)
        c_one.append(cpu)
        q_one.append(queries)
        job, user, walls = make_job(f"{run}t")
        client.force_authenticate(user)
        seconds, cpu, queries = timed(client, job, ops_for(walls, 500, ticks_only=True), 500)
        ticks.append(seconds)
        c_ticks.append(cpu)
        q_ticks.append(queries)
        job, user, walls = make_job(f"{run}b")
        client.force_authenticate(user)
        seconds, cpu, queries = timed(client, job, ops_for(walls, 100), 10)
        tens.append(seconds / 10)
        c_tens.append(cpu / 10)
        q_tens.append(queries / 10)
    print(
        f"machine: {platform.machine()}, {os.cpu_count()} cores, Python {platform.python_version()}, "
        f"code at {ROOT}"
    )
    print(
        f"500 operations in one batch: median {statistics.median(one):.3f} s "
        f"(CPU {statistics.median(c_one):.3f} s), "
        f"{statistics.median(q_one):.0f} SQL statements (runs {RUNS})"
    )
    print(
        f"500 seal-point ticks in one batch: median {statistics.median(ticks):.3f} s "
        f"(CPU {statistics.median(c_ticks):.3f} s), {statistics.median(q_ticks):.0f} SQL statements"
    )
    print(
        f"one batch of 10 operations:  median {statistics.median(tens):.3f} s "
        f"(CPU {statistics.median(c_tens):.3f} s), "
        f"{statistics.median(q_tens):.0f} SQL statements (runs {RUNS})"
    )


if __name__ == "__main__":
    main()
