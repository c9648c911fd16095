"""The server restarts during a walk: the walk goes on without it and syncs after, exactly once.

A real gunicorn (``tests.bench.serverkit``) on a throwaway database: a new PostgreSQL database when
``DATABASE_URL`` points at PostgreSQL (CI's second pass), else a SQLite file. Headless Chromium at
390×844 signs in, takes the job offline and records one finding, which reaches the server. Then the
whole server (master and workers) is killed by PID with SIGKILL, as a crash or a host reboot would.
The phone keeps "signal" (``navigator.onLine`` stays true) but the server is gone: the inspector
records two more findings and ticks seal points, reloads the walk (served by the service worker),
and the sync bar shows the changes waiting and that the server could not be reached. A new gunicorn
on the same port and the same database comes up; the inspector taps "Sync now"; the server's
database, read directly, then holds exactly the three findings and the seal point ticks, once each.
"""

from __future__ import annotations

import contextlib
import json
import os
import shutil
import signal
import socket
import subprocess
import sys
import time
from collections.abc import Iterator
from pathlib import Path
from typing import TYPE_CHECKING

import pytest

from tests.bench.serverkit import PASSWORD, ROOT, Server, db_query, prepared_server
from tests.conftest import login
from tests.e2e.test_walk_offline import open_walk, open_wall, record_finding, waiting

if TYPE_CHECKING:
    from playwright.sync_api import Page

pytestmark = [pytest.mark.e2e, pytest.mark.slow]

SYNCED_SINCE = (
    "(since) => { const el = document.querySelector('[data-last-sync]');"
    " return !!el && el.dataset.lastSync > since"
    " && document.querySelector('[data-changes-waiting]').dataset.changesWaiting === '0'"
    " && document.querySelector('[data-photos-waiting]').dataset.photosWaiting === '0'"
    " && !document.querySelector('[data-sync-now]').disabled"
    " && !document.querySelector('.sync-error'); }"
)
#: The sync bar after a failed attempt: the error line is shown and the changes still wait.
UNREACHABLE = (
    "(n) => !!document.querySelector('.sync-error')"
    " && /Could not reach the server/.test(document.querySelector('.sync-error').textContent)"
    " && document.querySelector('[data-changes-waiting]').dataset.changesWaiting === String(n)"
    " && !document.querySelector('[data-sync-now]').disabled"
)


@pytest.fixture
def server(artifacts: Path) -> Iterator[Server]:
    """One inspector on a two-wall job; the kit stops its own gunicorn, this fixture the restarted one.

    The server's log (both runs) is kept in the artifacts folder for a failed CI run."""
    with prepared_server(workers=2, walls=2, people=[("insp", "inspector", "")]) as srv:
        original = srv.master
        try:
            yield srv
        finally:
            if srv.master is not original:
                stop(srv.master)
            shutil.copyfile(srv.log, artifacts / "walk-server-restart-gunicorn.log")


def stop(master: subprocess.Popen) -> None:
    master.send_signal(signal.SIGTERM)
    try:
        master.wait(timeout=15)
    except subprocess.TimeoutExpired:
        master.kill()
        master.wait()


def alive(pid: int) -> bool:
    """True while any thread of ``pid`` runs.

    A gunicorn worker has threads: its main thread turns zombie first and the open files (the
    listening socket among them) are released only when the last thread has exited, so every task
    is checked. A zombie left for its new parent to reap counts as gone.
    """
    try:
        tasks = list(Path(f"/proc/{pid}/task").iterdir())
    except OSError:
        return False
    for task in tasks:
        try:
            state = (task / "stat").read_text().rsplit(")", 1)[1].split()[0]
        except OSError:
            continue
        if state not in ("Z", "X"):
            return True
    return False


def port_open(url: str) -> bool:
    host, port = url.removeprefix("http://").split(":")
    with socket.socket() as s:
        s.settimeout(1)
        return s.connect_ex((host, int(port))) == 0


