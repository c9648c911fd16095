"""A faster walk, in a real headless Chromium at 360×780 against the live server: passed points fold to
one line, "next unchecked" scrolls to the next point and moves on to the next wall, "pass the rest of
this face" lists exactly what it ticks, sizes in mm and cm², a sync bar that never covers the field
being filled in, errors beside the control that caused them, and a reopen that needs a note.

Each step asserts what the inspector sees and what the server stored. Screenshots go to test-artifacts/.
"""

from __future__ import annotations

import pytest

from tests.conftest import login
from tests.e2e.test_walk_offline import add_walls, open_walk, open_wall

pytestmark = [pytest.mark.e2e, pytest.mark.django_db(transaction=True)]

SMALL_PHONE = {
    "viewport": {"width": 360, "height": 780},
    "device_scale_factor": 2,
    "is_mobile": True,
    "has_touch": True,
}
SYNCED = (
    "() => document.querySelector('[data-changes-waiting]')?.dataset.changesWaiting === '0'"
    " && !document.querySelector('[data-sync-now]')?.disabled"
)


@pytest.fixture
def small_phone(browser):
    ctx = browser.new_context(**SMALL_PHONE)
    ctx.set_default_timeout(15000)
    yield ctx
    ctx.close()


def section_points(page, face: str, status: str | None = None) -> list[int]:
    sel = f"[data-face='{face}'] [data-point]" + (f"[data-status='{status}']" if status else "")
    return [int(x) for x in page.eval_on_selector_all(sel, "els => els.map(e => e.dataset.point)")]


def box(page, selector: str) -> dict:
    """The element's box. The walk redraws a screen when a sync lands (a moment after each tap), so
    the element may be between two drawings: ask again until it is on the page (at most 5 s)."""
    for _ in range(50):
        found = page.locator(selector).first.bounding_box()
        if found is not None:
            return found
        page.wait_for_timeout(100)
    raise AssertionError(f"{selector} is not on the page")


def overlaps(a: dict, b: dict) -> bool:
    return not (
        a["y"] + a["height"] <= b["y"]
        or b["y"] + b["height"] <= a["y"]
        or a["x"] + a["width"] <= b["x"]
        or b["x"] + b["width"] <= a["x"]
    )


