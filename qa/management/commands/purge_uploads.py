"""``python manage.py purge_uploads``: remove walk photo uploads that were started and never finished.

A resumable upload keeps its received bytes in the database until the phone sends the last chunk and
asks to finish. A phone that was reset, lost its outbox or signed out leaves the bytes behind; they
count against the person's and the job's upload limits (``UPLOAD_MAX_*``) until removed. An upload
untouched (no chunk, no re-open) for ``UPLOAD_ABANDONED_AFTER_HOURS`` is abandoned: a phone that
comes back later opens it again from the start, because the walk opens before it sends.

Run it from cron, e.g. hourly: ``17 * * * * cd /srv/sealwalk && .venv/bin/python manage.py purge_uploads``.
"""

from __future__ import annotations

from datetime import timedelta

from django.conf import settings
from django.core.management.base import BaseCommand, CommandError
from django.db.models import Count, Sum
from django.db.models.functions import Length
from django.utils import timezone

from ...models import PhotoUpload


def abandoned(hours: int):
    """Unfinished uploads whose last chunk or re-open is more than ``hours`` hours old."""
    return PhotoUpload.objects.filter(updated_at__lt=timezone.now() - timedelta(hours=hours))


class Command(BaseCommand):
    help = (
        "Remove unfinished photo uploads untouched for longer than UPLOAD_ABANDONED_AFTER_HOURS "
        "(or --older-than HOURS). Safe while the server runs; meant for cron."
    )

    def add_arguments(self, parser):
        parser.add_argument(
            "--older-than",
            type=int,
            default=None,
            metavar="HOURS",
            help="Age in whole hours since the last chunk (default: UPLOAD_ABANDONED_AFTER_HOURS).",
        )
        parser.add_argument("--dry-run", action="store_true", help="Count what would go; remove nothing.")

    def handle(self, *args, older_than: int | None = None, dry_run: bool = False, **options):
        hours = settings.UPLOAD_ABANDONED_AFTER_HOURS if older_than is None else older_than
        if isinstance(hours, bool) or not isinstance(hours, int) or hours < 1:
            raise CommandError(f"--older-than: must be a whole number of hours, 1 or more (got {hours!r})")
        stale = abandoned(hours)
        summary = stale.aggregate(n=Count("pk"), held=Sum(Length("received")))
        n, held = summary["n"], summary["held"] or 0
        if dry_run:
            self.stdout.write(f"Would remove {n} unfinished upload(s) older than {hours} h ({held} bytes).")
            return
        # One DELETE with the age in its WHERE clause: an upload that receives a chunk meanwhile is
        # newer than the cut-off by then and stays.
        removed = abandoned(hours).delete()[1].get(PhotoUpload._meta.label, 0)
        self.stdout.write(f"Removed {removed} unfinished upload(s) older than {hours} h ({held} bytes).")
