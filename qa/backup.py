"""One archive per job: every record of the job as JSON, its photo files, and SHA-256 checksums.

``export_job`` writes a zip file; ``import_job`` restores it into an empty database, keeping
every primary key, timestamp, event and photo byte for byte. The archive is self-checking:
``SHA256SUMS`` lists every other member in the format of ``sha256sum``, so ``unzip`` followed by
``sha256sum -c SHA256SUMS`` verifies it without Sealwalk, and the import refuses an archive whose
members do not match it.

Archive layout (schema version 1)::

    manifest.json   format, schema version, job, counts, migrations of the source, creation time
    data.json       {"users": [...], "models": {"qa.job": [...], "qa.wall": [...], ...}}
    media/<name>    photo and thumbnail files, under their storage names
    SHA256SUMS      "<hex>  <member>" for every member above

Which rows belong to a job is found from the models themselves (any model of the ``qa`` app
with a foreign-key path to ``Job``), so a model added later is exported without touching this
module; a model with no such path must be listed in :data:`NOT_EXPORTED` with its reason.

The archive holds password hashes of the job's people (so they can sign in after a restore)
and photos of the insides of homes: store it like the database itself. ``--without-passwords``
exports unusable passwords instead. Site-admin flags and API tokens are never exported.
"""

from __future__ import annotations

import base64
import datetime as dt
import hashlib
import json
import re
import uuid
import zipfile
from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import dataclass, field
from pathlib import Path
from typing import TypeVar

from django.apps import apps
from django.contrib.auth import get_user_model
from django.core.files.base import ContentFile
from django.core.files.storage import default_storage
from django.core.management.color import no_style
from django.db import connection, models, transaction
from django.db.migrations.recorder import MigrationRecorder

from .audit.cache import FIELD, WALL, WALL_TYPE, bump

FORMAT = "sealwalk-job-archive"
SCHEMA_VERSION = 1
#: Models of the qa app that are deliberately left out of a job archive, with the reason.
NOT_EXPORTED: dict[str, str] = {
    "qa.stamp": "cache stamps are derived: a restore gives every restored wall and wall type new ones",
}
USER_FIELDS = (
    "id",
    "username",
    "first_name",
    "last_name",
    "email",
    "is_active",
    "password",
    "date_joined",
    "last_login",
)
SAFE_MEDIA_NAME = re.compile(r"^[A-Za-z0-9_][A-Za-z0-9_./-]{0,250}$")
MAX_MEMBER_BYTES = 256 * 1024 * 1024  # no single member of a genuine archive comes near this


class BackupError(ValueError):
    """The archive cannot be written or restored; the message says why."""


@dataclass
class ImportResult:
    job_id: int
    job_name: str
    counts: dict[str, int] = field(default_factory=dict)
    files: int = 0


_M = TypeVar("_M", bound=models.Model)


# --- which models, in which order ----------------------------------------------------------------


def _job_path(model) -> str | None:
    """ORM lookup from ``model`` to its Job's pk ("job", "wall__job", ...), None when there is none."""
    Job = apps.get_model("qa", "Job")
    if model is Job:
        return "pk"
    seen = {model}
    frontier: list[tuple[type[models.Model], str]] = [(model, "")]
    while frontier:
        nxt: list[tuple[type[models.Model], str]] = []
        for current, prefix in frontier:
            fks = sorted(
                (f for f in current._meta.concrete_fields if f.many_to_one or f.one_to_one),
                key=lambda f: (not f.name == "job", f.name),
            )  # the direct job link wins
            for fk in fks:
                target = fk.related_model
                assert target is not None  # a concrete foreign key always has its target model
                if target is Job:
                    return f"{prefix}{fk.name}_id" if not prefix else f"{prefix}{fk.name}"
                if target._meta.app_label == "qa" and target not in seen:
                    seen.add(target)
                    nxt.append((target, f"{prefix}{fk.name}__"))
        frontier = nxt
    return None


def job_models() -> list[type[models.Model]]:
    """Models of the qa app reachable from a Job, ordered so every foreign key points backwards."""
    found = [
        m
        for m in apps.get_app_config("qa").get_models()
        if m._meta.label_lower not in NOT_EXPORTED and not m._meta.proxy
    ]
    missing = [m._meta.label_lower for m in found if _job_path(m) is None]
    if missing:
        raise BackupError(
            f"models {missing}: no path to a job; list them in qa.backup.NOT_EXPORTED with a reason"
        )
    ordered: list[type[models.Model]] = []
    pending = list(found)
    while pending:
        progress = False
        for model in list(pending):
            deps = {
                f.related_model
                for f in model._meta.concrete_fields
                if (f.many_to_one or f.one_to_one)
                and f.related_model in found
                and f.related_model is not model
            }
            if deps <= set(ordered):
                ordered.append(model)
                pending.remove(model)
                progress = True
        if not progress:
            raise BackupError(f"models {[m._meta.label_lower for m in pending]}: circular foreign keys")
    return ordered