def test_fast_walk_fold_next_pass_rest_units_and_next_wall(live_server, small_phone, world, artifacts):
    from qa.models import Finding, SealPoint

    walls = add_walls(world, 1)
    page = small_phone.new_page()
    login(page, live_server.url, "insp")
    open_walk(page, live_server.url, world.job.id)
    # Taking a job offline is a sync: the bar says when, never "not synced".
    last = page.get_attribute("[data-last-sync]", "data-last-sync")
    assert last, "the bar must show the time of the download as the last sync"
    assert "not synced" not in page.inner_text("[data-syncbar]")

    open_wall(page, walls[0].tag)
    page.screenshot(path=str(artifacts / "walk-fast-start-360.png"))
    all_points = [
        int(x)
        for x in page.eval_on_selector_all(
            "[data-points] [data-point]", "els => els.map(e => e.dataset.point)"
        )
    ]
    assert sorted(all_points) == sorted(SealPoint.objects.filter(wall=walls[0]).values_list("id", flat=True))
    # Compact header: the tag, the facts on one line, the progress.
    assert page.inner_text("[data-progress]").startswith(f"0 of {len(all_points)} checked")

    # 1. A passed point folds to one line without buttons; a tap on the line brings them back.
    first = all_points[0]
    page.click(f"[data-point='{first}'] [data-act='pass']")
    page.wait_for_selector(f"[data-point='{first}'].folded[data-status='pass']")
    assert page.locator(f"[data-point='{first}'] [data-act]").count() == 0
    assert box(page, f"[data-point='{first}']")["height"] <= 56
    page.click(f"[data-expand='{first}']")
    page.wait_for_selector(f"[data-point='{first}'] [data-act='pass'][aria-pressed='true']")

    # 2. A back-box defect in the job's small units: typed in cm², stored in m², shown in cm².
    box_point = SealPoint.objects.filter(wall=walls[0], gap_kind="open_area", face="a").first()
    page.click(f"[data-point='{box_point.id}'] [data-act='defect']")
    page.wait_for_selector("[data-finding-form]")
    assert page.inner_text("label[for='f-area']").endswith("(cm²)")
    assert "m²)" not in page.inner_text("label[for='f-area']").replace("cm²)", "")
    page.fill("#f-area", "6")
    # Where along the wall: 1.5 m from the far end, high up.
    page.fill("#f-along", "1.5")
    page.select_option("#f-along_from", "end")
    page.click("[data-position] .seg:has-text('High')")
    # While a field is being filled in, the sync bar sits at the end of the page, not over the form.
    page.focus("#f-note")
    bar_position = "() => getComputedStyle(document.querySelector('[data-syncbar]')).position"
    assert page.evaluate(bar_position) == "static"
    assert not overlaps(box(page, "#f-note"), box(page, "[data-syncbar]"))
    page.screenshot(path=str(artifacts / "walk-fast-form-360.png"))
    page.click("[data-save]")
    page.wait_for_selector(f"[data-point='{box_point.id}'][data-status='defect']")
    # Back on the wall at that seal point, not at the top.
    assert page.evaluate("() => window.scrollY") > 0
    assert "6 cm²" in page.inner_text("[data-findings]")
    page.wait_for_function(SYNCED, timeout=20000)
    stored = Finding.objects.get(wall=walls[0])
    assert stored.area_m2 == pytest.approx(6e-4, rel=1e-9)  # 6 cm² = 6 × 10⁻⁴ m² (exact)
    assert (stored.along_m, stored.along_from, stored.height_band) == (pytest.approx(1.5), "end", "high")

    # 3. "Next unchecked" from the top goes to the first unchecked point and readies its Pass button.
    page.evaluate("() => window.scrollTo(0, 0)")
    left_before = int(page.get_attribute("[data-next-unchecked]", "data-next-unchecked"))
    assert left_before == len(all_points) - 2
    page.click("[data-next-unchecked]")
    focused = page.evaluate("() => document.activeElement.closest('[data-point]')?.dataset.point")
    first_open = page.eval_on_selector(
        "[data-points] [data-point][data-status='unchecked']", "e => e.dataset.point"
    )
    assert focused == first_open
    pass_box = box(page, f"[data-point='{first_open}'] [data-act='pass']")
    bar_top = box(page, "[data-syncbar]")["y"]
    assert 56 <= pass_box["y"] and pass_box["y"] + pass_box["height"] <= bar_top
    # From a point further down, it goes on downwards, not back to the top.
    page.click(f"[data-point='{first_open}'] [data-act='pass']")
    page.wait_for_selector(f"[data-point='{first_open}'][data-status='pass']")
    page.click("[data-next-unchecked]")
    second = page.evaluate("() => document.activeElement.closest('[data-point]')?.dataset.point")
    order = [str(p) for p in all_points]
    assert order.index(second) > order.index(first_open)

    # 4. Pass the rest of face A: the confirmation lists exactly the unchecked face-A points.
    face_a_open = section_points(page, "a", "unchecked")
    face_a_done = [p for p in section_points(page, "a") if p not in face_a_open]
    other_open = [p for p in all_points if p not in section_points(page, "a")]
    other_open = [p for p in other_open if SealPoint.objects.get(pk=p).status == "unchecked"]
    page.click("[data-pass-rest='a']")
    listed = [
        int(x)
        for x in page.eval_on_selector_all(
            "[data-confirm-point]", "els => els.map(e => e.dataset.confirmPoint)"
        )
    ]
    assert listed == face_a_open
    assert box_point.id not in listed and first not in listed
    assert f"Pass these {len(face_a_open)} of face A?" in page.inner_text("[data-confirm='a']")
    page.screenshot(path=str(artifacts / "walk-fast-pass-rest-360.png"))
    page.click("[data-confirm-pass-rest='a']")
    page.wait_for_selector("[data-confirm]", state="detached")
    page.wait_for_function(SYNCED, timeout=20000)
    page.wait_for_function(
        "(n) => document.querySelectorAll(\"[data-face='a'] [data-status='unchecked']\").length === n", arg=0
    )
    statuses = dict(SealPoint.objects.filter(wall=walls[0]).values_list("id", "status"))
    assert all(statuses[p] == "pass" for p in face_a_open)
    assert statuses[box_point.id] == "defect"  # a recorded defect is never ticked over
    assert all(statuses[p] == "unchecked" for p in other_open), "other faces are not touched"
    assert set(face_a_done) <= {p for p, s in statuses.items() if s != "unchecked"}

    # 5. The rest of the wall, then the dock offers the next wall with unchecked points.
    for face in ("through", "b"):
        if page.locator(f"[data-pass-rest='{face}']").count():
            page.click(f"[data-pass-rest='{face}']")
            page.click(f"[data-confirm-pass-rest='{face}']")
            page.wait_for_selector("[data-confirm]", state="detached")
    page.wait_for_selector("[data-next-wall]")
    page.wait_for_function(SYNCED, timeout=20000)
    assert SealPoint.objects.filter(wall=walls[0], status="unchecked").count() == 0
    # Every point folded except the defect: the wall is short.
    height = page.evaluate("() => document.documentElement.scrollHeight / window.innerHeight")
    assert height <= 4, f"the walked wall page is {height:.1f} screens long"
    # The end of the page can scroll clear of the bar and the dock.
    page.evaluate("() => window.scrollTo(0, document.documentElement.scrollHeight)")
    last_box = box(page, "#walk-main > :last-child")
    dock_top = box(page, "[data-dock]")["y"]
    assert last_box["y"] + last_box["height"] <= dock_top + 1
    page.screenshot(path=str(artifacts / "walk-fast-done-360.png"))
    next_tag = page.get_attribute("[data-next-wall]", "data-next-wall")
    assert next_tag != walls[0].tag
    page.click("[data-next-wall]")
    page.wait_for_selector(f"h1:has-text('Wall {next_tag}')")


