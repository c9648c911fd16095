"""Job archives: export, restore into an empty database, equality of everything, refusal of bad input.

The checksum format is that of GNU coreutils ``sha256sum`` (``<64 hex>  <name>``), so an archive can
be verified with ``unzip`` and ``sha256sum -c SHA256SUMS`` outside the project.
"""

from __future__ import annotations

import hashlib
import io
import json
import os
import subprocess
import sys
import uuid
import zipfile
from pathlib import Path

import pytest
from django.core.files.storage import default_storage
from django.core.management import call_command
from django.core.management.base import CommandError
from PIL import Image

from qa import backup

ROOT = Path(__file__).resolve().parents[2]


def jpeg(color=(90, 100, 110), gps=False) -> bytes:
    img = Image.new("RGB", (80, 60), color)
    exif = Image.Exif()
    exif[0x0132] = "2026:03:04 10:11:12"
    if gps:
        exif[0x8825] = {1: "N", 2: (51.0, 30.0, 0.0)}
    buf = io.BytesIO()
    img.save(buf, "JPEG", exif=exif.tobytes())
    return buf.getvalue()


@pytest.fixture
def full_job(world, api):
    """A job with every kind of record: findings through their lifecycle, photos, sync, conflict, upload."""
    from django.core.files.uploadedfile import SimpleUploadedFile

    from qa.models import Conflict, Finding, Opening, PhotoUpload, SyncOperation

    w = world
    client = api(w.inspector)
    base = f"/api/jobs/{w.job.pk}"
    ids = []
    for trade, width in (("electrical", 3), ("drywall", 6), ("plumbing", 2)):
        r = client.post(
            f"{base}/findings/",
            {
                "client_id": str(uuid.uuid4()),
                "wall": w.wall.pk,
                "kind": "slit",
                "width": width,
                "length": 600,
                "trade": trade,
                "note": "gap — «unicode» ✓",
            },
            format="json",
        )
        assert r.status_code == 201, r.content
        ids.append(r.json()["id"])
    f1, f2, _ = (Finding.objects.get(pk=i) for i in ids)
    assert (
        api(w.electrician)
        .post(f"{base}/findings/{f1.pk}/fix/", {"note": "sealed"}, format="json")
        .status_code
        == 200
    )
    assert client.post(f"{base}/findings/{f1.pk}/verify/", {}, format="json").status_code == 200
    for finding, color in ((f1, (200, 10, 10)), (f2, (10, 200, 10))):
        up = SimpleUploadedFile("p.jpg", jpeg(color, gps=True), content_type="image/jpeg")
        r = client.post(
            f"{base}/photos/",
            {"id": str(uuid.uuid4()), "finding": finding.pk, "image": up},
            format="multipart",
        )
        assert r.status_code == 201, r.content
    Opening.objects.create(wall=w.wall, kind="door", label="D1", width_m=0.9, height_m=2.1, rating=30)
    op = SyncOperation.objects.create(
        op_id=uuid.uuid4(),
        job=w.job,
        user=w.inspector,
        device_id="phone-1",
        kind="finding.edit",
        result={"ok": True},
    )
    Conflict.objects.create(
        finding=f2,
        operation=op,
        base_version=1,
        server_version={"note": "a"},
        device_version={"note": "b"},
        created_by=w.inspector,
    )
    PhotoUpload.objects.create(
        id=uuid.uuid4(),
        job=w.job,
        wall=w.wall,
        finding=f2,
        total_bytes=10,
        sha256="0" * 64,
        received=b"\x00\x01\xff partial",
        user=w.inspector,
    )
    return w.job


def media_of(data: dict) -> dict[str, bytes]:
    out = {}
    for row in data["models"].get("qa.photo", []):
        for name in (row["image"], row["thumbnail"]):
            with default_storage.open(name, "rb") as fh:
                out[name] = fh.read()
    return out


def wipe_everything():
    """Empty the database (events too: flush bypasses the append-only guard) and the media folder."""
    import shutil

    from django.conf import settings
    from django.db import connection

    if connection.vendor == "postgresql":  # TRUNCATE refuses while deferred FK checks are pending
        with connection.cursor() as cursor:
            cursor.execute("SET CONSTRAINTS ALL IMMEDIATE")
    call_command("flush", interactive=False, verbosity=0)
    shutil.rmtree(settings.MEDIA_ROOT, ignore_errors=True)


def test_every_model_of_the_record_is_in_the_archive():
    from django.apps import apps

    exported = {m._meta.label_lower for m in backup.job_models()}
    for model in apps.get_app_config("qa").get_models():
        label = model._meta.label_lower
        assert label in exported or label in backup.NOT_EXPORTED, f"{label}: not exported and no reason given"


