"""The walk's sync edges in a real headless Chromium: a replayed outbox, two devices editing the same
finding, a photo upload cut off halfway, a new service worker version, a crew lead fixing an item."""

from __future__ import annotations

import hashlib
import re

import pytest

from tests.conftest import PHONE, login
from tests.e2e.test_walk_offline import go_offline, jpeg_file, open_walk, open_wall, record_finding

pytestmark = [pytest.mark.e2e, pytest.mark.django_db(transaction=True)]

ALL_SENT = (
    "() => document.querySelector('[data-changes-waiting]')?.dataset.changesWaiting === '0'"
    " && document.querySelector('[data-photos-waiting]')?.dataset.photosWaiting === '0'"
    " && !document.querySelector('[data-sync-now]')?.disabled"
)

OUTBOX = """async () => {
  const { dbName } = await import('/static/qa/walk/account.js');
  const db = await new Promise((ok, no) => {
    const r = indexedDB.open(dbName()); r.onsuccess = () => ok(r.result); r.onerror = no; });
  return await new Promise((ok) => {
    const q = db.transaction('outbox').objectStore('outbox').getAll(); q.onsuccess = () => ok(q.result); });
}"""


ASK_VERSION = """() => new Promise((ok) => {
  navigator.serviceWorker.addEventListener('message', (e) => e.data.type === 'version' && ok(e.data.version));
  navigator.serviceWorker.controller.postMessage({type: 'version'});
})"""


def now(page) -> str:
    return page.evaluate("() => new Date().toISOString()")


def synced_since(page, since: str, timeout=20000) -> None:
    """Wait until the phone finished a sync that started after ``since`` and nothing waits.

    The server's record is read only afterwards: with in-memory SQLite the live server shares the
    test's database connection, so the test must not query while the phone is syncing."""
    page.wait_for_function(
        "(since) => { const el = document.querySelector('[data-last-sync]');"
        " return el && el.dataset.lastSync > since"
        " && document.querySelector('[data-changes-waiting]').dataset.changesWaiting === '0'"
        " && document.querySelector('[data-photos-waiting]').dataset.photosWaiting === '0'"
        " && !document.querySelector('[data-sync-now]').disabled; }",
        arg=since,
        timeout=timeout,
    )


def close(ctx):
    """Leave no request in flight: with in-memory SQLite the live server shares the test's connection,
    so a request still running when the test database is flushed fails the flush."""
    import time

    for page in ctx.pages:
        page.goto("about:blank")
    ctx.close()
    time.sleep(0.5)


def new_phone(browser):
    ctx = browser.new_context(**PHONE)
    ctx.set_default_timeout(15000)
    return ctx


def test_replayed_outbox_makes_no_twins(live_server, phone, world, api):
    from qa.models import Event, Finding

    page = phone.new_page()
    login(page, live_server.url, "insp")
    open_walk(page, live_server.url, world.job.id)
    go_offline(phone, page)
    open_wall(page, world.wall.tag)
    record_finding(page, 0, "6")
    record_finding(page, 1, "4")
    ops = [
        {k: op[k] for k in ("op_id", "kind", "base_version", "payload", "device_at")}
        for op in page.evaluate(OUTBOX)
    ]
    assert len(ops) == 2
    # The outbox reaches the server twice while the phone never hears back (a lost answer) ...
    client = api(world.inspector)
    first = client.post(f"/api/jobs/{world.job.id}/sync/", {"device_id": "replay", "ops": ops}, format="json")
    second = client.post(
        f"/api/jobs/{world.job.id}/sync/", {"device_id": "replay", "ops": ops}, format="json"
    )
    assert first.status_code == second.status_code == 200
    assert first.data["results"] == second.data["results"]
    assert [r["status"] for r in first.data["results"]] == ["applied", "applied"]
    # ... then the phone sends the same outbox a third time.
    t0 = now(page)
    phone.set_offline(False)
    page.click("[data-sync-now]")
    synced_since(page, t0)
    assert Finding.objects.count() == 2
    assert Event.objects.filter(verb="finding.created").count() == 2
    close(phone)


