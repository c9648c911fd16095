"""Django's database cache, with ``set_many`` in one statement.

A read of a job view or of the walk's bundle stores the audits of every wall that changed since: with
Django's own backend that is, per entry, a count of the table, a look-up and an insert or update in
their own savepoint — three statements or more per wall, at every read under load. Here ``set_many``
counts once and writes every entry with one upsert (``INSERT ... ON CONFLICT (cache_key) DO UPDATE``,
in key order, so two writers never deadlock). Entries are encoded exactly as Django's backend encodes
them, so ``get`` and the rest are Django's own.
"""

from __future__ import annotations

import base64
import pickle
from datetime import UTC, datetime
from typing import Any

from django.conf import settings
from django.core.cache.backends.base import DEFAULT_TIMEOUT
from django.core.cache.backends.db import DatabaseCache as DjangoDatabaseCache
from django.db import connections, router
from django.utils.timezone import now as tz_now

_CHUNK = 300  # rows per statement: three parameters each, well inside SQLite's limit


class DatabaseCache(DjangoDatabaseCache):
    def set_many(
        self, data: dict[Any, Any], timeout: Any = DEFAULT_TIMEOUT, version: int | None = None
    ) -> list:
        if not data:
            return []
        backend_timeout = self.get_backend_timeout(timeout)
        alias = router.db_for_write(self.cache_model_class)
        connection = connections[alias]
        quote = connection.ops.quote_name
        table = quote(self._table)  # type: ignore[attr-defined]  # set by BaseDatabaseCache, not in the stubs
        if backend_timeout is None:
            expires = datetime.max
        else:
            expires = datetime.fromtimestamp(backend_timeout, tz=UTC if settings.USE_TZ else None)
        stored = connection.ops.adapt_datetimefield_value(expires.replace(microsecond=0))
        rows = sorted(
            (
                self.make_and_validate_key(key, version=version),
                base64.b64encode(pickle.dumps(value, self.pickle_protocol)).decode("latin1"),
                stored,
            )
            for key, value in data.items()
        )
        key_col, value_col, expires_col = quote("cache_key"), quote("value"), quote("expires")
        with connection.cursor() as cursor:
            cursor.execute(f"SELECT COUNT(*) FROM {table}")
            count = cursor.fetchone()[0]
            if count + len(rows) > self._max_entries:
                now = tz_now().replace(microsecond=0)
                self._cull(alias, cursor, now, count + len(rows))  # type: ignore[attr-defined]
            for start in range(0, len(rows), _CHUNK):
                chunk = rows[start : start + _CHUNK]
                cursor.execute(
                    f"INSERT INTO {table} ({key_col}, {value_col}, {expires_col}) VALUES "
                    + ", ".join(["(%s, %s, %s)"] * len(chunk))
                    + f" ON CONFLICT ({key_col}) DO UPDATE SET {value_col} = excluded.{value_col}, "
                    f"{expires_col} = excluded.{expires_col}",
                    [v for row in chunk for v in row],
                )
        return []
