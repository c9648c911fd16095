"""Benchmark of the walk (the offline phone app). Prints figures and their ratio to the targets.

Run: ``python tests/bench/bench_walk.py`` from the project folder (needs Chromium; set CHROMIUM to its path).

Figures (medians of 5 runs, headless Chromium at 390×844, a local Django server on a temporary SQLite file):

- app shell size: HTML + JS + CSS of the walk page, uncompressed (target <= 200 KB);
- offline reload to an interactive wall list (target <= 1 s);
- sync of 500 queued operations to the local server, and the refresh of the job's bundle that
  follows it (target <= 1.5 s);
- a job bundle of 300 walls downloaded and opened offline (target <= 3 s).
"""

from __future__ import annotations

import os
import platform
import statistics
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))
TMP = tempfile.mkdtemp(prefix="walk-bench-")
os.environ["DJANGO_SETTINGS_MODULE"] = "qa.settings_test"
os.environ["DATABASE_URL"] = f"sqlite:///{TMP}/bench.sqlite3"
os.environ["SEALWALK_DATA_DIR"] = TMP
os.environ.setdefault("DJANGO_ALLOW_ASYNC_UNSAFE", "true")

import django  # noqa: E402

django.setup()

from django.contrib.staticfiles.handlers import StaticFilesHandler  # noqa: E402
from django.core.management import call_command  # noqa: E402
from django.test.testcases import LiveServerThread  # noqa: E402

RUNS = 5
N_WALLS = 300
N_OPS = 500


