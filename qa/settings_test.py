"""Test settings: debug-mode defaults (the development key, local hosts) and plain static storage,
because the live test server serves static files from the finders, which do not know the hashed
names of the manifest storage. pytest-django still runs each test with ``DEBUG = False``."""

import os
import tempfile

# Debug is off unless asked for (qa/settings.py); the test run asks, as a developer's machine would.
os.environ.setdefault("SEALWALK_DEBUG", "1")

from .settings import *  # noqa: E402,F403
from .settings import DATABASES, STORAGES  # noqa: E402

STORAGES = {**STORAGES, "staticfiles": {"BACKEND": "django.contrib.staticfiles.storage.StaticFilesStorage"}}
LIST_MAX_AGE = 0  # every read recounts; the tests of the recounting window set their own
PASSWORD_HASHERS = ["django.contrib.auth.hashers.MD5PasswordHasher"]  # fast user creation in fixtures
CACHES = {
    "default": {
        "BACKEND": "django.core.cache.backends.locmem.LocMemCache",
        "OPTIONS": {"MAX_ENTRIES": 100_000},
    }
}

# The browser tests run a live server whose request threads answer the page's fetches in parallel. On an
# in-memory SQLite database Django hands every one of those threads the test's own connection, so two
# requests at once interleave their transactions on one connection and fail now and then. A database file
# gives each thread its own connection, as the product has in production; the busy timeout and immediate
# transactions of qa/settings.py then queue the writers.
if str(DATABASES["default"]["ENGINE"]).endswith("sqlite3"):
    DATABASES["default"]["TEST"] = {
        "NAME": os.path.join(tempfile.gettempdir(), f"sealwalk-test-{os.getpid()}.sqlite3")
    }
