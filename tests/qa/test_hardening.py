"""Hardening: security headers, production settings, CSRF, sign-in throttling, token revocation,
the append-only audit trail.

Header values are checked against the OWASP Secure Headers Project recommendations (from memory:
X-Frame-Options DENY, nosniff, a Referrer-Policy, HSTS of at least one year over HTTPS) and the
CSP Level 3 rule that 'unsafe-inline' in script-src defeats the policy against injected script.
"""

from __future__ import annotations

import os
import re
import subprocess
import sys
from pathlib import Path

import pytest
from django.core.cache import cache
from django.urls import reverse

from tests.conftest import PASSWORD

ROOT = Path(__file__).resolve().parents[2]


@pytest.fixture(autouse=True)
def _fresh_cache():
    """Throttle counters live in the cache; every test starts and ends with none."""
    cache.clear()
    yield
    cache.clear()


def csp_directives(header: str) -> dict[str, list[str]]:
    out = {}
    for part in header.split(";"):
        words = part.split()
        if words:
            out[words[0]] = words[1:]
    return out


def assert_secure_headers(response, where: str):
    csp = response.headers.get("Content-Security-Policy")
    assert csp, f"{where}: no Content-Security-Policy"
    d = csp_directives(csp)
    script = d.get("script-src", d.get("default-src"))
    assert script is not None, f"{where}: CSP has neither script-src nor default-src"
    assert "'unsafe-inline'" not in script and "'unsafe-eval'" not in script, f"{where}: {script}"
    assert "*" not in script and "data:" not in script, f"{where}: script-src too wide: {script}"
    assert d.get("object-src") == ["'none'"], where
    assert d.get("frame-ancestors") == ["'none'"], where
    assert response.headers.get("X-Frame-Options") == "DENY", where
    assert response.headers.get("X-Content-Type-Options") == "nosniff", where
    assert response.headers.get("Referrer-Policy") in {
        "same-origin",
        "no-referrer",
        "strict-origin-when-cross-origin",
        "strict-origin",
    }, where


# --- headers -------------------------------------------------------------------------------------


def test_headers_on_pages_api_and_root_files(world, client):
    assert_secure_headers(client.get(reverse("qa:login")), "sign-in page")
    client.force_login(world.inspector)
    assert_secure_headers(client.get(reverse("qa:job", kwargs={"job_pk": world.job.pk})), "job page")
    assert_secure_headers(client.get(reverse("api:job-list")), "API")
    assert_secure_headers(client.get("/api/jobs/999999/"), "API 404")
    response = client.get("/sw.js")
    if response.status_code == 200:  # served by whitenoise from the site root
        assert_secure_headers(response, "/sw.js")


def test_templates_have_no_inline_script_or_handlers():
    """CSP forbids inline script; a template that has one breaks in the browser. Catch it here."""
    problems = []
    for path in sorted((ROOT / "templates").rglob("*.html")):
        text = path.read_text()
        for m in re.finditer(r"<script\b([^>]*)>", text, flags=re.I):
            attrs = m.group(1)
            if "src=" not in attrs and "application/json" not in attrs and "application/ld+json" not in attrs:
                problems.append(f"{path.relative_to(ROOT)}: inline <script{attrs}>")
        for m in re.finditer(r"<[a-z][^>]*\s(on[a-z]+)\s*=", text, flags=re.I):
            problems.append(f"{path.relative_to(ROOT)}: inline event handler {m.group(1)}=")
        for _ in re.finditer(r"""href\s*=\s*["']\s*javascript:""", text, flags=re.I):
            problems.append(f"{path.relative_to(ROOT)}: javascript: URL")
    assert not problems, "\n".join(problems)


# --- production settings (a fresh interpreter each) ------------------------------------------------

GOOD_KEY = "k" * 20 + "-not-a-real-key-but-long-enough-0123456789"


