"""Resumable photo uploads for the walk: open a session, send chunks at offsets, finish.

The device names the photo (its UUID), the total size and the SHA-256 of the bytes it will send.
Chunks must arrive at the server's current offset, so a cut-off upload asks for the offset and
carries on from there. Finishing checks size and hash, then stores the photo the same way the
photo API does (:func:`qa.actions.store_photo`).
"""

from __future__ import annotations

import hashlib
import re
import uuid
from typing import Any

from django.conf import settings
from django.db import transaction
from django.db.models import Count, Sum

from .. import actions
from ..access import require
from ..actions import Actor, Reject
from ..actions.parse import parse_id, parse_moment, parse_uuid
from ..choices import PhotoPurpose, Role
from ..models import Finding, Job, Member, Photo, PhotoUpload, Wall

SHA256 = re.compile(r"^[0-9a-f]{64}$")
CAPTION_MAX = 200


def _uuid(value, field: str) -> uuid.UUID:
    try:
        return uuid.UUID(str(value))
    except ValueError:
        raise Reject({field: ["must be a UUID"]}) from None


def state(upload: PhotoUpload) -> dict:
    return {"id": str(upload.id), "offset": upload.offset, "total_bytes": upload.total_bytes, "done": False}


class UploadLimit(Reject):
    """Opening one more upload would pass a limit on unfinished uploads (the API answers 429)."""


def _pending(uploads) -> tuple[int, int]:
    totals = uploads.aggregate(n=Count("pk"), size=Sum("total_bytes"))
    return totals["n"] or 0, totals["size"] or 0


def check_limits(member: Member, total: int) -> None:
    """Refuse a new upload of ``total`` bytes past a person's or a job's limits on unfinished uploads.

    Counted over the uploads still open (the bytes wait in the database until they finish): per
    person across all their jobs, and per job across all its members, by the sizes declared.
    """
    mib = 1024 * 1024
    count, size = _pending(PhotoUpload.objects.filter(user=member.user))
    if count + 1 > settings.UPLOAD_MAX_OPEN_PER_USER:
        raise UploadLimit(
            {
                "uploads": [
                    f"at most {settings.UPLOAD_MAX_OPEN_PER_USER} unfinished uploads per person "
                    "(UPLOAD_MAX_OPEN_PER_USER); finish the ones open first"
                ]
            }
        )
    if size + total > settings.UPLOAD_MAX_PENDING_BYTES_PER_USER:
        raise UploadLimit(
            {
                "total_bytes": [
                    f"at most {settings.UPLOAD_MAX_PENDING_BYTES_PER_USER / mib:g} MB in unfinished uploads "
                    f"per person (UPLOAD_MAX_PENDING_BYTES_PER_USER); {size} bytes are waiting"
                ]
            }
        )
    count, size = _pending(PhotoUpload.objects.filter(job=member.job))
    if count + 1 > settings.UPLOAD_MAX_OPEN_PER_JOB:
        raise UploadLimit(
            {
                "uploads": [
                    f"at most {settings.UPLOAD_MAX_OPEN_PER_JOB} unfinished uploads per job "
                    "(UPLOAD_MAX_OPEN_PER_JOB); finish the ones open first"
                ]
            }
        )
    if size + total > settings.UPLOAD_MAX_PENDING_BYTES_PER_JOB:
        raise UploadLimit(
            {
                "total_bytes": [
                    f"at most {settings.UPLOAD_MAX_PENDING_BYTES_PER_JOB / mib:g} MB in unfinished uploads "
                    f"per job (UPLOAD_MAX_PENDING_BYTES_PER_JOB); {size} bytes are waiting"
                ]
            }
        )


