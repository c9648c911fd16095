"""The walk in a real headless Chromium at 390×844 against the live server: offline work, reload,
a new browser context on the same profile, exact-once sync of findings and photos.

Offline is guarded as the browser notes advise: the reload must come from the service worker and
``navigator.onLine`` must be false, so a pass cannot come from the network.
"""

from __future__ import annotations

import hashlib

import pytest

from tests.conftest import CHROMIUM, CHROMIUM_ARGS, PHONE, login

pytestmark = [pytest.mark.e2e, pytest.mark.django_db(transaction=True)]


def jpeg_file(path, color, size=(1600, 1200)) -> str:
    """A real JPEG made with Pillow, with a gradient so it is not trivially compressible."""
    from PIL import Image, ImageDraw

    img = Image.new("RGB", size, color)
    draw = ImageDraw.Draw(img)
    for x in range(0, size[0], 40):
        draw.line([(x, 0), (x, size[1])], fill=(x % 255, 80, 160), width=6)
    img.save(path, "JPEG", quality=90)
    return str(path)


def add_walls(world, n=2):
    from qa.models import Wall

    walls = [world.wall]
    for i in range(n):
        wall = Wall.objects.create(
            job=world.job,
            wall_type=world.wall_type,
            tag=f"3-0{i + 1}",
            level="3",
            location=f"between 30{i + 1} and 30{i + 2}",
            length_m=5.0,
            height_m=2.7,
            target_rating=50,
        )
        wall.add_template_seal_points()
        walls.append(wall)
    return walls


def open_walk(page, base, job_id):
    # Signed-in pages register the worker. Wait until it is active before opening the walk: a page whose
    # navigation is still under way when the worker activates is skipped by clients.claim().
    page.goto(base + "/")
    page.evaluate("() => navigator.serviceWorker.ready.then(() => true)")
    page.goto(base + "/walk/")
    page.wait_for_function("() => navigator.serviceWorker.controller !== null")
    page.wait_for_selector(f"[data-take-offline='{job_id}']")
    page.click(f"[data-take-offline='{job_id}']")
    page.wait_for_selector("[data-wall-list]")


def go_offline(ctx, page):
    ctx.set_offline(True)
    resp = page.reload()
    assert resp.from_service_worker, "the offline reload must come from the service worker"
    assert page.evaluate("() => navigator.onLine") is False
    page.wait_for_selector("body[data-ready='1']")


def open_wall(page, tag):
    page.fill("#wall-search", tag)
    page.click(f"[data-wall='{tag}']")
    page.wait_for_selector("[data-points]")


def record_finding(page, point_index=0, width="6", note="", photo=None):
    page.locator("[data-act='defect']").nth(point_index).click()
    page.wait_for_selector("[data-finding-form]")
    if width is not None and page.locator("#f-width").is_visible():
        page.fill("#f-width", width)
    if note:
        page.fill("#f-note", note)
    if photo:
        page.set_input_files("#f-camera", photo)
        page.wait_for_function("() => document.querySelectorAll('.finding-form .thumbs img').length === 1")
    page.click("[data-save]")
    page.wait_for_selector("[data-points]")


def waiting(page) -> tuple[int, int]:
    changes = int(page.get_attribute("[data-changes-waiting]", "data-changes-waiting"))
    photos = int(page.get_attribute("[data-photos-waiting]", "data-photos-waiting"))
    return changes, photos


def device_photo_hashes(page) -> list[str]:
    return page.evaluate("""async () => {
      const { dbName } = await import('/static/qa/walk/account.js');
      const db = await new Promise((ok, no) => {
        const r = indexedDB.open(dbName()); r.onsuccess = () => ok(r.result); r.onerror = no; });
      const rows = await new Promise((ok) => {
        const q = db.transaction('photos').objectStore('photos').getAll();
        q.onsuccess = () => ok(q.result); });
      return rows.map((r) => r.sha256);
    }""")


