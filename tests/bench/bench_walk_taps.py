"""Benchmark of a fast walk: taps to tick one wall of 20 seal points with 2 defects, and how long the
wall page is. Prints the figures and their ratio to the targets; nothing is asserted.

Run: ``python tests/bench/bench_walk_taps.py`` from the project folder (needs Chromium; set CHROMIUM to
its path).

Targets (the product's own, no outside source): ticking a 20-point wall with 2 defects takes at most 40
taps, and the wall page is at most 4 screens long, in headless Chromium at 360×780.

What counts as a tap: every click the script makes (a button, a link, a field it types into). Typing
itself and scrolling are not taps; scrolls are counted and printed apart. Two ways of walking are timed:

- one by one: the inspector ticks each point where it is, taps "next unchecked" whenever the next point
  is not fully in view (behind the bars or off the screen), and records the 2 defects on the way;
- by face: the 2 defects first, then "pass the rest" of each face with its confirmation.

Each defect is 3 taps: "Defect" on the seal point, the gap width field (the template fills the rest),
"Save finding". The page length is the document height over the viewport height, at the start (every
point unchecked: the longest), after the walk, and the largest seen during it.
"""

from __future__ import annotations

import os
import platform
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))
TMP = tempfile.mkdtemp(prefix="walk-taps-")
os.environ["DJANGO_SETTINGS_MODULE"] = "qa.settings_test"
os.environ["DATABASE_URL"] = f"sqlite:///{TMP}/bench.sqlite3"
os.environ["SEALWALK_DATA_DIR"] = TMP
os.environ.setdefault("DJANGO_ALLOW_ASYNC_UNSAFE", "true")

import django  # noqa: E402

django.setup()

from django.contrib.staticfiles.handlers import StaticFilesHandler  # noqa: E402
from django.core.management import call_command  # noqa: E402
from django.test.testcases import LiveServerThread  # noqa: E402

VIEWPORT = {"width": 360, "height": 780}
# ``--shots DIR`` saves full-page screenshots of the wall before and after each walk, to look at.
SHOTS = Path(sys.argv[sys.argv.index("--shots") + 1]) if "--shots" in sys.argv else None
N_POINTS = 20
DEFECT_AT = (2, 11)  # which points (in screen order) get a defect
TARGET_TAPS = 40
TARGET_SCREENS = 4.0
PASSWORD = "bench-pass-123"


def build_job():
    """One job with three walls of exactly 20 seal points each (a template, trimmed or topped up)."""
    from django.contrib.auth import get_user_model

    from qa.models import Job, Member, SealPoint, Wall, WallType

    user = get_user_model().objects.create_user("walker", password=PASSWORD)
    job = Job.objects.create(name="Tap Count Court", units="metric")
    Member.objects.create(job=job, user=user, role="inspector")
    flat = [18, 22, 26, 29, 32, 35, 38, 41, 44, 47, 48, 49, 50, 51, 52, 52, 52, 52, 52, 52, 52]
    wall_type = WallType.objects.create(
        job=job,
        code="RC1",
        name="Stud wall with resilient channel",
        construction="resilient_channel",
        tl=flat,
        tl_source="lab",
        design_rating=50,
        thickness_m=0.14,
    )
    walls = []
    for i in range(3):
        wall = Wall.objects.create(
            job=job,
            wall_type=wall_type,
            tag=f"4-0{i + 1}",
            level="4",
            location=f"between 40{i + 1} and 40{i + 2}",
            length_m=6.0,
            height_m=2.7,
            target_rating=50,
        )
        points = wall.add_template_seal_points()
        while len(points) < N_POINTS:
            points += wall.add_template_seal_points()
        SealPoint.objects.filter(id__in=[p.id for p in points[N_POINTS:]]).delete()
        walls.append(wall)
    return job, walls


class Walker:
    """Drives the page and counts taps and scrolls."""

    def __init__(self, page):
        self.page = page
        self.taps = 0
        self.scrolls = 0
        self.screens_max = 0.0

    def tap(self, selector_or_locator):
        loc = selector_or_locator
        if isinstance(loc, str):
            loc = self.page.locator(loc)
        loc.click()
        self.taps += 1

    def type_into(self, selector, text):
        self.page.fill(selector, text)  # the fill focuses the field: one tap
        self.taps += 1

    def screens(self) -> float:
        value = self.page.evaluate("() => document.documentElement.scrollHeight / window.innerHeight")
        self.screens_max = max(self.screens_max, value)
        return value

    def in_view(self, loc) -> bool:
        """Fully visible between the top bar and whatever is docked at the bottom."""
        box = loc.bounding_box()
        free = self.page.evaluate(
            """() => {
              const top = document.querySelector('.walk-top').getBoundingClientRect().bottom;
              const bar = document.querySelector('[data-syncbar]').getBoundingClientRect().top;
              const dock = document.querySelector('[data-dock]');
              const d = dock && !dock.hidden ? dock.getBoundingClientRect().top : bar;
              return [top, Math.min(bar, d)];
            }"""
        )
        return box is not None and box["y"] >= free[0] and box["y"] + box["height"] <= free[1]

    def bring_into_view(self, loc) -> None:
        """Scroll (one swipe) until ``loc`` is in view; the page redraws after each sync, so retry."""
        if self.in_view(loc):
            return
        for _ in range(5):
            try:
                loc.scroll_into_view_if_needed(timeout=2000)
                break
            except Exception:  # noqa: BLE001  (redrawn under the script: look it up again)
                self.page.wait_for_timeout(100)
        self.scrolls += 1

    def settle(self):
        self.page.wait_for_timeout(60)

    def record_defect(self, point):
        self.tap(point.locator("[data-act='defect']"))
        self.page.wait_for_selector("[data-finding-form]")
        if self.page.locator("#f-width").is_visible():
            self.type_into("#f-width", "4")
        elif self.page.locator("#f-area").is_visible():
            self.type_into("#f-area", "12")
        self.tap("[data-save]")
        self.page.wait_for_selector("[data-points]")
        self.settle()