def test_two_devices_edit_same_finding_conflict_kept_and_resolved(
    live_server, browser, world, api, artifacts
):
    from qa.models import Conflict, Finding

    client = api(world.inspector)
    point = world.wall.seal_points.first()
    client.post(
        f"/api/jobs/{world.job.id}/findings/",
        {
            "wall": world.wall.id,
            "seal_point": point.id,
            "kind": "slit",
            "face": "a",
            "width": 6,
            "length": 1500,
            "trade": "drywall",
        },
        format="json",
    )
    finding = Finding.objects.get()
    pages = []
    for _ in range(2):
        ctx = new_phone(browser)
        page = ctx.new_page()
        login(page, live_server.url, "insp")
        open_walk(page, live_server.url, world.job.id)
        go_offline(ctx, page)
        page.goto(live_server.url + f"/walk/#/j/{world.job.id}/f/{finding.client_id}/edit")
        page.wait_for_selector("[data-finding-form]")
        pages.append((ctx, page))
    for (_ctx, page), (width, note) in zip(
        pages, [("9", "first phone"), ("12", "second phone")], strict=True
    ):
        page.fill("#f-width", width)
        page.fill("#f-note", note)
        page.click("[data-save]")
        page.wait_for_selector("[data-finding-status]")
    for ctx, page in pages:  # noqa: B007
        ctx.set_offline(False)
        page.click("[data-sync-now]")
        page.wait_for_function(ALL_SENT)
    finding.refresh_from_db()
    assert finding.note == "first phone" and finding.width_m == pytest.approx(0.009)  # not overwritten
    conflict = Conflict.objects.get()
    assert conflict.device_version["changes"]["note"] == "second phone"
    assert conflict.server_version["note"] == "first phone"
    ctx, page = pages[1]
    page.goto(live_server.url + f"/walk/#/j/{world.job.id}")
    page.click("[data-conflicts]")
    page.wait_for_selector(f"[data-conflict='{conflict.id}']")
    page.screenshot(path=str(artifacts / "walk-conflict.png"))
    t0 = now(page)
    page.click(f"[data-conflict='{conflict.id}'] [data-keep='device']")
    page.wait_for_function("() => !document.querySelector('[data-conflicts]')")
    synced_since(page, t0)
    conflict.refresh_from_db()
    finding.refresh_from_db()
    assert conflict.resolution == "device" and conflict.resolved_by == world.inspector
    assert finding.note == "second phone" and finding.width_m == pytest.approx(0.012)
    for ctx, _ in pages:
        close(ctx)


def test_photo_upload_cut_off_resumes_and_the_server_received_every_byte(live_server, phone, world, tmp_path):
    from qa.models import Photo, PhotoUpload

    page = phone.new_page()
    login(page, live_server.url, "insp")
    open_walk(page, live_server.url, world.job.id)
    go_offline(phone, page)
    open_wall(page, world.wall.tag)
    record_finding(page, 0, "6", photo=jpeg_file(tmp_path / "big.jpg", (90, 140, 60), size=(2400, 1800)))
    device_sha = page.evaluate(OUTBOX.replace("'outbox'", "'photos'"))[0]["sha256"]

    offsets: list[int] = []  # start of every chunk the phone sent, in order

    def cut_second_chunk(route):
        offset = int(re.search(r"offset=(\d+)", route.request.url).group(1))
        offsets.append(offset)
        if len(offsets) == 2:
            route.abort("connectionreset")  # the signal drops halfway through the photo
        else:
            route.continue_()

    page.route(re.compile(r"/uploads/[0-9a-f-]+/\?offset="), cut_second_chunk)
    t0 = now(page)
    phone.set_offline(False)
    page.evaluate("() => window.dispatchEvent(new Event('online'))")
    synced_since(page, t0, timeout=40000)  # the phone retries on its own, with back-off
    assert len(offsets) >= 3 and offsets[0] == 0
    assert offsets[2] == offsets[1] > 0  # resumed where the server's copy ended, not from the start
    assert offsets.count(0) == 1
    photo = Photo.objects.get()
    with photo.image.open("rb") as fh:
        stored = fh.read()
    # The bytes the phone sent arrived whole (received_sha256); the stored file is re-encoded with no
    # metadata block, so it has its own hash.
    assert device_sha == photo.received_sha256
    assert hashlib.sha256(stored).hexdigest() == photo.sha256
    assert not PhotoUpload.objects.exists()
    assert photo.bytes > offsets[1]