def test_round_trip_restores_everything_exactly(full_job, tmp_path):
    from qa.models import Event, Finding

    before = backup.job_data(full_job)
    files_before = media_of(before)
    assert len(files_before) == 4 and before["models"]["qa.event"], (
        "the fixture should hold photos and events"
    )
    path = tmp_path / "job.zip"
    manifest = backup.export_job(full_job, path)
    assert manifest["schema_version"] == backup.SCHEMA_VERSION
    assert manifest["counts"]["qa.photo"] == 2

    wipe_everything()
    assert backup.database_is_empty() == (True, "")
    result = backup.import_job(path)
    assert result.job_id == full_job.pk and result.files == 4

    from qa.models import Job

    after = backup.job_data(Job.objects.get(pk=full_job.pk))
    assert after == before  # every row, every field: ids, timestamps to the microsecond, JSON, bytes
    assert media_of(after) == files_before
    # Photos are still what the upload stored, and still without location data.
    for row in after["models"]["qa.photo"]:
        stored = files_before[row["image"]]
        assert hashlib.sha256(stored).hexdigest() == row["sha256"]
        assert Image.open(io.BytesIO(stored)).getexif().get_ifd(0x8825) == {}
    # The events are the same trail, in the same order, still append-only.
    assert list(Event.objects.order_by("id").values_list("verb", flat=True)) == [
        e["verb"] for e in before["models"]["qa.event"]
    ]
    # New rows get fresh ids after a restore (PostgreSQL sequences moved past the restored ids).
    f = Finding.objects.first()
    new = Finding.objects.create(
        job=f.job, wall=f.wall, kind="hole", diameter_m=0.01, trade="hvac", created_by=f.created_by
    )
    assert new.pk > max(r["id"] for r in before["models"]["qa.finding"])


def test_restored_people_can_sign_in(full_job, tmp_path, client):
    from tests.conftest import PASSWORD

    path = tmp_path / "job.zip"
    backup.export_job(full_job, path)
    wipe_everything()
    backup.import_job(path)
    assert client.login(username="insp", password=PASSWORD)


def test_without_passwords_nobody_can_sign_in(full_job, tmp_path, client):
    from tests.conftest import PASSWORD

    path = tmp_path / "job.zip"
    backup.export_job(full_job, path, passwords=False)
    assert b"pbkdf2" not in path.read_bytes() and b"md5$" not in zipfile.ZipFile(path).read("data.json")
    wipe_everything()
    backup.import_job(path)
    assert not client.login(username="insp", password=PASSWORD)


def test_archive_verifies_with_sha256sum_format(full_job, tmp_path):
    path = tmp_path / "job.zip"
    backup.export_job(full_job, path)
    with zipfile.ZipFile(path) as zf:
        lines = zf.read("SHA256SUMS").decode().splitlines()
        names = set(zf.namelist()) - {"SHA256SUMS"}
        assert {line.split("  ", 1)[1] for line in lines} == names
        for line in lines:
            digest, name = line.split("  ", 1)
            assert hashlib.sha256(zf.read(name)).hexdigest() == digest
        data = json.loads(zf.read("data.json"))
    assert "users" in data and "qa.job" in data["models"]
    assert all("is_superuser" not in u and "is_staff" not in u for u in data["users"])


def rewrite(path: Path, out: Path, change) -> None:
    with zipfile.ZipFile(path) as src, zipfile.ZipFile(out, "w") as dst:
        for info in src.infolist():
            payload = change(info.filename, src.read(info.filename))
            if payload is not None:
                dst.writestr(info.filename, payload)