def test_walk_offline_reload_new_context_then_sync_once(live_server, browser, world, tmp_path, artifacts):
    from qa.models import Finding, Photo, SealPoint

    walls = add_walls(world)
    base = live_server.url
    profile = tmp_path / "profile"
    photo_a = jpeg_file(tmp_path / "a.jpg", (200, 60, 40))
    photo_b = jpeg_file(tmp_path / "b.jpg", (40, 90, 200), size=(3000, 2000))  # downscaled on the phone

    pw = browser.browser_type
    ctx = pw.launch_persistent_context(
        str(profile), executable_path=CHROMIUM, args=CHROMIUM_ARGS, headless=True, **PHONE
    )
    ctx.set_default_timeout(15000)
    page = ctx.pages[0] if ctx.pages else ctx.new_page()
    login(page, base, "insp")
    open_walk(page, base, world.job.id)
    page.screenshot(path=str(artifacts / "walk-walls.png"))

    go_offline(ctx, page)
    # Walk three walls: five findings, two photos, a few ticks.
    open_wall(page, walls[0].tag)
    page.locator("[data-act='pass']").nth(1).click()
    record_finding(page, 0, "6", "bottom track, face A", photo=photo_a)
    record_finding(page, 2, "3", "")
    page.screenshot(path=str(artifacts / "walk-wall.png"), full_page=False)
    page.click("[data-back]")
    open_wall(page, walls[1].tag)
    record_finding(page, 0, "4", "open joint at top", photo=photo_b)
    page.locator("[data-act='na']").nth(3).click()
    page.click("[data-back]")
    open_wall(page, walls[2].tag)
    record_finding(page, 1, "5")
    record_finding(page, 0, "2")
    assert waiting(page)[1] == 2
    changes_before = waiting(page)[0]
    assert changes_before >= 7
    assert Finding.objects.count() == 0  # nothing reached the server while offline

    # Reload while offline: still there.
    go_offline(ctx, page)
    page.goto(base + f"/walk/#/j/{world.job.id}/w/{walls[0].id}")
    page.wait_for_selector("[data-findings]")
    assert page.locator("[data-finding]").count() == 2
    assert waiting(page) == (changes_before, 2)
    page.screenshot(path=str(artifacts / "walk-offline-reload.png"))
    hashes = sorted(device_photo_hashes(page))
    ctx.close()

    # A new context on the same profile (the tab and the browser were closed): still there.
    ctx = pw.launch_persistent_context(
        str(profile), executable_path=CHROMIUM, args=CHROMIUM_ARGS, headless=True, offline=True, **PHONE
    )
    ctx.set_default_timeout(15000)
    page = ctx.pages[0] if ctx.pages else ctx.new_page()
    resp = page.goto(base + f"/walk/#/j/{world.job.id}")
    assert resp.from_service_worker and page.evaluate("() => navigator.onLine") is False
    page.wait_for_selector("[data-wall-list]")
    assert waiting(page) == (changes_before, 2)

    # Online: everything reaches the server once.
    ctx.set_offline(False)
    page.evaluate("() => window.dispatchEvent(new Event('online'))")
    page.wait_for_function(
        "() => document.querySelector('[data-changes-waiting]')?.dataset.changesWaiting === '0'"
        " && document.querySelector('[data-photos-waiting]')?.dataset.photosWaiting === '0'",
        timeout=30000,
    )
    assert Finding.objects.count() == 5
    assert Photo.objects.count() == 2
    # The server received exactly the phone's bytes; it stores a re-encoded copy with no metadata.
    assert sorted(Photo.objects.values_list("received_sha256", flat=True)) == hashes
    for p in Photo.objects.all():
        assert max(p.width, p.height) <= 2560
        assert hashlib.sha256(p.image.open("rb").read()).hexdigest() == p.sha256
    assert SealPoint.objects.filter(status="na").count() == 1
    assert SealPoint.objects.filter(status="pass").count() == 1
    assert SealPoint.objects.filter(status="defect").count() == 5
    page.screenshot(path=str(artifacts / "walk-synced.png"))

    # Sync again (the button and a reload): still exactly those.
    page.click("[data-sync-now]")
    page.wait_for_function("() => !document.querySelector('[data-sync-now]').disabled")
    page.reload()
    page.wait_for_selector("[data-wall-list]")
    assert Finding.objects.count() == 5 and Photo.objects.count() == 2
    ctx.close()
