"""Browser tests only: Playwright's sync API runs an event loop in the test thread, which Django
would take for async code calling the ORM. The browser lives for one module (tests/conftest.py), so
the allowance is granted for the modules here and nowhere else."""

from __future__ import annotations

import os

import pytest


@pytest.fixture(scope="module", autouse=True)
def _playwright_shares_the_test_thread():
    before = os.environ.get("DJANGO_ALLOW_ASYNC_UNSAFE")
    os.environ["DJANGO_ALLOW_ASYNC_UNSAFE"] = "true"
    yield
    if before is None:
        os.environ.pop("DJANGO_ALLOW_ASYNC_UNSAFE", None)
    else:
        os.environ["DJANGO_ALLOW_ASYNC_UNSAFE"] = before
