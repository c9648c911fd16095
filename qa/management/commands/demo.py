"""``python manage.py demo``: set up the database, load the invented demo job, print logins, serve.

This is the one command that asks for debug by itself: ``qa/settings.py`` turns debug on when it is
run as ``manage.py demo`` (the local demo uses the development key and Django's own server). An
explicit ``SEALWALK_DEBUG=0`` wins; then the job is loaded but not served.
"""

from __future__ import annotations

from django.conf import settings
from django.core.management import call_command
from django.core.management.base import BaseCommand

from ...demo import JOB_NAME, PASSWORD, PEOPLE, load_demo


class Command(BaseCommand):
    help = "Create the SQLite database, load the demo job (once) and serve it on 127.0.0.1:8000."

    def add_arguments(self, parser):
        parser.add_argument(
            "--no-serve", action="store_true", help="Set up and load, but do not start the server."
        )
        parser.add_argument("--no-photos", action="store_true", help="Skip the generated photos (faster).")
        parser.add_argument(
            "--addr", default="127.0.0.1:8000", help="Address to serve on (default 127.0.0.1:8000)."
        )

    def handle(self, *args, no_serve=False, no_photos=False, addr="127.0.0.1:8000", **options):
        call_command("migrate", interactive=False, verbosity=0)
        call_command("createcachetable", verbosity=0)
        job, created = load_demo(photos=not no_photos)
        self.stdout.write(
            self.style.SUCCESS(
                f"{'Loaded' if created else 'Already loaded'}: {JOB_NAME} "
                f"({job.walls.count()} walls, {job.findings.count()} findings)"
            )
        )
        self.stdout.write(f"Sign in at http://{addr}/ with any of these (password: {PASSWORD}):")
        for username, first, last, role, trade in PEOPLE:
            self.stdout.write(f"  {username:<11} {first} {last}, {role}{f' ({trade})' if trade else ''}")
        if no_serve:
            return
        if not settings.DEBUG:
            self.stderr.write(
                "Not serving: SEALWALK_DEBUG=0 turned debug off, and the demo server is for local use only. "
                "Run gunicorn in production (see README)."
            )
            return
        call_command("runserver", addr, use_reloader=False)