def run_settings(env: dict, code: str) -> subprocess.CompletedProcess:
    base = {
        k: v
        for k, v in os.environ.items()
        if k
        not in {"SECRET_KEY", "ALLOWED_HOSTS", "SECURE_HTTPS", "SEALWALK_DEBUG", "DJANGO_SETTINGS_MODULE"}
    }
    base.update(
        {"DJANGO_SETTINGS_MODULE": "qa.settings", "DATABASE_URL": "sqlite:////tmp/unused-sealwalk.db"}
    )
    base.update(env)
    return subprocess.run(
        [sys.executable, "-c", code], cwd=ROOT, env=base, capture_output=True, text=True, timeout=60
    )


SETUP = "import django; django.setup(); print('started')"


@pytest.mark.parametrize(
    ("env", "named"),
    [
        ({"SEALWALK_DEBUG": "0", "ALLOWED_HOSTS": "walls.example.org"}, "SECRET_KEY"),
        ({"SEALWALK_DEBUG": "0", "ALLOWED_HOSTS": "walls.example.org", "SECRET_KEY": "short"}, "SECRET_KEY"),
        (
            {
                "SEALWALK_DEBUG": "0",
                "ALLOWED_HOSTS": "walls.example.org",
                "SECRET_KEY": "dev-only-insecure-key-for-the-local-demo",
            },
            "SECRET_KEY",
        ),
        ({"SEALWALK_DEBUG": "0", "SECRET_KEY": GOOD_KEY}, "ALLOWED_HOSTS"),
    ],
)
def test_production_refuses_to_start_without_secrets(env, named):
    result = run_settings(env, SETUP)
    assert result.returncode != 0, result.stdout
    assert "ImproperlyConfigured" in result.stderr and named in result.stderr, result.stderr[-800:]


def test_production_starts_with_secrets_and_debug_off():
    result = run_settings(
        {"SEALWALK_DEBUG": "0", "SECRET_KEY": GOOD_KEY, "ALLOWED_HOSTS": "walls.example.org"},
        SETUP + "; from django.conf import settings; print(settings.DEBUG)",
    )
    assert result.returncode == 0, result.stderr[-800:]
    assert result.stdout.split() == ["started", "False"]


HTTPS_PROBE = """
import django; django.setup()
from django.conf import settings
from django.test import Client
from django.test.utils import setup_test_environment
setup_test_environment()
c = Client()
# An API answer (no template, no database): the middleware adds HSTS to every HTTPS answer.
plain = c.get('/api/jobs/', HTTP_HOST='walls.example.org')
secure = c.get('/api/jobs/', HTTP_HOST='walls.example.org', secure=True)
proxied = c.get('/api/jobs/', HTTP_HOST='walls.example.org', HTTP_X_FORWARDED_PROTO='https')
print(plain.status_code, plain.get('Location'))
print(secure.status_code, secure.get('Strict-Transport-Security'))
print(proxied.status_code)
print(settings.SESSION_COOKIE_SECURE, settings.CSRF_COOKIE_SECURE, settings.SESSION_COOKIE_HTTPONLY)
"""


def test_https_mode_sends_hsts_and_secure_cookies():
    env = {
        "SEALWALK_DEBUG": "0",
        "SECRET_KEY": GOOD_KEY,
        "ALLOWED_HOSTS": "walls.example.org",
        "SECURE_HTTPS": "1",
    }
    result = run_settings(env, HTTPS_PROBE)
    assert result.returncode == 0, result.stderr[-1500:]
    lines = result.stdout.strip().splitlines()
    status, location = lines[0].split()
    assert status == "301" and location.startswith("https://walls.example.org/api/jobs/")
    status, hsts = lines[1].split(maxsplit=1)
    assert status == "403"  # anonymous API answer, over HTTPS
    max_age = int(re.search(r"max-age=(\d+)", hsts).group(1))
    assert max_age >= 31_536_000 and "includeSubDomains" in hsts  # one year (OWASP, from memory)
    assert lines[2] == "403"  # the proxy's X-Forwarded-Proto is trusted as HTTPS: no redirect
    assert lines[3] == "True True True"