def build_job():
    from django.contrib.auth import get_user_model

    from qa.models import Finding, Job, Member, Wall, WallType

    user = get_user_model().objects.create_user("bench", password="bench-pass-123")
    job = Job.objects.create(name="Bench Tower", units="metric")
    Member.objects.create(job=job, user=user, role="inspector")
    flat = [18, 22, 26, 29, 32, 35, 38, 41, 44, 47, 48, 49, 50, 51, 52, 52, 52, 52, 52, 52, 52]
    wall_type = WallType.objects.create(
        job=job,
        code="B1",
        name="Bench stud wall",
        construction="wood_stud",
        tl=flat,
        tl_source="lab",
        design_rating=50,
        thickness_m=0.12,
    )
    for i in range(N_WALLS):
        wall = Wall.objects.create(
            job=job,
            wall_type=wall_type,
            tag=f"{i // 30 + 1}-{i % 30 + 1:02d}",
            level=str(i // 30 + 1),
            location=f"between unit {i} and {i + 1}",
            length_m=5.0,
            height_m=2.7,
            target_rating=50,
        )
        points = wall.add_template_seal_points()
        Finding.objects.create(
            job=job,
            wall=wall,
            seal_point=points[0],
            kind="slit",
            width_m=0.003,
            length_m=1.0,
            trade="drywall",
            created_by=user,
        )
    return job, user


def median(values):
    return statistics.median(values)


def main() -> None:
    call_command("migrate", verbosity=0)
    job, _user = build_job()
    server = LiveServerThread("127.0.0.1", StaticFilesHandler, port=0)
    server.daemon = True
    server.start()
    server.is_ready.wait()
    if server.error:
        raise server.error
    base = f"http://127.0.0.1:{server.port}"

    from playwright.sync_api import sync_playwright

    from tests.conftest import CHROMIUM, CHROMIUM_ARGS, PHONE

    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=CHROMIUM_ARGS, headless=True)
        print(
            f"machine: {platform.platform()}, {os.cpu_count()} CPUs, Python {platform.python_version()}, "
            f"Chromium {browser.version}; {N_WALLS} walls, {N_OPS} operations, medians of {RUNS}"
        )
        ctx = browser.new_context(**PHONE)
        ctx.set_default_timeout(60000)
        page = ctx.new_page()
        page.goto(base + "/login/")
        page.fill("#id_username", "bench")
        page.fill("#id_password", "bench-pass-123")
        page.click("button[type=submit]")
        page.wait_for_load_state()

        sizes: dict[str, int] = {}

        def count(resp):
            if resp.request.resource_type in ("document", "script", "stylesheet") and resp.ok:
                try:
                    sizes[resp.url] = len(resp.body())
                except Exception:  # noqa: BLE001  (a redirect has no body)
                    pass

        page.on("response", count)
        page.goto(base + "/walk/")
        page.wait_for_function("() => navigator.serviceWorker.controller !== null")
        page.wait_for_selector(f"[data-take-offline='{job.id}']")
        page.remove_listener("response", count)
        shell = sum(size for url, size in sizes.items() if "/walk/" in url or "/static/" in url)
        print(
            f"app shell (HTML+JS+CSS, uncompressed): {shell / 1024:.1f} KB "
            f"({len(sizes)} files; target 200 KB, ratio {shell / 1024 / 200:.2f})"
        )

        # Bundle of 300 walls: download and open the wall list (the first run also warms the audit cache).
        bundle_times, bundle_bytes = [], 0
        for _ in range(RUNS + 1):
            page.goto(base + "/walk/#/")
            page.wait_for_selector(f"[data-take-offline='{job.id}']")
            page.evaluate(
                """async (job) => { const db = await import('/static/qa/walk/db.js');
                await db.del('bundles', job); }""",
                job.id,
            )
            page.goto(base + "/walk/#/")
            page.wait_for_selector(f"[data-take-offline='{job.id}']")
            t0 = time.perf_counter()
            page.click(f"[data-take-offline='{job.id}']")
            page.wait_for_selector("[data-wall-list] li")
            bundle_times.append(time.perf_counter() - t0)
            bundle_bytes = page.evaluate(
                """async (job) => { const db = await import('/static/qa/walk/db.js');
                return (await db.get('bundles', job)).bytes; }""",
                job.id,
            )
        bundle_times = bundle_times[1:]
        print(
            f"bundle of {N_WALLS} walls ({bundle_bytes / 1e6:.2f} MB) downloaded and opened: "
            f"{median(bundle_times):.2f} s median (target 3 s, ratio {median(bundle_times) / 3:.2f}; "
            f"runs {', '.join(f'{t:.2f}' for t in bundle_times)})"
        )

        # Offline reload to an interactive wall list.
        ctx.set_offline(True)
        reloads = []
        for _ in range(RUNS):
            t0 = time.perf_counter()
            resp = page.reload()
            assert resp.from_service_worker and page.evaluate("() => navigator.onLine") is False
            page.wait_for_selector("[data-wall-list] li")
            page.locator("#wall-search").fill("3-")  # interactive: the search answers
            page.wait_for_selector("[data-wall='3-01']")
            reloads.append(time.perf_counter() - t0)
            page.locator("#wall-search").fill("")
        print(
            f"offline reload to an interactive wall list: {median(reloads):.3f} s median "
            f"(target 1 s, ratio {median(reloads):.2f}; runs {', '.join(f'{t:.3f}' for t in reloads)})"
        )

        # Sync of 500 queued operations (seal point ticks, chained versions as the phone makes them).
        syncs = []
        for run in range(RUNS):
            page.evaluate(
                """async ([job, n, run]) => {
              const store = await import('/static/qa/walk/store.js');
              const state = await store.load(job);
              const points = [...state.points.values()].slice(0, n);
              for (const p of points) {
                const status = run % 2 ? 'na' : 'pass';
                await store.enqueue(job, 'seal_point.status', {seal_point: p.id, status}, p.version);
              }
            }""",
                [job.id, N_OPS, run],
            )
            ctx.set_offline(False)
            t0 = time.perf_counter()
            ok = page.evaluate(
                """async (job) => { const sync = await import('/static/qa/walk/sync.js');
                return sync.syncNow(job); }""",
                job.id,
            )
            syncs.append(time.perf_counter() - t0)
            assert ok, "sync failed"
            left = page.evaluate(
                """async (job) => { const db = await import('/static/qa/walk/db.js');
                return (await db.byJob('outbox', job)).length; }""",
                job.id,
            )
            assert left == 0, f"{left} operations still queued"
            ctx.set_offline(True)
        from qa.models import SyncOperation

        applied = SyncOperation.objects.filter(result__status="applied").count()
        print(
            f"sync of {N_OPS} queued operations (and the bundle refresh after it): "
            f"{median(syncs):.2f} s median "
            f"(target 1.5 s, ratio {median(syncs) / 1.5:.2f}; runs {', '.join(f'{t:.2f}' for t in syncs)}; "
            f"{applied} of {N_OPS * RUNS} applied)"
        )
        ctx.close()
        browser.close()


if __name__ == "__main__":
    main()