def kill_server(server: Server) -> list[int]:
    """SIGKILL the gunicorn master and every worker, by PID; return when none runs and the port is shut."""
    workers = server.workers()
    assert workers, "gunicorn has no workers to kill"
    pids = [server.master.pid, *workers]
    for pid in pids:  # the master first, so it cannot fork a replacement worker
        with contextlib.suppress(ProcessLookupError):
            os.kill(pid, signal.SIGKILL)
    server.master.wait(timeout=10)
    deadline = time.monotonic() + 10
    while any(alive(p) for p in pids) and time.monotonic() < deadline:
        time.sleep(0.05)
    assert not any(alive(p) for p in pids), f"still running after SIGKILL: {[p for p in pids if alive(p)]}"
    while port_open(server.url) and time.monotonic() < deadline:
        time.sleep(0.05)
    assert not port_open(server.url), "something still listens on the server's port"
    return pids


def start_again(server: Server) -> None:
    """A new gunicorn on the same port, same database and data folder (the kit's command line)."""
    port = server.url.rsplit(":", 1)[1]
    logf = open(server.log, "a")  # noqa: SIM115 - the server owns it until the test ends
    server.master = subprocess.Popen(
        [
            str(Path(sys.executable).with_name("gunicorn")),
            "qa.wsgi",
            "-w",
            "2",
            "-b",
            f"127.0.0.1:{port}",
            "--timeout",
            "60",
            "--graceful-timeout",
            "2",
            "--log-level",
            "warning",
        ],
        cwd=ROOT,
        env=server.env,
        stdout=logf,
        stderr=subprocess.STDOUT,
    )
    logf.close()  # the child holds its own descriptor
    server.wait_ready()


def wait_for_active_worker(page: Page) -> None:
    """Wait until the service worker the signed-in pages register is active.

    Opening the walk while the worker is still installing leaves that page uncontrolled for its
    whole life: ``clients.claim()`` skips a page whose navigation is under way when the worker
    activates (a client that is not execution-ready), so ``open_walk`` would wait for a controller
    that never comes. A navigation that starts with an active worker is always controlled.
    """
    page.evaluate("() => { navigator.serviceWorker.ready.then(() => { window.swActive = true; }); }")
    page.wait_for_function("() => window.swActive === true")


def now(page: Page) -> str:
    return page.evaluate("() => new Date().toISOString()")


def point_ids(page: Page) -> list[int]:
    return [
        int(x)
        for x in page.eval_on_selector_all(
            "[data-points] [data-point]", "els => els.map(e => e.dataset.point)"
        )
    ]


def finding_ids(page: Page) -> list[str]:
    return page.eval_on_selector_all(
        "[data-findings] [data-finding]", "els => els.map(e => e.dataset.finding)"
    )


def tick(page: Page, point_id: int, status: str) -> None:
    page.click(f"[data-point='{point_id}'] [data-act='{status}']")
    page.wait_for_selector(f"[data-point='{point_id}'][data-status='{status}']")


def as_json(value: str | dict) -> dict:
    return json.loads(value) if isinstance(value, str) else value


