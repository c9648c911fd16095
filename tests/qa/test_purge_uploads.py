"""``manage.py purge_uploads``: abandoned walk uploads go, uploads in progress and finished photos stay."""

from __future__ import annotations

import io
import uuid
from datetime import timedelta

import pytest
from django.core.management import call_command
from django.core.management.base import CommandError
from django.utils import timezone

from qa.models import PhotoUpload


def upload(world, *, hours_ago: float, received: bytes = b"\xff\xd8" + b"x" * 998, user=None) -> PhotoUpload:
    row = PhotoUpload.objects.create(
        id=uuid.uuid4(),
        job=world.job,
        wall=world.wall,
        user=user or world.inspector,
        total_bytes=5000,
        sha256="0" * 64,
        received=received,
    )
    # updated_at is auto_now: set the age with an UPDATE, as time passing would.
    PhotoUpload.objects.filter(pk=row.pk).update(updated_at=timezone.now() - timedelta(hours=hours_ago))
    return row


def purge(*args: str) -> str:
    out = io.StringIO()
    call_command("purge_uploads", *args, stdout=out)
    return out.getvalue()


def test_uploads_untouched_longer_than_the_setting_are_removed(world, settings):
    settings.UPLOAD_ABANDONED_AFTER_HOURS = 72
    old = [upload(world, hours_ago=73), upload(world, hours_ago=500, user=world.electrician)]
    fresh = [upload(world, hours_ago=71), upload(world, hours_ago=0)]
    answer = purge()
    assert "Removed 2 unfinished upload(s) older than 72 h (2000 bytes)" in answer
    remaining = set(PhotoUpload.objects.values_list("pk", flat=True))
    assert remaining == {u.pk for u in fresh}
    assert not remaining & {u.pk for u in old}


def test_older_than_option_overrides_the_setting(world, settings):
    settings.UPLOAD_ABANDONED_AFTER_HOURS = 72
    upload(world, hours_ago=3)
    keep = upload(world, hours_ago=1)
    assert "Removed 1 " in purge("--older-than", "2")
    assert list(PhotoUpload.objects.values_list("pk", flat=True)) == [keep.pk]


def test_dry_run_counts_and_removes_nothing(world):
    upload(world, hours_ago=1000, received=b"y" * 1234)
    assert "Would remove 1 unfinished upload(s) older than 72 h (1234 bytes)" in purge("--dry-run")
    assert PhotoUpload.objects.count() == 1


def test_an_upload_receiving_chunks_is_not_abandoned_however_old_it_is(world):
    """Age counts from the last chunk (updated_at), not from when the upload was opened."""
    row = upload(world, hours_ago=1000)
    PhotoUpload.objects.filter(pk=row.pk).update(created_at=timezone.now() - timedelta(days=90))
    row.refresh_from_db()
    row.received += b"more"
    row.save()  # a chunk arrives: auto_now moves updated_at
    assert "Removed 0 " in purge()
    assert PhotoUpload.objects.filter(pk=row.pk).exists()


def test_nothing_to_purge_says_so(db):
    assert "Removed 0 unfinished upload(s)" in purge()


@pytest.mark.parametrize("hours", ["0", "-5"])
def test_age_below_one_hour_is_refused_naming_the_option(world, hours):
    upload(world, hours_ago=10)
    with pytest.raises(CommandError, match="--older-than: must be a whole number of hours, 1 or more"):
        purge("--older-than", hours)
    assert PhotoUpload.objects.count() == 1