def test_http_mode_has_no_hsts(client):
    assert "Strict-Transport-Security" not in client.get(reverse("qa:login"), secure=True).headers


# --- CSRF on session-authenticated writes -----------------------------------------------------------


def signed_in_client(username: str):
    """A client that signs in through the real form with its CSRF token, checks enforced throughout."""
    from rest_framework.test import APIClient

    client = APIClient(enforce_csrf_checks=True)
    page = client.get(reverse("qa:login"))
    token = page.cookies["csrftoken"].value
    response = client.post(
        reverse("qa:login"), {"username": username, "password": PASSWORD, "csrfmiddlewaretoken": token}
    )
    assert response.status_code == 302, response.content[:300]
    return client


def test_session_write_without_csrf_token_is_refused(world):
    from qa.models import Wall

    client = signed_in_client("insp")
    before = Wall.objects.count()
    body = {"tag": "9-99", "level": "9", "length": 4, "height": 2.7, "wall_type": world.wall_type.pk}
    url = reverse("api:wall-list", kwargs={"job_pk": world.job.pk})
    response = client.post(url, body, format="json")
    assert response.status_code == 403 and "CSRF" in response.json()["detail"]
    assert Wall.objects.count() == before
    token = client.cookies["csrftoken"].value
    response = client.post(url, body, format="json", HTTP_X_CSRFTOKEN=token)
    assert response.status_code == 201, response.content[:300]
    assert Wall.objects.count() == before + 1


def test_session_step_without_csrf_token_is_refused(world):
    from qa.models import Finding

    f = Finding.objects.create(
        job=world.job,
        wall=world.wall,
        kind="hole",
        diameter_m=0.01,
        trade="electrical",
        created_by=world.inspector,
    )
    client = signed_in_client("elec")
    response = client.post(
        reverse("api:finding-fix", kwargs={"job_pk": world.job.pk, "pk": f.pk}), {}, format="json"
    )
    assert response.status_code == 403
    f.refresh_from_db()
    assert f.status == "open"


def test_token_auth_needs_no_csrf_token(world):
    from rest_framework.authtoken.models import Token
    from rest_framework.test import APIClient

    token = Token.objects.create(user=world.inspector)
    client = APIClient(enforce_csrf_checks=True)
    body = {"tag": "9-98", "level": "9", "length": 4, "height": 2.7, "wall_type": world.wall_type.pk}
    response = client.post(
        reverse("api:wall-list", kwargs={"job_pk": world.job.pk}),
        body,
        format="json",
        HTTP_AUTHORIZATION=f"Token {token.key}",
    )
    assert response.status_code == 201


def test_login_form_needs_csrf_token(world):
    from django.test import Client

    client = Client(enforce_csrf_checks=True)
    response = client.post(reverse("qa:login"), {"username": "insp", "password": PASSWORD})
    assert response.status_code == 403


# --- sign-in throttling ------------------------------------------------------------------------------


def attempt(client, username, password, addr="10.0.0.1"):
    return client.post(reverse("qa:login"), {"username": username, "password": password}, REMOTE_ADDR=addr)


def test_login_locks_after_repeated_failures(world, client, settings):
    settings.LOGIN_FAILURE_LIMIT = 5
    for _ in range(5):
        response = attempt(client, "insp", "wrong")
        assert response.status_code == 200 and b"do not match" in response.content
    # Now even the right password is refused, with a clear message and Retry-After.
    response = attempt(client, "insp", PASSWORD)
    assert response.status_code == 429
    assert b"Too many failed sign-ins" in response.content
    assert int(response["Retry-After"]) > 0
    assert "_auth_user_id" not in client.session
    # The same user name from another address, and another user name from this one, are not locked.
    assert attempt(client, "insp", PASSWORD, addr="10.0.0.2").status_code == 302
    client.logout()
    assert attempt(client, "own", PASSWORD).status_code == 302