def _rows(model, job) -> models.QuerySet:
    path = _job_path(model)
    assert path is not None  # only models from job_models() come here, and it refuses one without a path
    manager = model._base_manager
    key = "pk" if path == "pk" else path
    return manager.filter(**{key: job.pk}).order_by("pk")


# --- values <-> JSON ----------------------------------------------------------------------------


def _encode(f: models.Field | models.ForeignObjectRel, value):
    if value is None:
        return None
    if isinstance(f, models.FileField):
        return value.name if hasattr(value, "name") else str(value)
    if isinstance(value, dt.datetime | dt.date | dt.time):
        return value.isoformat()  # full microseconds (Django's JSON encoder keeps only milliseconds)
    if isinstance(value, uuid.UUID):
        return str(value)
    if isinstance(value, bytes | memoryview | bytearray):
        return base64.b64encode(bytes(value)).decode("ascii")
    return value


def _decode(f: models.Field, value):
    if value is None:
        return None
    if isinstance(f, models.DateTimeField):
        return dt.datetime.fromisoformat(value)
    if isinstance(f, models.DateField):
        return dt.date.fromisoformat(value)
    if isinstance(f, models.TimeField):
        return dt.time.fromisoformat(value)
    if isinstance(f, models.UUIDField):
        return uuid.UUID(value)
    if isinstance(f, models.BinaryField):
        return base64.b64decode(value)
    return value


def _row(obj: models.Model) -> dict:
    return {f.attname: _encode(f, f.value_from_object(obj)) for f in obj._meta.concrete_fields}


def job_data(job, *, passwords: bool = True) -> dict:
    """Every record of ``job`` and the people it references, as plain JSON-ready data."""
    out: dict[str, list[dict]] = {}
    user_ids: set[int] = set()
    User = get_user_model()
    for model in job_models():
        rows = [_row(obj) for obj in _rows(model, job)]
        out[model._meta.label_lower] = rows
        user_fks = [
            f.attname
            for f in model._meta.concrete_fields
            if (f.many_to_one or f.one_to_one) and f.related_model is User
        ]
        for row in rows:
            user_ids.update(row[a] for a in user_fks if row[a] is not None)
    users = []
    for user in User._base_manager.filter(pk__in=user_ids).order_by("pk"):
        row = {name: _encode(User._meta.get_field(name), getattr(user, name)) for name in USER_FIELDS}
        if not passwords:
            row["password"] = "!" + "exported-without-password"  # unusable: "!" prefix
        users.append(row)
    return {"users": users, "models": out}


def _media_names(data: dict) -> list[str]:
    names: list[str] = []
    for label, rows in data["models"].items():
        model = apps.get_model(label)
        file_fields = [f.attname for f in model._meta.concrete_fields if isinstance(f, models.FileField)]
        for row in rows:
            names.extend(row[a] for a in file_fields if row[a])
    return sorted(set(names))


def _migrations() -> list[str]:
    return sorted(
        f"{app}.{name}" for app, name in MigrationRecorder(connection).applied_migrations() if app == "qa"
    )


# --- export ---------------------------------------------------------------------------------------


def export_job(job, path: str | Path, *, passwords: bool = True) -> dict:
    """Write the archive of ``job`` to ``path``; returns the manifest.

    Raises
    ------
    BackupError
        A photo file is missing from storage or its bytes no longer match its recorded sha256.
    """
    with transaction.atomic():  # one consistent snapshot on PostgreSQL (repeatable within the read)
        data = job_data(job, passwords=passwords)
    Photo = apps.get_model("qa", "Photo")
    recorded = {p["image"]: p["sha256"] for p in data["models"].get(Photo._meta.label_lower, [])}
    data_bytes = json.dumps(data, ensure_ascii=False, sort_keys=True, indent=1).encode()
    sums: dict[str, str] = {}
    manifest = {
        "format": FORMAT,
        "schema_version": SCHEMA_VERSION,
        "created_at": dt.datetime.now(dt.UTC).isoformat(),
        "job": {"id": job.pk, "name": job.name},
        "counts": {label: len(rows) for label, rows in data["models"].items()}
        | {"users": len(data["users"])},
        "migrations": _migrations(),
        "passwords": passwords,
    }
    path = Path(path)
    tmp = path.with_name(path.name + ".partial")
    try:
        with zipfile.ZipFile(tmp, "w", compression=zipfile.ZIP_DEFLATED) as zf:

            def put(name: str, payload: bytes, compress: bool = True) -> None:
                sums[name] = hashlib.sha256(payload).hexdigest()
                zf.writestr(
                    name, payload, compress_type=zipfile.ZIP_DEFLATED if compress else zipfile.ZIP_STORED
                )

            put("manifest.json", json.dumps(manifest, indent=1, sort_keys=True).encode())
            put("data.json", data_bytes)
            for name in _media_names(data):
                try:
                    with default_storage.open(name, "rb") as fh:
                        payload = fh.read()
                except (OSError, FileNotFoundError) as exc:
                    raise BackupError(f"photo file {name}: cannot be read from storage ({exc})") from None
                if (
                    name in recorded
                    and recorded[name]
                    and hashlib.sha256(payload).hexdigest() != recorded[name]
                ):
                    raise BackupError(
                        f"photo file {name}: its bytes no longer match the sha256 recorded "
                        "at upload; the stored file was changed or damaged"
                    )
                put(f"media/{name}", payload, compress=False)
            zf.writestr("SHA256SUMS", "".join(f"{h}  {n}\n" for n, h in sums.items()))
        tmp.replace(path)
    finally:
        tmp.unlink(missing_ok=True)
    return manifest