def test_new_service_worker_waits_for_the_user(live_server, phone, world):
    page = phone.new_page()
    login(page, live_server.url, "insp")
    page.goto(live_server.url + "/walk/")
    page.wait_for_function("() => navigator.serviceWorker.controller !== null")
    page.wait_for_selector("[data-sw-notice][data-sw-state='ready']")
    # A new worker script for the same scope: the browser installs it beside the running one. (Chromium
    # fetches worker scripts outside the page, so they cannot be rerouted; a new script URL is what a
    # deploy with changed bytes looks like to the registration.)
    page.evaluate("() => navigator.serviceWorker.register('/sw.js?build=next', {scope: '/'})")
    page.wait_for_selector("[data-sw-notice][data-sw-state='update']")
    old = page.evaluate(ASK_VERSION)
    assert not old.endswith("+next")  # still the old worker until the user accepts
    with page.expect_navigation():
        page.click("[data-sw-accept]")
    page.wait_for_function("() => navigator.serviceWorker.controller !== null")
    now = page.evaluate(ASK_VERSION)
    assert now.endswith("+next")
    close(phone)


def test_crew_sees_own_trade_marks_fixed_inspector_sees_fix(
    live_server, browser, world, api, tmp_path, artifacts
):
    from qa.models import Finding, Photo

    client = api(world.inspector)
    points = list(world.wall.seal_points.all())
    for trade, point in (("electrical", points[0]), ("drywall", points[1])):
        client.post(
            f"/api/jobs/{world.job.id}/findings/",
            {
                "wall": world.wall.id,
                "seal_point": point.id,
                "kind": "hole",
                "diameter": 20,
                "trade": trade,
                "note": f"{trade} item",
            },
            format="json",
        )
    elec = Finding.objects.get(trade="electrical")
    ctx = new_phone(browser)
    page = ctx.new_page()
    login(page, live_server.url, "elec")
    open_walk(page, live_server.url, world.job.id)
    page.click(f"[data-wall='{world.wall.tag}']")
    page.wait_for_selector("[data-findings]")
    assert page.locator("[data-finding]").count() == 1  # only the electrical item
    assert page.locator("[data-points]").count() == 0  # crews do not tick seal points
    page.click(f"[data-finding='{elec.client_id}']")
    page.fill("#fix-note", "box wrapped with putty pad")
    page.set_input_files("#fix-photo", jpeg_file(tmp_path / "fix.jpg", (160, 160, 160)))
    page.wait_for_function("() => /ready/.test(document.querySelector('.fix-form .hint').textContent)")
    page.screenshot(path=str(artifacts / "walk-crew-fix.png"))
    t0 = now(page)
    page.click("[data-mark-fixed]")
    page.wait_for_selector("[data-finding-status='fixed']")
    synced_since(page, t0)
    elec.refresh_from_db()
    assert elec.status == "fixed" and elec.fixed_by == world.electrician
    assert Photo.objects.get().purpose == "fix"
    close(ctx)

    ctx = new_phone(browser)
    page = ctx.new_page()
    login(page, live_server.url, "insp")
    open_walk(page, live_server.url, world.job.id)
    page.goto(live_server.url + f"/walk/#/j/{world.job.id}/f/{elec.client_id}")
    page.wait_for_selector("[data-finding-status='fixed']")
    assert page.locator("[data-photo-state='server']").count() == 1
    t0 = now(page)
    page.click("[data-verify]")
    page.wait_for_selector("[data-finding-status='verified']")
    synced_since(page, t0)
    close(ctx)
    elec.refresh_from_db()
    assert elec.status == "verified" and elec.verified_by == world.inspector
