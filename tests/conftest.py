"""Shared fixtures: personas on one small job, a second job for outsiders, API clients, a browser.

The personas: an inspector, a crew lead of one trade (electrical), a crew lead of another trade
(drywall), an owner, and an outsider who is inspector on another job.
"""

from __future__ import annotations

import os
import shutil
from dataclasses import dataclass

import pytest

PASSWORD = "correct-horse-battery-9"


@pytest.fixture(autouse=True)
def _media_in_tmp(settings, tmp_path):
    settings.MEDIA_ROOT = tmp_path / "media"


@pytest.fixture(scope="session", autouse=True)
def _no_stray_connections(django_db_setup, django_db_blocker):
    """Before the test database is dropped, end any connection a test thread or server left open
    (PostgreSQL refuses to drop a database that is in use)."""
    yield
    from django.db import connection

    if connection.vendor != "postgresql":
        return
    with django_db_blocker.unblock(), connection.cursor() as cursor:
        cursor.execute(
            "SELECT pg_terminate_backend(pid) FROM pg_stat_activity "
            "WHERE datname = current_database() AND pid <> pg_backend_pid()"
        )


@pytest.fixture(autouse=True)
def _fresh_cache():
    """Sign-in throttle counters and cached audits live in the cache; no test inherits another's."""
    from django.core.cache import cache

    cache.clear()
    yield
    cache.clear()


@dataclass
class World:
    job: object
    other_job: object
    inspector: object
    electrician: object
    drywaller: object
    owner: object
    outsider: object
    wall_type: object
    wall: object
    other_wall: object

    def users(self):
        return {
            "inspector": self.inspector,
            "crew": self.electrician,
            "crew_other_trade": self.drywaller,
            "owner": self.owner,
            "outsider": self.outsider,
        }


def make_user(username: str, **extra):
    from django.contrib.auth import get_user_model

    return get_user_model().objects.create_user(username=username, password=PASSWORD, **extra)


# A lab-type curve (dB, 50..5000 Hz) rating STC 50 on the E413 contour shape; invented for tests.
FLAT_50 = [18, 22, 26, 29, 32, 35, 38, 41, 44, 47, 48, 49, 50, 51, 52, 52, 52, 52, 52, 52, 52]


@pytest.fixture
def world(db):
    from qa.models import Job, Member, Wall, WallType

    job = Job.objects.create(name="Test Block A", units="metric")
    other_job = Job.objects.create(name="Other Block", units="imperial")
    inspector = make_user("insp", first_name="Iris")
    electrician = make_user("elec")
    drywaller = make_user("dry")
    owner = make_user("own")
    outsider = make_user("out")
    Member.objects.create(job=job, user=inspector, role="inspector")
    Member.objects.create(job=job, user=electrician, role="crew", trade="electrical")
    Member.objects.create(job=job, user=drywaller, role="crew", trade="drywall")
    Member.objects.create(job=job, user=owner, role="owner")
    Member.objects.create(job=other_job, user=outsider, role="inspector")
    wall_type = WallType.objects.create(
        job=job,
        code="T1",
        name="Test stud wall",
        construction="wood_stud",
        tl=FLAT_50,
        tl_source="lab",
        design_rating=50,
        thickness_m=0.12,
    )
    wall = Wall.objects.create(
        job=job,
        wall_type=wall_type,
        tag="2-01",
        level="2",
        location="between 201 and 202",
        length_m=6.0,
        height_m=2.7,
        target_rating=50,
    )
    wall.add_template_seal_points()
    other_type = WallType.objects.create(
        job=other_job,
        code="X1",
        name="Other",
        construction="steel_stud",
        tl=FLAT_50,
        tl_source="lab",
        thickness_m=0.12,
    )
    other_wall = Wall.objects.create(
        job=other_job, wall_type=other_type, tag="9-01", level="9", length_m=5.0, height_m=2.7
    )
    other_wall.add_template_seal_points()
    return World(
        job, other_job, inspector, electrician, drywaller, owner, outsider, wall_type, wall, other_wall
    )


@pytest.fixture
def api():
    """An API client factory: ``api(user)`` returns a DRF client logged in as ``user`` (or anonymous)."""
    from rest_framework.test import APIClient

    def make(user=None):
        client = APIClient()
        if user is not None:
            client.force_authenticate(user)
        return client

    return make


# --- browser -------------------------------------------------------------------------------------

CHROMIUM = os.environ.get("CHROMIUM", "/usr/bin/chromium")
CHROMIUM_ARGS = [
    "--no-sandbox",
    "--disable-gpu",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--no-first-run",
    "--disable-quic",
    "--disable-dev-shm-usage",
    "--host-resolver-rules=MAP * ~NOTFOUND, EXCLUDE localhost, EXCLUDE 127.0.0.1",
]
PHONE = {
    "viewport": {"width": 390, "height": 844},
    "device_scale_factor": 2,
    "is_mobile": True,
    "has_touch": True,
}


def chromium_available() -> bool:
    return shutil.which(CHROMIUM) is not None or os.path.exists(CHROMIUM)


@pytest.fixture(scope="module")
def browser():
    if not chromium_available():
        if os.environ.get("CI"):
            pytest.fail(f"Chromium not found at {CHROMIUM}; browser tests must run in CI")
        pytest.skip(f"no Chromium at {CHROMIUM}")
    from playwright.sync_api import sync_playwright

    with sync_playwright() as p:
        b = p.chromium.launch(executable_path=CHROMIUM, args=CHROMIUM_ARGS, headless=True)
        yield b
        b.close()


@pytest.fixture
def phone(browser):
    ctx = browser.new_context(**PHONE)
    ctx.set_default_timeout(15000)
    yield ctx
    ctx.close()


@pytest.fixture
def artifacts():
    """Folder for screenshots the tests take (looked at by people, not asserted)."""
    from pathlib import Path

    path = Path(__file__).resolve().parent.parent / "test-artifacts"
    path.mkdir(exist_ok=True)
    return path


def login(page, base_url: str, username: str, password: str = PASSWORD) -> None:
    page.goto(base_url + "/login/")
    page.fill("#id_username", username)
    page.fill("#id_password", password)
    page.click("button[type=submit]")
    page.wait_for_load_state()