def walk_one_by_one(w: Walker, tag: str) -> tuple[float, float]:
    page = w.page
    w.tap(f"[data-wall='{tag}']")
    page.wait_for_selector("[data-points]")
    start = w.screens()
    if SHOTS:
        SHOTS.mkdir(parents=True, exist_ok=True)
        page.screenshot(path=str(SHOTS / f"taps-{tag}-start.png"), full_page=True)
    order = page.eval_on_selector_all("[data-points] [data-point]", "els => els.map(e => e.dataset.point)")
    defects = {order[i] for i in DEFECT_AT}
    while True:
        open_points = page.locator("[data-points] [data-point][data-status='unchecked']")
        if open_points.count() == 0:
            break
        point = open_points.first
        pid = point.get_attribute("data-point")
        if not w.in_view(point.locator("[data-act='pass']")):
            w.tap("[data-next-unchecked]")
            w.settle()
        if pid in defects:
            w.record_defect(point)
        else:
            w.tap(point.locator("[data-act='pass']"))
            page.wait_for_selector(f"[data-point='{pid}'][data-status='pass']")
        w.screens()
    return start, w.screens()


def walk_by_face(w: Walker, tag: str) -> tuple[float, float]:
    page = w.page
    w.tap(f"[data-wall='{tag}']")
    page.wait_for_selector("[data-points]")
    start = w.screens()
    order = page.eval_on_selector_all("[data-points] [data-point]", "els => els.map(e => e.dataset.point)")
    for i in DEFECT_AT:
        point = page.locator(f"[data-point='{order[i]}']")
        while not w.in_view(point.locator("[data-act='defect']")):
            w.tap("[data-next-unchecked]")
            w.settle()
        w.record_defect(point)
    while page.locator("[data-pass-rest]").count():
        button = page.locator("[data-pass-rest]").first
        w.bring_into_view(button)
        w.tap(button)
        confirm = page.locator("[data-confirm-pass-rest]")
        w.bring_into_view(confirm)
        w.tap(confirm)
        page.wait_for_selector("[data-confirm]", state="detached")
        w.settle()
        w.screens()
    return start, w.screens()


def main() -> None:
    call_command("migrate", verbosity=0)
    job, walls = build_job()
    server = LiveServerThread("127.0.0.1", StaticFilesHandler, port=0)
    server.daemon = True
    server.start()
    server.is_ready.wait()
    if server.error:
        raise server.error
    base = f"http://127.0.0.1:{server.port}"

    from playwright.sync_api import sync_playwright

    from qa.models import Finding, SealPoint
    from tests.conftest import CHROMIUM, CHROMIUM_ARGS

    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=CHROMIUM_ARGS, headless=True)
        print(
            f"machine: {platform.platform()}, {os.cpu_count()} CPUs, Python {platform.python_version()}, "
            f"Chromium {browser.version}; viewport {VIEWPORT['width']}×{VIEWPORT['height']}, "
            f"{N_POINTS} seal points, defects at points {', '.join(str(i + 1) for i in DEFECT_AT)}"
        )
        ctx = browser.new_context(viewport=VIEWPORT, device_scale_factor=2, is_mobile=True, has_touch=True)
        ctx.set_default_timeout(20000)
        page = ctx.new_page()
        page.goto(base + "/login/")
        page.fill("#id_username", "walker")
        page.fill("#id_password", PASSWORD)
        page.click("button[type=submit]")
        page.wait_for_load_state()
        page.evaluate("() => navigator.serviceWorker.ready.then(() => true)")
        page.goto(base + "/walk/")
        page.wait_for_function("() => navigator.serviceWorker.controller !== null")
        page.click(f"[data-take-offline='{job.id}']")
        page.wait_for_selector("[data-wall-list]")

        results = []
        ways = (("one by one", walk_one_by_one, walls[0]), ("by face", walk_by_face, walls[1]))
        for name, fn, wall in ways:
            page.goto(base + f"/walk/#/j/{job.id}")
            page.wait_for_selector("[data-wall-list]")
            w = Walker(page)
            start, end = fn(w, wall.tag)
            if SHOTS:
                SHOTS.mkdir(parents=True, exist_ok=True)
                page.screenshot(path=str(SHOTS / f"taps-{wall.tag}-after.png"), full_page=True)
            next_wall = page.get_attribute("[data-next-wall]", "data-next-wall")
            results.append((name, w, start, end, next_wall))

        page.wait_for_function(
            "() => document.querySelector('[data-changes-waiting]')?.dataset.changesWaiting === '0'",
            timeout=60000,
        )
        for name, w, start, end, next_wall in results:
            print(
                f"{name}: {w.taps} taps (target {TARGET_TAPS}, ratio {w.taps / TARGET_TAPS:.2f}), "
                f"{w.scrolls} scrolls; wall page {start:.2f} screens at the start "
                f"(target {TARGET_SCREENS:.0f}, ratio {start / TARGET_SCREENS:.2f}), {end:.2f} after, "
                f"{w.screens_max:.2f} at most; "
                f"the dock then offers wall {next_wall}"
            )
        for wall in walls[:2]:
            statuses = sorted(SealPoint.objects.filter(wall=wall).values_list("status", flat=True))
            counts = {s: statuses.count(s) for s in set(statuses)}
            print(
                f"server, wall {wall.tag}: seal points {counts}, findings "
                f"{Finding.objects.filter(wall=wall).count()}"
            )
        ctx.close()
        browser.close()


if __name__ == "__main__":
    main()