def test_errors_beside_the_control_and_reopen_needs_a_note(live_server, small_phone, world, artifacts):
    from qa.models import Event, Finding, SealPoint

    fixed = Finding.objects.create(
        job=world.job,
        wall=world.wall,
        kind="slit",
        width_m=0.003,
        length_m=0.5,
        trade="drywall",
        status="fixed",
        fix_note="Sealed both sides",
        created_by=world.inspector,
    )
    page = small_phone.new_page()
    login(page, live_server.url, "insp")
    open_walk(page, live_server.url, world.job.id)
    open_wall(page, world.wall.tag)

    # A change the server refuses shows inside the seal point it was about, with what was wrong.
    point = SealPoint.objects.filter(wall=world.wall).order_by("position").first()
    page.evaluate(
        """async ([job, point, version]) => {
          const store = await import('/static/qa/walk/store.js');
          const sync = await import('/static/qa/walk/sync.js');
          await store.enqueue(job, 'seal_point.status', {seal_point: point, status: 'half-done'}, version);
          await sync.syncNow(job);
        }""",
        [world.job.id, point.id, point.version],
    )
    note_selector = f"[data-point='{point.id}'] [data-problem]"
    note = page.locator(note_selector)
    note.wait_for()
    assert "not accepted by the server" in note.inner_text()
    assert "Status" in note.inner_text()
    note_box = box(page, note_selector)
    assert note_box["y"] >= 0 and note_box["y"] + note_box["height"] <= 780, "the error is on the screen"
    page.screenshot(path=str(artifacts / "walk-error-beside-point-360.png"))
    page.click(f"[data-point='{point.id}'] [data-dismiss-problem]")
    page.wait_for_selector(f"[data-point='{point.id}'] [data-problem]", state="detached")
    assert SealPoint.objects.get(pk=point.id).status == "unchecked"

    # Reopen asks why; without a note it says so beside the note field and sends nothing.
    page.click(f"[data-finding='{fixed.client_id}']")
    page.wait_for_selector("[data-finding-status='fixed']")
    page.click("[data-reopen]")
    page.click("[data-confirm-reopen]")
    error = page.locator("#reopen-note-error")
    assert "required" in error.inner_text()
    err_box, field_box = box(page, "#reopen-note-error"), box(page, "#reopen-note")
    gap = err_box["y"] - (field_box["y"] + field_box["height"])
    assert 0 <= gap < 40, "the error sits right under the field"
    assert page.evaluate("() => document.activeElement.id") == "reopen-note"
    page.screenshot(path=str(artifacts / "walk-reopen-needs-note-360.png"))
    assert Finding.objects.get(pk=fixed.pk).status == "fixed"
    page.fill("#reopen-note", "Gap still open at the top corner")
    page.click("[data-confirm-reopen]")
    page.wait_for_selector("[data-finding-status='reopened']")
    page.wait_for_function(SYNCED, timeout=20000)
    fixed.refresh_from_db()
    assert fixed.status == "reopened"
    event = Event.objects.filter(verb__contains="reopen").order_by("-id").first()
    assert event is not None and "Gap still open at the top corner" in str(event.data)
