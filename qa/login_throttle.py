"""Sign-in throttling: after repeated failures for one user name from one address, refuse for a while.

The counter lives in Django's cache (the database cache in production), never in process memory,
so every gunicorn process sees the same count. While a user name and address pair is locked out,
even the right password is refused: otherwise a guesser could keep going and just watch for the
one answer that differs.

Settings
--------
LOGIN_FAILURE_LIMIT   failures allowed per user name and address within the window (default 5).
LOGIN_FAILURE_WINDOW  window and lock-out length, seconds (default 900).

Notes
-----
The user name is counted the way Django's sign-in form reads it: Unicode NFKC normalisation (what
``UsernameField`` and ``AbstractBaseUser.normalize_username`` apply), so look-alike spellings such as a
fullwidth ``ｄoors`` count against ``doors``; then case-folded, so ``Doors`` counts there too.

The address is ``REMOTE_ADDR``. Behind a reverse proxy the proxy must pass the client address
there (gunicorn's ``--forwarded-allow-ips`` with the proxy's address); a bare ``X-Forwarded-For``
header is never trusted, because a client can write anything in it.
"""

from __future__ import annotations

import hashlib
import unicodedata
from typing import TYPE_CHECKING

from django.conf import settings
from django.core.cache import cache
from django.http import HttpRequest, HttpResponse

if TYPE_CHECKING:
    # For the type checker only: the mixin's ``super()`` and ``self`` are a LoginView's. At run time the
    # base stays ``object`` so the mixin can sit before LoginView in a class's bases.
    from django.contrib.auth.views import LoginView as _LoginViewBase
else:
    _LoginViewBase = object

DEFAULT_LIMIT = 5
DEFAULT_WINDOW_S = 15 * 60


def limit() -> int:
    """Failures allowed per user name and address within the window."""
    return int(getattr(settings, "LOGIN_FAILURE_LIMIT", DEFAULT_LIMIT))


def window_s() -> int:
    """Length of the counting window and of the lock-out, seconds."""
    return int(getattr(settings, "LOGIN_FAILURE_WINDOW", DEFAULT_WINDOW_S))


def normalise_username(username: str) -> str:
    """The user name as the throttle counts it: NFKC, case-folded, surrounding spaces removed.

    NFKC is the normalisation Django's authentication applies (``UsernameField.to_python``); case
    folding can produce characters NFKC changes again (``ß`` → ``ss`` is fine, but some folds are
    not NFKC-stable), so NFKC is applied once more after it, as Unicode's NFKC_Casefold does.

    References
    ----------
    .. [1] Unicode Standard Annex #15, Unicode Normalization Forms.
    .. [2] Unicode Standard, section 3.13, definition D145 (NFKC_Casefold).
    """
    folded = unicodedata.normalize("NFKC", unicodedata.normalize("NFKC", username).casefold())
    return folded.strip()


def throttle_key(username: str, address: str) -> str:
    """Cache key for one user name (normalised by :func:`normalise_username`) and one client address.

    Hashed so that a user name with spaces or odd characters is a valid cache key everywhere.
    """
    digest = hashlib.sha256(f"{normalise_username(username)}|{address}".encode()).hexdigest()
    return f"login-fail:{digest}"


def client_address(request: HttpRequest) -> str:
    return request.META.get("REMOTE_ADDR", "") or "unknown"


def failures(username: str, address: str) -> int:
    return int(cache.get(throttle_key(username, address), 0))


def is_locked(username: str, address: str) -> bool:
    return failures(username, address) >= limit()


def record_failure(username: str, address: str) -> int:
    """Count one failed sign-in; the window starts at the first failure. Returns the count."""
    key = throttle_key(username, address)
    if cache.add(key, 1, timeout=window_s()):
        return 1
    try:
        return cache.incr(key)
    except ValueError:  # expired between add and incr
        cache.add(key, 1, timeout=window_s())
        return 1


def clear(username: str, address: str) -> None:
    cache.delete(throttle_key(username, address))


def lockout_message() -> str:
    minutes = max(1, round(window_s() / 60))
    return (
        f"Too many failed sign-ins for this user name from this device. Sign-in is paused for up to "
        f"{minutes} minutes; try again later or ask the job's inspector to check your account."
    )


class LoginThrottleMixin(_LoginViewBase):
    """Mix into ``django.contrib.auth.views.LoginView`` before it: counts failures, refuses when locked.

    A locked-out attempt answers 429 with a ``Retry-After`` header and the sign-in form showing
    :func:`lockout_message`; the password is not checked at all.
    """

    def post(self, request: HttpRequest, *args, **kwargs) -> HttpResponse:
        username = str(request.POST.get("username", ""))[:150]
        address = client_address(request)
        if is_locked(username, address):
            form = self.get_form()
            response = self.render_to_response(self.get_context_data(form=form, throttled=lockout_message()))
            response.status_code = 429
            response["Retry-After"] = str(window_s())
            return response
        return super().post(request, *args, **kwargs)

    def form_invalid(self, form):
        username = str(self.request.POST.get("username", ""))[:150]
        record_failure(username, client_address(self.request))
        return super().form_invalid(form)

    def form_valid(self, form):
        username = str(self.request.POST.get("username", ""))[:150]
        clear(username, client_address(self.request))
        return super().form_valid(form)
