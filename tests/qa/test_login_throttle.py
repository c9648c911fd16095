"""Sign-in lockout counts look-alike spellings of a user name as that name (qa/login_throttle.py).

Django's sign-in form applies Unicode NFKC to the user name before it looks the user up
(``django.contrib.auth.forms.UsernameField.to_python``), so ``ｄoors`` (U+FF44 FULLWIDTH LATIN SMALL
LETTER D) signs in as ``doors``. The oracle here is Django's own field: whatever it folds to one
name, the throttle must count as one name. Compatibility mappings cited are from the Unicode
Character Database (UnicodeData.txt, decomposition field).
"""

from __future__ import annotations

import unicodedata

import pytest
from django.contrib.auth.forms import UsernameField
from django.urls import reverse
from rest_framework.test import APIClient

from qa import login_throttle
from tests.conftest import PASSWORD, make_user

# Each of these is folded to "doors" by NFKC (UCD decompositions: U+FF44 <wide> d, U+24D3 <circle> d,
# U+1D41D <font> d, U+1D5C8 <font> o, U+FF4F <wide> o); the last two differ only in case.
LOOKALIKES = ["ｄoors", "ⓓoors", "\U0001d41doors", "d\U0001d5c8ors", "doｏrs", "Doors", "DOORS", " doors "]


def sign_in(client, username: str, password: str, addr: str = "10.0.0.7"):
    return client.post(reverse("qa:login"), {"username": username, "password": password}, REMOTE_ADDR=addr)


def token(username: str, password: str, addr: str = "10.0.0.7"):
    return APIClient(REMOTE_ADDR=addr).post(
        reverse("api:token"), {"username": username, "password": password}, format="json"
    )


@pytest.fixture
def doors(db, settings):
    settings.LOGIN_FAILURE_LIMIT = 5
    return make_user("doors")


@pytest.mark.parametrize("name", LOOKALIKES)
def test_django_itself_signs_a_lookalike_in_as_the_plain_name(name):
    """The premise: the sign-in form really folds these (except case, which the throttle adds)."""
    assert UsernameField().to_python(name).casefold() == "doors"


@pytest.mark.parametrize("name", LOOKALIKES)
def test_lookalike_spelling_has_the_same_throttle_key_as_the_plain_name(name):
    assert login_throttle.throttle_key(name, "10.0.0.7") == login_throttle.throttle_key("doors", "10.0.0.7")


def test_names_django_keeps_apart_stay_apart():
    assert login_throttle.throttle_key("doors", "a") != login_throttle.throttle_key("door", "a")
    assert login_throttle.throttle_key("doors", "a") != login_throttle.throttle_key("doors", "b")


def test_throttle_folds_whatever_django_folds_across_the_basic_multilingual_plane():
    """Every character NFKC maps onto ASCII letters counts as those letters, for the throttle too."""
    checked = 0
    for code in range(0x80, 0x10000):
        char = chr(code)
        if unicodedata.category(char) in ("Cs", "Co", "Cn"):
            continue
        folded = UsernameField().to_python(char)
        if folded and folded != char and folded.isascii() and folded.isalpha():
            checked += 1
            assert login_throttle.normalise_username(char) == folded.casefold(), hex(code)
    assert checked > 300  # fullwidth letters alone are 52 (U+FF21-FF3A, U+FF41-FF5A)


def test_fullwidth_lookalike_is_locked_out_after_failures_for_the_plain_name(doors, client):
    for _ in range(5):
        assert sign_in(client, "doors", "wrong").status_code == 200
    # Before the fix this signed in (302): the throttle counted "ｄoors" separately from "doors".
    response = sign_in(client, "ｄoors", PASSWORD)
    assert response.status_code == 429 and b"Too many failed sign-ins" in response.content
    assert "_auth_user_id" not in client.session


def test_failures_under_lookalike_spellings_lock_the_plain_name(doors, client):
    for name in ("ｄoors", "ⓓoors", "DOORS", "doｏrs", "\U0001d41doors"):
        sign_in(client, name, "wrong")
    assert login_throttle.failures("doors", "10.0.0.7") == 5
    assert sign_in(client, "doors", PASSWORD).status_code == 429


def test_lookalike_that_signs_in_clears_the_count_of_the_plain_name(doors, client):
    for _ in range(3):
        sign_in(client, "doors", "wrong")
    assert sign_in(client, "ｄoors", PASSWORD).status_code == 302
    assert login_throttle.failures("doors", "10.0.0.7") == 0


def test_token_endpoint_counts_lookalikes_as_the_plain_name(doors):
    for _ in range(5):
        assert token("ｄoors", "wrong").status_code == 400
    answer = token("doors", PASSWORD)
    assert answer.status_code == 429 and "token" not in answer.json()
