"""``python manage.py export_job JOB_ID [--output PATH]``: write one job's archive (data, photos, sums)."""

from __future__ import annotations

from pathlib import Path

from django.core.management.base import BaseCommand, CommandError

from ...backup import BackupError, export_job
from ...models import Job


class Command(BaseCommand):
    help = (
        "Write one job's archive: every record as JSON with a schema version, its photo files, and "
        "SHA-256 checksums. Restore it with import_job into an empty database."
    )

    def add_arguments(self, parser):
        parser.add_argument("job_id", type=int, help="Id of the job (see /api/jobs/ or the admin).")
        parser.add_argument(
            "--output", "-o", help="Archive path (default sealwalk-job-<id>-<date>.zip here)."
        )
        parser.add_argument(
            "--without-passwords",
            action="store_true",
            help="Export unusable passwords: people set new ones after a restore.",
        )

    def handle(
        self, *args, job_id: int, output: str | None = None, without_passwords: bool = False, **options
    ):
        try:
            job = Job.objects.get(pk=job_id)
        except Job.DoesNotExist:
            raise CommandError(f"job_id: no job with id {job_id}") from None
        from django.utils import timezone

        path = Path(output or f"sealwalk-job-{job.pk}-{timezone.now():%Y%m%d-%H%M%S}.zip")
        if path.exists():
            raise CommandError(f"--output: {path} already exists; choose another name")
        try:
            manifest = export_job(job, path, passwords=not without_passwords)
        except BackupError as exc:
            raise CommandError(str(exc)) from None
        counts = ", ".join(
            f"{n} {label.removeprefix('qa.')}" for label, n in sorted(manifest["counts"].items()) if n
        )
        self.stdout.write(
            self.style.SUCCESS(f"Wrote {path} ({path.stat().st_size} bytes): {job.name}: {counts}")
        )
