"""Token auth for scripts: obtain (throttled), use, revoke; and that the session API needs a sign-in."""

from __future__ import annotations

import pytest
from django.core.cache import cache
from rest_framework.authtoken.models import Token
from rest_framework.test import APIClient

pytestmark = pytest.mark.django_db
PASSWORD = "correct-horse-battery-9"  # tests/conftest.py


@pytest.fixture(autouse=True)
def _fresh_throttle():
    cache.clear()  # the login throttle counts in the cache; start every test from zero
    yield
    cache.clear()


def token_for(username: str, password: str = PASSWORD):
    return APIClient().post("/api/auth/token/", {"username": username, "password": password}, format="json")


def test_script_gets_a_token_and_uses_it(world):
    r = token_for("insp")
    assert r.status_code == 200, r.json()
    token = r.json()["token"]
    assert Token.objects.get(user=world.inspector).key == token
    script = APIClient()
    script.credentials(HTTP_AUTHORIZATION=f"Token {token}")
    assert script.get(f"/api/jobs/{world.job.id}/walls/").status_code == 200
    assert script.get(f"/api/jobs/{world.other_job.id}/walls/").status_code == 404


def test_wrong_password_gets_no_token(world):
    r = token_for("insp", "wrong")
    assert r.status_code == 400 and "Unable to log in" in str(r.json()["non_field_errors"])
    r = APIClient().post("/api/auth/token/", {"username": "insp"}, format="json")
    assert r.status_code == 400 and "required" in r.json()["password"][0]
    assert not Token.objects.exists()


def test_revoked_token_stops_working_at_once(world):
    token = token_for("elec").json()["token"]
    script = APIClient()
    script.credentials(HTTP_AUTHORIZATION=f"Token {token}")
    assert script.post("/api/auth/token/revoke/").status_code == 204
    assert not Token.objects.filter(key=token).exists()
    # Session auth comes first, and it sends no WWW-Authenticate challenge, so DRF answers 403 (not 401).
    r = script.get(f"/api/jobs/{world.job.id}/walls/")
    assert r.status_code == 403 and r.json() == {"detail": "Invalid token."}


def test_bad_token_is_refused(world):
    script = APIClient()
    script.credentials(HTTP_AUTHORIZATION="Token not-a-real-token")
    r = script.get("/api/jobs/")
    assert r.status_code == 403 and r.json() == {"detail": "Invalid token."}


def test_revoke_needs_a_signed_in_user(world):
    assert APIClient().post("/api/auth/token/revoke/").status_code == 403


def test_wrong_method_is_405(world, api):
    assert APIClient().get("/api/auth/token/").status_code == 405
    assert api(world.inspector).get("/api/auth/token/revoke/").status_code == 405


def test_guessing_one_users_password_locks_that_user_out(world, settings):
    settings.LOGIN_FAILURE_LIMIT = 5
    answers = [token_for("insp", f"guess-{i}").status_code for i in range(5)]
    assert answers == [400] * 5
    assert token_for("insp").status_code == 429  # even the right password waits
    assert token_for("elec").status_code == 200  # another user name from the same address is not locked
    assert list(Token.objects.values_list("user__username", flat=True)) == ["elec"]


def test_guessing_across_user_names_is_throttled_per_address(world):
    # 10 tries a minute per client address (REST_FRAMEWORK DEFAULT_THROTTLE_RATES "login").
    answers = [token_for(f"user-{i}", "guess").status_code for i in range(10)]
    assert answers == [400] * 10
    r = token_for("insp")
    assert r.status_code == 429 and "throttled" in r.json()["detail"]
    assert not Token.objects.exists()


def test_session_api_needs_csrf(world):
    # The app uses session auth: a forged cross-site POST without the CSRF token is refused.
    client = APIClient(enforce_csrf_checks=True)
    client.force_login(world.inspector)
    r = client.patch(
        f"/api/jobs/{world.job.id}/walls/{world.wall.id}/", {"location": "forged"}, format="json"
    )
    assert r.status_code == 403 and "CSRF" in r.json()["detail"]
    world.wall.refresh_from_db()
    assert world.wall.location == "between 201 and 202"
