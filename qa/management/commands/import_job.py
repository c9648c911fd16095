"""``python manage.py import_job PATH``: restore a job archive into an empty database."""

from __future__ import annotations

from django.core.management.base import BaseCommand, CommandError

from ...backup import BackupError, archive_summary, import_job


class Command(BaseCommand):
    help = (
        "Restore an archive written by export_job into an EMPTY database (no users, no records): same ids, "
        "timestamps, events and photo bytes. Refuses a corrupt archive or a non-empty database."
    )

    def add_arguments(self, parser):
        parser.add_argument("path", help="The .zip archive written by export_job.")
        parser.add_argument(
            "--check",
            action="store_true",
            help="Only verify the archive's checksums and print what it holds.",
        )

    def handle(self, *args, path: str, check: bool = False, **options):
        try:
            if check:
                self.stdout.write(archive_summary(path))
                self.stdout.write(self.style.SUCCESS("Archive verified: every checksum matches."))
                return
            result = import_job(path)
        except BackupError as exc:
            raise CommandError(str(exc)) from None
        counts = ", ".join(
            f"{n} {label.removeprefix('qa.')}" for label, n in sorted(result.counts.items()) if n
        )
        self.stdout.write(
            self.style.SUCCESS(
                f"Restored {result.job_name} (job {result.job_id}): {counts}; {result.files} photo files"
            )
        )
