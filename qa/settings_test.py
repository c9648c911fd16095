"""Test settings: debug-mode defaults (the development key, local hosts) and plain static storage,
because the live test server serves static files from the finders, which do not know the hashed
names of the manifest storage. pytest-django still runs each test with ``DEBUG = False``."""

import os

# Debug is off unless asked for (qa/settings.py); the test run asks, as a developer's machine would.
os.environ.setdefault("SEALWALK_DEBUG", "1")

from .settings import *  # noqa: E402,F403
from .settings import STORAGES  # noqa: E402

STORAGES = {**STORAGES, "staticfiles": {"BACKEND": "django.contrib.staticfiles.storage.StaticFilesStorage"}}
PASSWORD_HASHERS = ["django.contrib.auth.hashers.MD5PasswordHasher"]  # fast user creation in fixtures
CACHES = {
    "default": {
        "BACKEND": "django.core.cache.backends.locmem.LocMemCache",
        "OPTIONS": {"MAX_ENTRIES": 100_000},
    }
}