def test_server_killed_and_restarted_during_a_walk(server: Server, phone, artifacts: Path) -> None:
    page = phone.new_page()
    login(page, server.url, "insp", PASSWORD)
    page.wait_for_url(lambda url: "/login/" not in url)  # signed in: the job list
    wait_for_active_worker(page)
    open_walk(page, server.url, server.job)
    walls = db_query(server, "SELECT id, tag FROM qa_wall WHERE job_id = %s ORDER BY id", (server.job,))
    (w0, tag0), (w1, tag1) = walls

    # 1. One finding while the server is up: it is sent at once (the walk syncs after each change).
    open_wall(page, tag0)
    points0 = point_ids(page)
    assert len(points0) >= 4
    t0 = now(page)
    record_finding(page, 0, "6", "first, before the restart")
    page.wait_for_function(SYNCED_SINCE, arg=t0, timeout=20000)
    assert db_query(server, "SELECT count(*) FROM qa_finding WHERE job_id = %s", (server.job,))[0][0] == 1

    # 2. The whole server dies.
    kill_server(server)

    # 3. The walk goes on: two findings and three ticks on two walls, a reload in the middle.
    record_finding(page, 1, "3", "second, server down")
    page.wait_for_function(UNREACHABLE, arg=1, timeout=15000)  # tried, failed, still waiting
    tick(page, points0[2], "pass")
    tick(page, points0[3], "na")
    assert len(finding_ids(page)) == 2
    resp = page.reload()  # the phone reloads the walk with the server gone: the service worker answers
    assert resp is not None and resp.from_service_worker, "the reload must come from the service worker"
    assert page.evaluate("() => navigator.onLine") is True  # signal, but no server
    page.wait_for_selector("[data-points]")
    assert len(finding_ids(page)) == 2
    assert waiting(page) == (3, 0)
    page.click("[data-back]")
    open_wall(page, tag1)
    points1 = point_ids(page)
    record_finding(page, 0, "4", "third, server down")
    tick(page, points1[1], "pass")
    page.wait_for_function(UNREACHABLE, arg=5, timeout=15000)
    assert page.locator("[data-conn='online']").count() == 1
    page.screenshot(path=str(artifacts / "walk-server-down.png"))
    device_findings = set(finding_ids(page))
    page.click("[data-back]")
    open_wall(page, tag0)
    device_findings |= set(finding_ids(page))
    assert len(device_findings) == 3
    assert db_query(server, "SELECT count(*) FROM qa_finding WHERE job_id = %s", (server.job,))[0][0] == 1

    # 4. The server comes back on the same port and database; the inspector taps "Sync now".
    start_again(server)
    t1 = now(page)
    page.click("[data-sync-now]")
    page.wait_for_function(SYNCED_SINCE, arg=t1, timeout=30000)
    assert waiting(page) == (0, 0)
    page.screenshot(path=str(artifacts / "walk-server-restarted.png"))

    # 5. The server holds exactly what the phone recorded, once each.
    rows = db_query(server, "SELECT client_id FROM qa_finding WHERE job_id = %s", (server.job,))
    stored = sorted(str(r[0]).replace("-", "") for r in rows)
    assert stored == sorted(f.replace("-", "") for f in device_findings)
    notes = db_query(server, "SELECT note FROM qa_finding WHERE job_id = %s", (server.job,))
    assert sorted(n for (n,) in notes) == [
        "first, before the restart",
        "second, server down",
        "third, server down",
    ]
    created = db_query(
        server, "SELECT count(*) FROM qa_event WHERE verb = 'finding.created' AND job_id = %s", (server.job,)
    )[0][0]
    assert created == 3, "one creation event per finding"
    expected = {
        points0[0]: "defect",
        points0[1]: "defect",
        points0[2]: "pass",
        points0[3]: "na",
        points1[0]: "defect",
        points1[1]: "pass",
    }
    statuses = dict(
        db_query(server, "SELECT id, status FROM qa_sealpoint WHERE wall_id IN (%s, %s)", (w0, w1))
    )
    for pid, status in expected.items():
        assert statuses[pid] == status, (
            f"seal point {pid}: {statuses[pid]} on the server, {status} on the phone"
        )
    assert sorted(s for p, s in statuses.items() if p not in expected) == ["unchecked"] * (len(statuses) - 6)
    checked = db_query(
        server,
        "SELECT count(*) FROM qa_event WHERE verb = 'sealpoint.checked' AND job_id = %s",
        (server.job,),
    )[0][0]
    assert checked == 3, "one event per tick"
    ops = db_query(server, "SELECT kind, result FROM qa_syncoperation WHERE job_id = %s", (server.job,))
    assert sorted(k for k, _ in ops) == ["finding.create"] * 3 + ["seal_point.status"] * 3
    assert {as_json(r)["status"] for _, r in ops} == {"applied"}

    # 6. The phone's view agrees with the server after the refreshed bundle.
    for pid, status in expected.items():
        if pid in points0:
            page.wait_for_selector(f"[data-point='{pid}'][data-status='{status}']")
    assert page.locator(".chip.info").count() == 0  # nothing marked "not sent"
