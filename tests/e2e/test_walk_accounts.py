"""The walk's data on a phone belongs to the signed-in person.

Everything the walk keeps (its IndexedDB and its photo cache) is named after the user, so a second
person signing in on the same phone never sees or sends the first one's data; signing out names the
changes not sent yet, and clears the walk's data once nothing waits.
"""

from __future__ import annotations

import re
import uuid

import pytest

from tests.conftest import login
from tests.e2e.test_walk_offline import open_walk

pytestmark = [pytest.mark.e2e, pytest.mark.django_db(transaction=True)]

DATABASES = (
    "async () => (await indexedDB.databases())"
    ".map((d) => d.name).filter((n) => n.startsWith('sealwalk-walk'))"
)


def sign_out(page, base):
    page.goto(base + "/")
    page.wait_for_load_state("networkidle")
    with page.expect_navigation():
        page.click("form[data-sign-out] button")
    page.wait_for_load_state()


def test_sign_out_clears_the_walk_and_the_next_person_starts_empty(live_server, browser, world):
    ctx = browser.new_context(viewport={"width": 390, "height": 844})
    page = ctx.new_page()
    login(page, live_server.url, "insp")
    open_walk(page, live_server.url, world.job.id)
    assert page.evaluate(DATABASES) == [f"sealwalk-walk-u{world.inspector.pk}"]
    sign_out(page, live_server.url)
    assert page.evaluate(DATABASES) == [], "nothing was waiting, so the walk's data is cleared"

    login(page, live_server.url, "own")
    page.goto(live_server.url + "/walk/")
    page.wait_for_selector(f"[data-take-offline='{world.job.id}']")  # the job is offered, not already held
    assert f"sealwalk-walk-u{world.inspector.pk}" not in page.evaluate(DATABASES)
    ctx.close()


def test_unsent_changes_are_named_at_sign_out_kept_for_their_owner_and_never_sent_by_another(
    live_server, browser, world
):
    from qa.models import SealPoint, SyncOperation

    ctx = browser.new_context(viewport={"width": 390, "height": 844})
    page = ctx.new_page()
    login(page, live_server.url, "insp")
    open_walk(page, live_server.url, world.job.id)
    page.route(re.compile(r"/api/jobs/\d+/sync/"), lambda route: route.abort("connectionrefused"))
    point = SealPoint.objects.filter(wall=world.wall).order_by("position").first()
    page.evaluate(
        """async ([job, point, version]) => {
          const store = await import('/static/qa/walk/store.js');
          await store.enqueue(job, 'seal_point.status', {seal_point: point, status: 'pass'}, version);
        }""",
        [world.job.id, point.id, point.version],
    )
    pending = page.evaluate(
        """async (job) => (await (await import('/static/qa/walk/db.js')).byJob('outbox', job))
        .filter((op) => op.state === 'pending').length""",
        world.job.id,
    )
    assert pending == 1
    messages = []
    page.on("dialog", lambda d: (messages.append(d.message), d.accept()))
    sign_out(page, live_server.url)
    assert messages and "1 change from the walk on this phone is not sent yet" in messages[0]
    assert page.evaluate(DATABASES) == [f"sealwalk-walk-u{world.inspector.pk}"], "kept for their owner"

    # Someone else on the same phone: their walk neither shows nor sends the first person's change.
    page.unroute(re.compile(r"/api/jobs/\d+/sync/"))
    login(page, live_server.url, "own")
    open_walk(page, live_server.url, world.job.id)
    page.evaluate("async (job) => (await import('/static/qa/walk/sync.js')).syncNow(job)", world.job.id)
    assert not SyncOperation.objects.exists()
    point.refresh_from_db()
    assert point.status == "unchecked"
    sign_out(page, live_server.url)

    # The owner of the change signs in again: it is sent, once, in their name.
    login(page, live_server.url, "insp")
    page.goto(live_server.url + "/walk/")
    page.wait_for_selector("[data-wall-list], [data-take-offline]")
    page.evaluate("async (job) => (await import('/static/qa/walk/sync.js')).syncNow(job)", world.job.id)
    op = SyncOperation.objects.get()
    assert op.user == world.inspector and op.result["status"] == "applied"
    point.refresh_from_db()
    assert point.status == "pass"
    assert uuid.UUID(str(op.op_id))
    ctx.close()
