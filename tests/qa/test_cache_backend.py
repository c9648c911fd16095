"""The database cache's one-statement ``set_many`` (qa.cache_backend) against Django's own backend.

The oracle is django.core.cache.backends.db.DatabaseCache on the same table: what ours writes, Django's
reads back equal (values, versions, expiry), and a key written by Django is replaced by ours. Runs on
SQLite and, in CI's second pass, on PostgreSQL.
"""

from __future__ import annotations

import pytest
from django.core.cache import caches
from django.core.cache.backends.db import DatabaseCache as DjangoDatabaseCache
from django.core.management import call_command

pytestmark = pytest.mark.django_db(transaction=True)

TABLE = "sealwalk_cache_under_test"


@pytest.fixture
def ours(settings):
    settings.CACHES = {
        **settings.CACHES,
        "under_test": {
            "BACKEND": "qa.cache_backend.DatabaseCache",
            "LOCATION": TABLE,
            "OPTIONS": {"MAX_ENTRIES": 50, "CULL_FREQUENCY": 2},
        },
    }
    call_command("createcachetable", TABLE, verbosity=0)
    yield caches["under_test"]
    caches["under_test"].clear()


def djangos() -> DjangoDatabaseCache:
    return DjangoDatabaseCache(TABLE, {"OPTIONS": {"MAX_ENTRIES": 50, "CULL_FREQUENCY": 2}})


def test_what_ours_writes_django_reads_back_equal(ours):
    data = {f"audit:{i}": {"wall": i, "rows": [1.5, None, "x" * i], "ok": True} for i in range(40)}
    assert ours.set_many(data, 3600) == []
    assert djangos().get_many(list(data)) == data
    assert ours.get("audit:7") == data["audit:7"]


def test_replaces_entries_django_wrote_and_respects_versions(ours):
    djangos().set("k", "old", 3600)
    ours.set_many({"k": "new", "other": 2}, 3600)
    assert djangos().get("k") == "new" and djangos().get("other") == 2
    ours.set_many({"k": "v2"}, 3600, version=2)
    assert djangos().get("k") == "new" and djangos().get("k", version=2) == "v2"


def test_expiry_and_no_timeout(ours):
    ours.set_many({"gone": 1}, 0)  # Django's rule: a timeout of 0 expires at once
    ours.set_many({"kept": 1}, None)  # None: never expires
    assert djangos().get("gone") is None and djangos().get("kept") == 1


def test_culls_when_full(ours):
    ours.set_many({f"a{i}": i for i in range(45)}, 3600)
    ours.set_many({f"b{i}": i for i in range(20)}, 3600)  # over MAX_ENTRIES: the oldest half goes first
    with __import__("django.db", fromlist=["connection"]).connection.cursor() as cursor:
        cursor.execute(f"SELECT COUNT(*) FROM {TABLE}")
        assert cursor.fetchone()[0] <= 50
    assert all(djangos().get(f"b{i}") == i for i in range(20)), "the new entries are kept"