def test_login_lock_is_case_insensitive_and_in_the_shared_cache(world, client, settings):
    from qa import login_throttle

    settings.LOGIN_FAILURE_LIMIT = 3
    for name in ("insp", "INSP", "Insp"):
        attempt(client, name, "wrong")
    assert (
        cache.get(login_throttle.throttle_key("insp", "10.0.0.1")) == 3
    )  # Django's cache, not process memory
    assert attempt(client, "insp", PASSWORD).status_code == 429


def test_login_success_resets_the_count(world, client, settings):
    settings.LOGIN_FAILURE_LIMIT = 3
    attempt(client, "insp", "wrong")
    attempt(client, "insp", "wrong")
    assert attempt(client, "insp", PASSWORD).status_code == 302
    client.logout()
    attempt(client, "insp", "wrong")
    attempt(client, "insp", "wrong")
    assert attempt(client, "insp", PASSWORD).status_code == 302


def test_login_lock_expires(world, client, settings):
    settings.LOGIN_FAILURE_LIMIT = 2
    settings.LOGIN_FAILURE_WINDOW = 1
    attempt(client, "insp", "wrong")
    attempt(client, "insp", "wrong")
    assert attempt(client, "insp", PASSWORD).status_code == 429
    import time

    time.sleep(1.2)
    assert attempt(client, "insp", PASSWORD).status_code == 302


def test_token_endpoint_shares_the_lock(world, settings):
    from rest_framework.test import APIClient

    settings.LOGIN_FAILURE_LIMIT = 3
    client = APIClient()
    url = reverse("api:token")
    for _ in range(3):
        assert (
            client.post(url, {"username": "insp", "password": "nope"}, REMOTE_ADDR="10.0.0.7").status_code
            == 400
        )
    response = client.post(url, {"username": "insp", "password": PASSWORD}, REMOTE_ADDR="10.0.0.7")
    assert response.status_code == 429
    assert "Too many failed sign-ins" in response.json()["detail"]
    # ... and the page knows it too.
    assert attempt(client, "insp", PASSWORD, addr="10.0.0.7").status_code == 429


# --- token revocation ----------------------------------------------------------------------------------


def test_token_revocation_stops_the_token_at_once(world):
    from rest_framework.authtoken.models import Token
    from rest_framework.test import APIClient

    client = APIClient()
    key = client.post(reverse("api:token"), {"username": "insp", "password": PASSWORD}).json()["token"]
    auth = {"HTTP_AUTHORIZATION": f"Token {key}"}
    assert client.get(reverse("api:job-list"), **auth).status_code == 200
    assert client.post(reverse("api:token-revoke"), **auth).status_code == 204
    assert not Token.objects.filter(key=key).exists()
    response = client.get(reverse("api:job-list"), **auth)
    assert response.status_code == 403 and "Invalid token" in response.json()["detail"]
    # A new token is a different key; the old one stays dead.
    new = client.post(reverse("api:token"), {"username": "insp", "password": PASSWORD}).json()["token"]
    assert new != key
    assert client.get(reverse("api:job-list"), HTTP_AUTHORIZATION=f"Token {new}").status_code == 200
    assert client.get(reverse("api:job-list"), **auth).status_code == 403


def test_revocation_from_a_session_kills_the_script_token(world):
    from rest_framework.authtoken.models import Token
    from rest_framework.test import APIClient

    token = Token.objects.create(user=world.inspector)
    browser = APIClient()
    browser.force_login(world.inspector)
    assert browser.post(reverse("api:token-revoke")).status_code == 204
    script = APIClient()
    assert script.get(reverse("api:job-list"), HTTP_AUTHORIZATION=f"Token {token.key}").status_code == 403


def test_inactive_user_token_is_refused(world):
    from rest_framework.authtoken.models import Token
    from rest_framework.test import APIClient

    token = Token.objects.create(user=world.inspector)
    world.inspector.is_active = False
    world.inspector.save()
    assert (
        APIClient().get(reverse("api:job-list"), HTTP_AUTHORIZATION=f"Token {token.key}").status_code == 403
    )


