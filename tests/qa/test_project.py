"""Project-wide invariants: no pending migrations, the OpenAPI schema builds, ``acoustics`` imports
without Django, and every named page renders for each role."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest
from django.core.management import call_command
from django.urls import reverse

from tests.qa.roles import ROLES

ROOT = Path(__file__).resolve().parents[2]
PASSWORD = "correct-horse-battery-9"  # tests/conftest.py


def run(*args: str, timeout: float = 120) -> subprocess.CompletedProcess:
    env = {**os.environ, "DJANGO_SETTINGS_MODULE": "qa.settings_test", "PYTHONWARNINGS": "ignore"}
    return subprocess.run(
        [sys.executable, *args], cwd=ROOT, env=env, capture_output=True, text=True, timeout=timeout
    )


@pytest.mark.django_db
def test_no_pending_migrations():
    try:
        call_command("makemigrations", "--check", "--dry-run", verbosity=0)
    except SystemExit as exc:  # makemigrations --check exits 1 when a model change has no migration
        pytest.fail(f"a model change has no migration (makemigrations --check exited {exc.code})")


def test_openapi_schema_builds_and_validates(tmp_path):
    out = tmp_path / "schema.yml"
    result = run("manage.py", "spectacular", "--validate", "--file", str(out))
    assert result.returncode == 0, result.stderr[-3000:]
    text = out.read_text()
    for path in (
        "/api/jobs/{job_pk}/findings/{id}/fix/",
        "/api/jobs/{job_pk}/walls/{wall_pk}/seal-points/",
        "/api/jobs/{job_pk}/photos/",
        "/api/auth/token/",
    ):
        assert path in text
    # Every object id in our routes is typed (not a bare string the client must guess at).
    own = [line for line in result.stderr.splitlines() if "qa/api/" in line]
    assert own == [], "\n".join(own)


def test_acoustics_imports_without_django():
    result = run(
        "-c", "import sys, acoustics; print(sorted(m for m in sys.modules if m.split('.')[0] == 'django'))"
    )
    assert result.returncode == 0, result.stderr
    assert result.stdout.strip() == "[]"


# --- every named page renders for each role ---------------------------------------------------


def as_role(client, world, role):
    if role != "anonymous":
        client.force_login(world.users()[role])
    return client


MEMBER_PAGE = {
    "inspector": 200,
    "crew": 200,
    "crew_other_trade": 200,
    "owner": 200,
    "outsider": 404,
    "anonymous": 302,
}


@pytest.mark.django_db
@pytest.mark.parametrize("role", ROLES)
def test_login_page(client, world, role):
    r = as_role(client, world, role).get(reverse("qa:login"))
    if role == "anonymous":
        assert r.status_code == 200
        assert b'id="id_username"' in r.content and b'id="id_password"' in r.content
    else:  # already signed in: straight on to the jobs
        assert r.status_code == 302 and r["Location"] == reverse("qa:job-list")


@pytest.mark.django_db
def test_signing_in_with_the_form(client, world):
    r = client.post(reverse("qa:login"), {"username": "insp", "password": PASSWORD})
    assert r.status_code == 302 and r["Location"] == reverse("qa:job-list")
    r = client.get(reverse("qa:job-list"))
    assert r.status_code == 200 and b"Test Block A" in r.content


@pytest.mark.django_db
def test_wrong_password_shows_an_error(client, world):
    r = client.post(reverse("qa:login"), {"username": "insp", "password": "nope"})
    assert r.status_code == 200 and b'role="alert"' in r.content
    assert "_auth_user_id" not in client.session


@pytest.mark.django_db
@pytest.mark.parametrize("role", ROLES)
def test_job_list_page(client, world, role):
    r = as_role(client, world, role).get(reverse("qa:job-list"))
    if role == "anonymous":
        assert r.status_code == 302 and r["Location"].startswith(reverse("qa:login"))
        return
    assert r.status_code == 200
    assert (b"Test Block A" in r.content) is (role != "outsider")
    assert (b"Other Block" in r.content) is (role == "outsider")


@pytest.mark.django_db
@pytest.mark.parametrize("role", ROLES)
def test_job_page(client, world, role):
    r = as_role(client, world, role).get(reverse("qa:job", args=[world.job.id]))
    assert r.status_code == MEMBER_PAGE[role]
    if r.status_code == 200:
        assert b"Test Block A" in r.content and b"2-01" in r.content
    if role == "anonymous":
        assert r["Location"].startswith(reverse("qa:login"))


@pytest.mark.django_db
@pytest.mark.parametrize("role", ROLES)
def test_wall_page(client, world, role):
    r = as_role(client, world, role).get(reverse("qa:wall", args=[world.job.id, world.wall.id]))
    assert r.status_code == MEMBER_PAGE[role]
    if r.status_code == 200:
        labels = [p.label for p in world.wall.seal_points.all()]
        page = r.content.decode()
        assert "2-01" in page and all(label in page for label in labels[:3])


@pytest.mark.django_db
def test_wall_of_another_job_is_404_on_the_page(client, world):
    client.force_login(world.inspector)
    assert client.get(reverse("qa:wall", args=[world.job.id, world.other_wall.id])).status_code == 404


@pytest.mark.django_db
@pytest.mark.parametrize("role", ROLES)
def test_api_docs_page(client, world, role):
    r = as_role(client, world, role).get(reverse("api:docs"))
    if role == "anonymous":
        assert r.status_code == 302
    else:
        assert r.status_code == 200 and b"/api/jobs/" in r.content


@pytest.mark.django_db
@pytest.mark.parametrize("role", ROLES)
def test_admin_login_page(client, world, role):
    r = as_role(client, world, role).get("/admin/login/")
    assert r.status_code == 200  # non-staff see the admin sign-in form, never the admin itself
    r = client.get("/admin/")
    assert r.status_code == 302 and "/admin/login/" in r["Location"]


@pytest.mark.django_db
def test_staff_sees_the_admin(client, world):
    from django.contrib.auth import get_user_model

    boss = get_user_model().objects.create_superuser("boss", password="x-y-z-123456")
    client.force_login(boss)
    assert client.get("/admin/").status_code == 200
    assert client.get("/admin/qa/finding/").status_code == 200