# --- import ---------------------------------------------------------------------------------------


def read_archive(path: str | Path) -> tuple[dict, dict, dict[str, bytes]]:
    """Open and verify an archive; returns (manifest, data, media files by storage name).

    Raises
    ------
    BackupError
        Not a zip archive, a member missing, an unlisted member, a checksum mismatch, an unsafe
        member name, or a format or schema version this code does not read.
    """
    try:
        zf = zipfile.ZipFile(path)
    except (zipfile.BadZipFile, OSError) as exc:
        raise BackupError(f"archive {path}: not a readable zip file ({exc})") from None
    with zf:
        names = zf.namelist()
        if "SHA256SUMS" not in names:
            raise BackupError("archive: SHA256SUMS is missing; this is not a Sealwalk job archive")
        sums = {}
        for line in zf.read("SHA256SUMS").decode("utf-8", "replace").splitlines():
            digest, _, name = line.partition("  ")
            if not re.fullmatch(r"[0-9a-f]{64}", digest) or not name:
                raise BackupError(f"archive: SHA256SUMS has a malformed line {line[:80]!r}")
            sums[name] = digest
        extra = sorted(set(names) - set(sums) - {"SHA256SUMS"})
        if extra:
            raise BackupError(f"archive: members not listed in SHA256SUMS: {extra[:5]}")
        contents: dict[str, bytes] = {}
        for name, digest in sums.items():
            if name not in names:
                raise BackupError(f"archive: member {name} is listed in SHA256SUMS but missing")
            if name.startswith("/") or ".." in name.split("/") or "\\" in name:
                raise BackupError(f"archive: member name {name!r} is not a safe relative path")
            info = zf.getinfo(name)
            if info.file_size > MAX_MEMBER_BYTES:
                raise BackupError(f"archive: member {name} is larger than {MAX_MEMBER_BYTES} bytes")
            try:
                payload = zf.read(name)
            except (zipfile.BadZipFile, OSError, EOFError) as exc:  # zip's own CRC check
                raise BackupError(f"archive: member {name} is corrupt ({exc})") from None
            if hashlib.sha256(payload).hexdigest() != digest:
                raise BackupError(
                    f"archive: checksum mismatch for {name}; the archive is corrupt or was altered"
                )
            contents[name] = payload
    for required in ("manifest.json", "data.json"):
        if required not in contents:
            raise BackupError(f"archive: {required} is missing")
    manifest = json.loads(contents.pop("manifest.json"))
    if manifest.get("format") != FORMAT:
        raise BackupError(f"archive: format {manifest.get('format')!r} is not {FORMAT!r}")
    version = manifest.get("schema_version")
    if not isinstance(version, int) or version > SCHEMA_VERSION or version < 1:
        raise BackupError(
            f"archive: schema version {version!r} is not one this version reads (1..{SCHEMA_VERSION})"
        )
    data = json.loads(contents.pop("data.json"))
    media = {}
    for name, payload in contents.items():
        if not name.startswith("media/"):
            raise BackupError(f"archive: unexpected member {name}")
        media[name.removeprefix("media/")] = payload
    for name in media:
        if not SAFE_MEDIA_NAME.fullmatch(name) or ".." in name.split("/"):
            raise BackupError(f"archive: media name {name!r} is not a safe storage name")
    return manifest, data, media