def open_upload(member: Member, data: Any, device_id: str = "") -> tuple[dict, bool]:
    """Open (or find again) the upload of photo ``data["id"]``; return its state and whether it is new.

    ``data``: id (UUID), finding (the finding's client id) or wall (id), purpose, total_bytes,
    sha256 (hex), captured_at (ISO 8601, optional), caption (optional). Every field is checked before
    anything is written; a new upload past a limit raises :class:`UploadLimit`.
    """
    if not isinstance(data, dict):
        raise Reject({"non_field_errors": ["the body must be a JSON object"]})
    job = member.job
    photo_id = parse_uuid(data.get("id"), "id")
    photo = Photo.objects.filter(pk=photo_id).first()
    if photo is not None:
        if photo.job_id != job.id:
            raise Reject({"id": ["is already used"]})
        return {
            "id": str(photo.id),
            "offset": photo.bytes,
            "total_bytes": photo.bytes,
            "done": True,
            "sha256": photo.sha256,
        }, False
    existing = PhotoUpload.objects.filter(pk=photo_id).first()
    if existing is not None:
        if existing.job_id != job.id or existing.user_id != member.user_id:
            raise Reject({"id": ["is already used"]})
        return state(existing), False

    total = data.get("total_bytes")
    if isinstance(total, bool) or not isinstance(total, int) or not 0 < total <= settings.PHOTO_MAX_BYTES:
        raise Reject({"total_bytes": [f"must be a whole number from 1 to {settings.PHOTO_MAX_BYTES}"]})
    digest = data.get("sha256")
    if not isinstance(digest, str) or not SHA256.match(digest.lower()):
        raise Reject({"sha256": ["must be 64 hexadecimal digits"]})
    digest = digest.lower()
    purpose = data.get("purpose") or PhotoPurpose.DEFECT
    if not isinstance(purpose, str) or purpose not in PhotoPurpose.values:
        raise Reject({"purpose": [f"must be one of {', '.join(PhotoPurpose.values)}"]})
    captured = data.get("captured_at")
    when = None if captured in (None, "") else parse_moment(captured, "captured_at")
    caption = data.get("caption") or ""
    if not isinstance(caption, str) or len(caption) > CAPTION_MAX:
        raise Reject({"caption": [f"must be text of at most {CAPTION_MAX} characters"]})
    finding = None
    wall: Wall | None
    if data.get("finding"):
        finding = Finding.objects.filter(
            client_id=parse_uuid(data["finding"], "finding"), job=job, removed=False, wall__removed=False
        ).first()
        if finding is None:
            raise Reject({"finding": ["no such finding in this job (sync the finding first)"]})
        wall = finding.wall
    else:
        if data.get("wall") in (None, ""):
            raise Reject({"wall": ["give the wall or the finding the photo shows"]})
        wall = Wall.objects.filter(pk=parse_id(data.get("wall"), "wall"), job=job, removed=False).first()
        if wall is None:
            raise Reject({"wall": ["no such wall in this job"]})
    require(member, "fix", trade=finding.trade if finding else None)  # another trade's finding: 403
    if member.role == Role.CREW:
        if finding is None:
            raise Reject({"finding": ["crew photos show the fix of a finding"]})
        purpose = PhotoPurpose.FIX
    with transaction.atomic():
        # Opens of one job queue here, so two at once cannot both slip under a limit.
        Job.objects.select_for_update().filter(pk=job.pk).first()
        check_limits(member, total)
        upload = PhotoUpload.objects.create(
            id=photo_id,
            job=job,
            wall=wall,
            finding=finding,
            purpose=purpose,
            captured_at=when,
            caption=caption,
            total_bytes=total,
            sha256=digest,
            user=member.user,
            device_id=str(device_id)[:64],
        )
    return state(upload), True


def _upload(member: Member, photo_id, *, lock: bool = False) -> PhotoUpload:
    qs = PhotoUpload.objects.select_for_update() if lock else PhotoUpload.objects
    upload = qs.filter(pk=_uuid(photo_id, "id"), job=member.job, user=member.user).first()
    if upload is None:
        raise Reject({"id": ["no such upload; open it first"]})
    return upload


def upload_state(member: Member, photo_id) -> dict:
    photo = Photo.objects.filter(pk=_uuid(photo_id, "id"), job=member.job).first()
    if photo is not None:
        return {
            "id": str(photo.id),
            "offset": photo.bytes,
            "total_bytes": photo.bytes,
            "done": True,
            "sha256": photo.sha256,
        }
    return state(_upload(member, photo_id))