def test_corrupt_archives_are_refused_and_nothing_is_written(full_job, tmp_path):
    from qa.models import Job

    good = tmp_path / "job.zip"
    backup.export_job(full_job, good)
    cases = {
        "checksum mismatch for data.json": lambda n, b: (
            b.replace(b'"Test Block A"', b'"Evil Block A"') if n == "data.json" else b
        ),
        "checksum mismatch for media/": lambda n, b: b[:-10] + b"\x00" * 10 if n.startswith("media/") else b,
        "listed in SHA256SUMS but missing": lambda n, b: None if n.startswith("media/") else b,
        "SHA256SUMS is missing": lambda n, b: None if n == "SHA256SUMS" else b,
    }
    wipe_everything()
    for message, change in cases.items():
        bad = tmp_path / "bad.zip"
        rewrite(good, bad, change)
        with pytest.raises(backup.BackupError, match=message):
            backup.import_job(bad)
        assert not Job.objects.exists()
    extra = tmp_path / "extra.zip"
    rewrite(good, extra, lambda n, b: b)
    with zipfile.ZipFile(extra, "a") as zf:
        zf.writestr("media/photos/evil.jpg", b"x")
    with pytest.raises(backup.BackupError, match="not listed in SHA256SUMS"):
        backup.import_job(extra)
    truncated = tmp_path / "truncated.zip"
    truncated.write_bytes(good.read_bytes()[: good.stat().st_size // 2])
    with pytest.raises(backup.BackupError, match="not a readable zip"):
        backup.import_job(truncated)
    assert not Job.objects.exists()
    # The intact archive still restores after all that.
    backup.import_job(good)
    assert Job.objects.filter(pk=full_job.pk).exists()


def test_path_traversal_in_an_archive_is_refused(tmp_path):
    evil = tmp_path / "evil.zip"
    payload = b"owned"
    with zipfile.ZipFile(evil, "w") as zf:
        zf.writestr("../escape.txt", payload)
        zf.writestr("SHA256SUMS", f"{hashlib.sha256(payload).hexdigest()}  ../escape.txt\n")
    with pytest.raises(backup.BackupError, match="not a safe relative path"):
        backup.read_archive(evil)


def test_newer_schema_is_refused(full_job, tmp_path):
    good = tmp_path / "job.zip"
    backup.export_job(full_job, good)

    def bump(name, data):
        if name == "manifest.json":
            m = json.loads(data)
            m["schema_version"] = backup.SCHEMA_VERSION + 1
            return json.dumps(m).encode()
        return data

    newer = tmp_path / "newer.zip"
    rewrite(good, newer, bump)
    # Recompute the sums so only the version is wrong.
    with zipfile.ZipFile(newer) as zf:
        members = {n: zf.read(n) for n in zf.namelist() if n != "SHA256SUMS"}
    with zipfile.ZipFile(newer, "w") as zf:
        for n, b in members.items():
            zf.writestr(n, b)
        zf.writestr(
            "SHA256SUMS", "".join(f"{hashlib.sha256(b).hexdigest()}  {n}\n" for n, b in members.items())
        )
    with pytest.raises(backup.BackupError, match="schema version"):
        backup.read_archive(newer)


def test_non_empty_database_is_refused(full_job, tmp_path):
    from qa.models import Event, Finding

    path = tmp_path / "job.zip"
    backup.export_job(full_job, path)
    counts = (Finding.objects.count(), Event.objects.count())
    with pytest.raises(backup.BackupError, match="not empty"):
        backup.import_job(path)
    assert (Finding.objects.count(), Event.objects.count()) == counts


def test_damaged_stored_photo_is_refused_at_export(full_job, tmp_path):
    from qa.models import Photo

    photo = Photo.objects.filter(job=full_job).first()
    with default_storage.open(photo.image.name, "wb") as fh:
        fh.write(b"not the photo any more")
    with pytest.raises(backup.BackupError, match="no longer match"):
        backup.export_job(full_job, tmp_path / "job.zip")
    assert not (tmp_path / "job.zip").exists()


def test_commands(full_job, tmp_path):
    out = io.StringIO()
    path = tmp_path / "cmd.zip"
    call_command("export_job", str(full_job.pk), "--output", str(path), stdout=out)
    assert "Wrote" in out.getvalue() and path.exists()
    with pytest.raises(CommandError, match="already exists"):
        call_command("export_job", str(full_job.pk), "--output", str(path))
    with pytest.raises(CommandError, match="no job with id"):
        call_command("export_job", "99999", "--output", str(tmp_path / "x.zip"))
    with pytest.raises(CommandError, match="not empty"):
        call_command("import_job", str(path))
    out = io.StringIO()
    call_command("import_job", str(path), "--check", stdout=out)
    assert "every checksum matches" in out.getvalue()
    wipe_everything()
    out = io.StringIO()
    call_command("import_job", str(path), stdout=out)
    assert "Restored Test Block A" in out.getvalue()


@pytest.mark.skipif(
    os.environ.get("DATABASE_URL", "").startswith("postgres"),
    reason="SQLite command; PostgreSQL uses pg_dump -Fc (documented)",
)
def test_backup_sqlite_command_copies_a_live_database(tmp_path):
    import sqlite3

    env = {
        **os.environ,
        "SEALWALK_DATA_DIR": str(tmp_path),
        "DATABASE_URL": "",
        "DJANGO_SETTINGS_MODULE": "qa.settings_test",
    }

    def run(*a):
        return subprocess.run(
            [sys.executable, "manage.py", *a], cwd=ROOT, env=env, capture_output=True, text=True, timeout=120
        )

    assert run("migrate", "-v0").returncode == 0
    live = sqlite3.connect(tmp_path / "db.sqlite3")
    live.execute(
        "INSERT INTO qa_job (name, address, units, rating_scheme, rule_set, created_at, updated_at) "
        "VALUES ('Copy me', '', 'metric', 'stc', '', '2026-01-01', '2026-01-01')"
    )
    live.commit()  # the connection stays open while the copy runs
    result = run("backup_sqlite", str(tmp_path / "copy.sqlite3"))
    assert result.returncode == 0, result.stderr
    assert "integrity ok" in result.stdout
    copy = sqlite3.connect(tmp_path / "copy.sqlite3")
    assert copy.execute("SELECT name FROM qa_job").fetchall() == [("Copy me",)]
    again = run("backup_sqlite", str(tmp_path / "copy.sqlite3"))
    assert again.returncode != 0 and "already exists" in again.stderr
    live.close()
    copy.close()