# --- the audit trail is append-only --------------------------------------------------------------------


def event_routes():
    from tests.qa.test_access_matrix import iter_routes

    return [
        r
        for r in iter_routes()
        if ("event" in r.name.lower() or "event" in r.pattern.lower()) and not r.pattern.startswith("admin/")
    ]


def test_no_route_writes_events():
    routes = event_routes()
    assert routes, "the events route disappeared"
    for route in routes:
        assert route.methods is not None and set(route.methods) <= {"GET"}, (route.name, route.methods)


def test_event_writes_through_the_api_are_refused(world):
    from rest_framework.test import APIClient

    from qa.models import Event

    event = Event.record(world.job, world.inspector, "wall.created", world.wall, {"tag": world.wall.tag})
    client = APIClient()
    client.force_login(world.inspector)
    base = f"/api/jobs/{world.job.pk}/events/"
    before = list(Event.objects.values_list("id", "verb", "data"))
    for method in ("post", "put", "patch", "delete"):
        assert getattr(client, method)(base, {"verb": "x"}, format="json").status_code == 405
        assert getattr(client, method)(f"{base}{event.pk}/", {"verb": "x"}, format="json").status_code in (
            404,
            405,
        )
    assert list(Event.objects.values_list("id", "verb", "data")) == before


def test_orm_cannot_change_or_delete_events(world):
    from django.db import transaction

    from qa.models import Event
    from qa.models.events import AppendOnlyError

    event = Event.record(world.job, world.inspector, "wall.created", world.wall)
    with pytest.raises(AppendOnlyError):
        Event.objects.filter(pk=event.pk).update(verb="forged")
    with pytest.raises(AppendOnlyError):
        Event.objects.filter(pk=event.pk).delete()
    with pytest.raises(AppendOnlyError):
        Event.objects.all().delete()
    with pytest.raises(AppendOnlyError):
        event.verb = "forged"
        event.save()
    with pytest.raises(AppendOnlyError):
        event.delete()
    with pytest.raises(AppendOnlyError), transaction.atomic():  # bulk_update opens its own atomic block
        Event.objects.bulk_update([event], ["verb"])
    assert Event.objects.get(pk=event.pk).verb == "wall.created"


def test_admin_cannot_add_change_or_delete_events(world, client):
    from django.contrib.auth import get_user_model

    from qa.models import Event

    admin = get_user_model().objects.create_superuser("root", "root@example.invalid", PASSWORD)
    event = Event.record(world.job, world.inspector, "wall.created", world.wall)
    client.force_login(admin)
    change = reverse("admin:qa_event_change", args=[event.pk])
    assert client.get(change).status_code == 200  # view only
    response = client.post(change, {"verb": "forged", "target_type": "wall", "target_id": "1", "data": "{}"})
    assert response.status_code == 403
    assert client.post(reverse("admin:qa_event_delete", args=[event.pk]), {"post": "yes"}).status_code == 403
    assert client.get(reverse("admin:qa_event_add")).status_code == 403
    changelist = reverse("admin:qa_event_changelist")
    response = client.post(
        changelist, {"action": "delete_selected", "_selected_action": [event.pk], "post": "yes"}
    )
    assert Event.objects.filter(pk=event.pk, verb="wall.created").exists()
    assert response.status_code in (200, 302, 403)


def test_admin_cannot_delete_a_job_and_its_trail(world, client):
    """Deleting a job would cascade to its events; the admin refuses because events cannot be deleted."""
    from django.contrib.auth import get_user_model

    from qa.models import Event

    admin = get_user_model().objects.create_superuser("root", "root@example.invalid", PASSWORD)
    Event.record(world.job, world.inspector, "wall.created", world.wall)
    client.force_login(admin)
    response = client.post(reverse("admin:qa_job_delete", args=[world.job.pk]), {"post": "yes"})
    assert response.status_code == 200 and b"permission to delete" in response.content  # the refusal page
    assert Event.objects.filter(job_id=world.job.pk).exists()