class OffsetMismatch(Reject):
    """A chunk that does not start at the server's offset (the device resumes from ``offset``)."""

    def __init__(self, offset: int):
        super().__init__({"offset": [f"must be {offset}, where the server's copy ends"]})
        self.offset = offset


@transaction.atomic
def append_chunk(member: Member, photo_id, offset: int, chunk: bytes) -> dict:
    """Append ``chunk`` at ``offset``; a repeated chunk already received is accepted and ignored."""
    upload = _upload(member, photo_id, lock=True)
    have = bytes(upload.received)
    if (
        offset < len(have)
        and offset + len(chunk) <= len(have)
        and have[offset : offset + len(chunk)] == chunk
    ):
        return state(upload)  # a retry of a chunk whose answer was lost
    if offset != len(have):
        raise OffsetMismatch(len(have))
    if len(have) + len(chunk) > upload.total_bytes:
        raise Reject({"chunk": [f"goes past the announced size of {upload.total_bytes} bytes"]})
    upload.received = have + chunk
    upload.save(update_fields=["received", "updated_at"])
    return state(upload)


def _finished(member: Member, photo_id) -> Photo | None:
    return Photo.objects.filter(pk=_uuid(photo_id, "id"), job=member.job).first()


def _upload_or_finished(member: Member, photo_id) -> PhotoUpload | Photo:
    """The locked upload — or, when a finish racing this one stored it meanwhile, the stored photo."""
    try:
        return _upload(member, photo_id, lock=True)
    except Reject:
        photo = _finished(member, photo_id)
        if photo is None:
            raise
        return photo


def finish_upload(member: Member, photo_id) -> tuple[Photo, bool]:
    """Check size and hash, store the photo; return it and whether it was made now."""
    photo = _finished(member, photo_id)
    if photo is not None:
        return photo, False
    with transaction.atomic():
        upload = _upload_or_finished(member, photo_id)
        if isinstance(upload, Photo):
            return upload, False
        data = bytes(upload.received)
        if len(data) != upload.total_bytes:
            raise Reject({"offset": [f"the upload has {len(data)} of {upload.total_bytes} bytes"]})
        if hashlib.sha256(data).hexdigest() != upload.sha256:
            # Start again (outside this transaction, which the error rolls back): the bytes on the
            # server are not what the device meant to send.
            PhotoUpload.objects.filter(pk=upload.pk).update(received=b"")
            mismatch = True
        else:
            mismatch = False
    if mismatch:
        raise Reject({"sha256": ["does not match the bytes received; the upload was reset"]})
    with transaction.atomic():
        upload = _upload_or_finished(member, photo_id)
        if isinstance(upload, Photo):
            return upload, False
        data = bytes(upload.received)
        if len(data) != upload.total_bytes or hashlib.sha256(data).hexdigest() != upload.sha256:
            raise Reject({"offset": ["the upload changed while finishing; ask for the offset and go on"]})
        actor = Actor(member, device_id=upload.device_id)
        photo = actions.store_photo(
            actor,
            data,
            wall=upload.wall,
            finding=upload.finding,
            purpose=upload.purpose,
            photo_id=upload.id,
            captured_at=upload.captured_at,
            caption=upload.caption,
            extra={"resumable": True},
        )
        upload.delete()
    return photo, True


def photo_data(photo: Photo) -> dict:
    from django.urls import reverse

    return {
        "id": str(photo.id),
        "done": True,
        "offset": photo.bytes,
        "total_bytes": photo.bytes,
        "wall": photo.wall_id,
        "finding": photo.finding_id,
        "purpose": photo.purpose,
        "bytes": photo.bytes,
        "sha256": photo.sha256,
        "received_sha256": photo.received_sha256,
        "width": photo.width,
        "height": photo.height,
        "thumbnail_url": reverse(
            "qa:photo-file", kwargs={"job_pk": photo.job_id, "photo_id": photo.id, "kind": "thumb"}
        ),
    }