def database_is_empty() -> tuple[bool, str]:
    """True when the target holds no user and no record of the qa app (the only safe restore target)."""
    User = get_user_model()
    if User._base_manager.exists():
        return False, f"{User._base_manager.count()} user(s)"
    for model in apps.get_app_config("qa").get_models():
        if model._base_manager.exists():
            return False, f"{model._base_manager.count()} {model._meta.verbose_name_plural}"
    return True, ""


@contextmanager
def _stored_timestamps(models_: list) -> Iterator[None]:
    """Let auto_now / auto_now_add fields take the archive's values while rows are inserted."""
    saved = []
    for model in models_:
        for f in model._meta.concrete_fields:
            if getattr(f, "auto_now", False) or getattr(f, "auto_now_add", False):
                saved.append((f, f.auto_now, f.auto_now_add))
                f.auto_now = f.auto_now_add = False
    try:
        yield
    finally:
        for f, now, now_add in saved:
            f.auto_now, f.auto_now_add = now, now_add


def _build(model: type[_M], row: dict) -> _M:
    fields = {f.attname: f for f in model._meta.concrete_fields}
    unknown = sorted(set(row) - set(fields))
    if unknown:
        raise BackupError(
            f"data: {model._meta.label_lower} has fields {unknown} that this database lacks; "
            "restore with the Sealwalk version that wrote the archive, or a newer one"
        )
    return model(**{name: _decode(fields[name], value) for name, value in row.items()})


def import_job(path: str | Path) -> ImportResult:
    """Restore an archive into an empty database (same primary keys, timestamps, events, photo bytes).

    Raises
    ------
    BackupError
        The archive is corrupt or unreadable (see :func:`read_archive`), or the database is not empty.
    """
    manifest, data, media = read_archive(path)
    empty, what = database_is_empty()
    if not empty:
        raise BackupError(
            f"database: not empty (it holds {what}); import_job restores only into an empty "
            "database, so nothing existing is overwritten or mixed"
        )
    wanted = set(_media_names(data))
    if wanted - set(media):
        raise BackupError(f"archive: photo files missing: {sorted(wanted - set(media))[:5]}")
    User = get_user_model()
    order = job_models()
    known = {m._meta.label_lower: m for m in order}
    for label in data["models"]:
        if label not in known:
            raise BackupError(f"data: model {label} is unknown to this version")
    written: list[str] = []
    counts: dict[str, int] = {}
    try:
        with transaction.atomic(), _stored_timestamps([User, *order]):
            User._base_manager.bulk_create([_build(User, row) for row in data["users"]])
            counts["users"] = len(data["users"])
            for model in order:
                rows = data["models"].get(model._meta.label_lower, [])
                model._base_manager.bulk_create([_build(model, row) for row in rows], batch_size=500)
                counts[model._meta.label_lower] = len(rows)
            # bulk_create sends no signals: new stamps, so no audit cached before the restore is served.
            walls = [row["id"] for row in data["models"].get("qa.wall", [])]
            bump(WALL, walls)
            bump(FIELD, walls)
            bump(WALL_TYPE, [row["id"] for row in data["models"].get("qa.walltype", [])])
            for name in sorted(wanted):
                stored = default_storage.save(name, ContentFile(media[name]))
                written.append(stored)
                if stored != name:
                    raise BackupError(f"storage: {name} already exists in the media storage; clear it first")
            _reset_sequences([User, *order])
    except BaseException:
        for name in written:
            default_storage.delete(name)
        raise
    job_rows = data["models"].get("qa.job", [])
    return ImportResult(
        job_id=job_rows[0]["id"] if job_rows else 0,
        job_name=manifest.get("job", {}).get("name", ""),
        counts=counts,
        files=len(written),
    )


def _reset_sequences(models_: list) -> None:
    """After inserting explicit keys, move PostgreSQL's sequences past them (a no-op on SQLite)."""
    statements = connection.ops.sequence_reset_sql(no_style(), models_)
    if statements:
        with connection.cursor() as cursor:
            for sql in statements:
                cursor.execute(sql)


def archive_summary(path: str | Path) -> str:
    """One line per table of a verified archive (for ``import_job --check``)."""
    manifest, _data, media = read_archive(path)
    lines = [
        f"{manifest['job']['name']} (job {manifest['job']['id']}), schema {manifest['schema_version']}, "
        f"written {manifest['created_at']}"
    ]
    lines += [f"  {label}: {n}" for label, n in sorted(manifest["counts"].items())]
    lines.append(f"  files: {len(media)}")
    return "\n".join(lines)


__all__ = [
    "FORMAT",
    "SCHEMA_VERSION",
    "BackupError",
    "ImportResult",
    "archive_summary",
    "database_is_empty",
    "export_job",
    "import_job",
    "job_data",
    "job_models",
    "read_archive",
]
