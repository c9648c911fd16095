"""Photos offline, in a real headless Chromium at 360×780 against the live server: taking a job offline
caches a small copy of every photo of the job; offline, the finding shows them labelled defect or fix and
opens them in the viewer; full photos come on request after their total size is shown; the cache keeps
to its bound (oldest out first); removing the job from the phone removes its photos.
"""

from __future__ import annotations

import io

import pytest

from tests.conftest import login
from tests.e2e.test_walk_offline import go_offline, open_walk, open_wall

pytestmark = [pytest.mark.e2e, pytest.mark.django_db(transaction=True)]

PHONE_360 = {
    "viewport": {"width": 360, "height": 780},
    "device_scale_factor": 2,
    "is_mobile": True,
    "has_touch": True,
}


def jpeg(color, size) -> bytes:
    from PIL import Image, ImageDraw

    img = Image.new("RGB", size, color)
    draw = ImageDraw.Draw(img)
    for x in range(0, size[0], 23):
        draw.line([(x, 0), (x, size[1])], fill=(x % 255, 90, 150), width=5)
    out = io.BytesIO()
    img.save(out, "JPEG", quality=88)
    return out.getvalue()


def add_photo(world, finding, purpose, color):
    from django.core.files.base import ContentFile

    from qa.models import Photo

    full, small = jpeg(color, (1200, 900)), jpeg(color, (240, 180))
    photo = Photo(
        job=world.job,
        wall=world.wall,
        finding=finding,
        purpose=purpose,
        uploaded_by=world.inspector,
        width=1200,
        height=900,
    )
    photo.image.save("full.jpg", ContentFile(full), save=False)
    photo.thumbnail.save("thumb.jpg", ContentFile(small), save=False)
    photo.bytes = len(full)
    photo.save()
    return photo


CACHED = """async () => (await (await caches.open(
    (await import('/static/qa/walk/account.js')).photoCacheName())).keys())
  .map((r) => new URL(r.url).pathname)"""


def test_photos_cached_offline_full_on_request_bounded_purged(live_server, browser, world, artifacts):
    from qa.models import Finding

    finding = Finding.objects.create(
        job=world.job,
        wall=world.wall,
        kind="slit",
        width_m=0.004,
        length_m=0.8,
        trade="drywall",
        status="fixed",
        created_by=world.inspector,
    )
    photos = [
        add_photo(world, finding, "defect", (190, 60, 40)),
        add_photo(world, finding, "defect", (60, 160, 40)),
        add_photo(world, finding, "fix", (40, 80, 200)),
    ]
    ctx = browser.new_context(**PHONE_360)
    ctx.set_default_timeout(15000)
    page = ctx.new_page()
    login(page, live_server.url, "insp")
    open_walk(page, live_server.url, world.job.id)

    # Taking the job offline fetched the small copy of every photo, and only those.
    cached = page.evaluate(CACHED)
    assert sorted(cached) == sorted(f"/jobs/{world.job.id}/photos/{p.id}/thumb" for p in photos)

    # Offline: the finding shows the three photos from the phone, labelled, each opening full screen.
    go_offline(ctx, page)
    open_wall(page, world.wall.tag)
    page.click(f"[data-finding='{finding.client_id}']")
    page.wait_for_selector("[data-photos]")
    page.wait_for_function(
        "() => [...document.querySelectorAll('[data-photos] img')]"
        ".every((i) => i.complete && i.naturalWidth === 240)"
    )
    labels = page.eval_on_selector_all("[data-photos] .photo-label", "els => els.map(e => e.textContent)")
    assert labels == ["Defect", "Defect", "Fix"]
    page.click(f"[data-open-photo='{photos[2].id}']")
    page.wait_for_selector("[data-viewer][open] [data-viewer-img]")
    assert page.inner_text("[data-viewer-label]") == "Fix photo"
    # The small copy, and the viewer says so.
    assert page.get_attribute("[data-viewer-img]", "data-viewer-small") == ""
    assert "not on this phone" in page.inner_text("[data-viewer]")
    page.screenshot(path=str(artifacts / "walk-photo-viewer-offline-360.png"))
    page.click("[data-close-viewer]")

    # Online again: the job list shows the full photos' total size before anything is fetched.
    ctx.set_offline(False)
    page.goto(live_server.url + "/walk/#/")
    page.wait_for_selector(f"[data-get-full='{world.job.id}']")
    total = sum(p.bytes for p in photos)
    size = f"{total / 1e6:.1f} MB" if total > 1e6 else f"{round(total / 1e3)} kB"
    assert page.inner_text(f"[data-get-full='{world.job.id}']") == f"Get full photos ({size})"
    page.screenshot(path=str(artifacts / "walk-jobs-photos-360.png"))
    page.click(f"[data-get-full='{world.job.id}']")
    page.wait_for_selector(f"[data-get-full='{world.job.id}']", state="detached")
    assert len(page.evaluate(CACHED)) == 6

    # Offline, the viewer now shows the full image.
    go_offline(ctx, page)
    page.goto(live_server.url + f"/walk/#/j/{world.job.id}/f/{finding.client_id}")
    page.click(f"[data-open-photo='{photos[0].id}']")
    page.wait_for_function("() => document.querySelector('[data-viewer-img]')?.naturalWidth === 1200")
    assert page.get_attribute("[data-viewer-img]", "data-viewer-small") is None
    assert page.inner_text("[data-viewer-label]") == "Defect photo"
    page.screenshot(path=str(artifacts / "walk-photo-viewer-full-360.png"))
    page.click("[data-close-viewer]")

    # The cache keeps to its bound: with room for less than all six, the oldest go first.
    ctx.set_offline(False)
    page.evaluate("() => window.dispatchEvent(new Event('online'))")
    page.wait_for_function(  # the sync that going online starts is over (it also caches thumbnails)
        "() => !document.querySelector('[data-sync-now]')?.disabled"
        " && document.querySelector('[data-sync-now]')?.textContent === 'Sync'"
    )
    page.wait_for_timeout(500)
    kept = page.evaluate(
        """async (job) => {
          const db = await import('/static/qa/walk/db.js');
          const pc = await import('/static/qa/walk/photocache.js');
          const idx = await db.meta('photo-cache', []);
          const newest = [...idx].sort((a, b) => a.at.localeCompare(b.at)).slice(-2);
          await db.setMeta('photo-cache-max', newest.reduce((s, e) => s + e.bytes, 0));
          await pc.cacheFull(job, []);   // a store pass applies the bound
          const left = (await db.meta('photo-cache', [])).map((e) => e.url).sort();
          await db.setMeta('photo-cache-max', pc.MAX_BYTES);
          return {left, newest: newest.map((e) => e.url).sort()};
        }""",
        world.job.id,
    )
    assert kept["left"] == kept["newest"]
    assert sorted(page.evaluate(CACHED)) == sorted(kept["newest"])

    # Removing the job from the phone removes its photos too.
    page.goto(live_server.url + "/walk/#/")
    page.once("dialog", lambda d: d.accept())
    page.click(f"[data-remove-job='{world.job.id}']")
    page.wait_for_selector(f"[data-take-offline='{world.job.id}']:has-text('Take offline')")
    assert page.evaluate(CACHED) == []
    assert (
        page.evaluate(
            "async (job) => (await import('/static/qa/walk/db.js')).get('bundles', job)", world.job.id
        )
        is None
    )
    ctx.close()
