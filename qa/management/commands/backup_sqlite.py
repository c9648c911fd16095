"""``python manage.py backup_sqlite PATH``: a consistent copy of the SQLite database while it is in use."""

from __future__ import annotations

import sqlite3
from pathlib import Path

from django.core.management.base import BaseCommand, CommandError
from django.db import connection


class Command(BaseCommand):
    help = (
        "Copy the live SQLite database to PATH with SQLite's online backup API (safe while the server runs). "
        "On PostgreSQL use pg_dump -Fc instead (see the README)."
    )

    def add_arguments(self, parser):
        parser.add_argument("path", help="Where to write the copy (must not exist).")

    def handle(self, *args, path: str, **options):
        if connection.vendor != "sqlite":
            raise CommandError(
                f"database: this is {connection.vendor}, not SQLite; back it up with "
                "pg_dump -Fc (see the README)"
            )
        source = Path(connection.settings_dict["NAME"])
        target = Path(path)
        if target.exists():
            raise CommandError(f"path: {target} already exists; choose another name")
        if not source.exists():
            raise CommandError(f"database: {source} does not exist")
        src = sqlite3.connect(f"file:{source}?mode=ro", uri=True)
        dst = sqlite3.connect(target)
        try:
            # Pages are copied in steps; a writer in between restarts the copy, so the result is one snapshot.
            src.backup(dst, pages=1024)
            check = dst.execute("PRAGMA integrity_check").fetchone()[0]
        finally:
            dst.close()
            src.close()
        if check != "ok":
            target.unlink(missing_ok=True)
            raise CommandError(f"backup: integrity check of the copy failed ({check})")
        self.stdout.write(
            self.style.SUCCESS(
                f"Wrote {target} ({target.stat().st_size} bytes), integrity ok. "
                "Media files are separate: copy the media folder too."
            )
        )
