"""Storing a photo: clean it (qa.photos.clean_photo), save the image and thumbnail, record an event."""

from __future__ import annotations

import uuid
from datetime import datetime

from django.core.files.base import ContentFile
from django.db import transaction

from ..choices import PhotoPurpose, Role
from ..models import Finding, Photo, Wall
from ..photos import clean_photo
from .context import Actor, Reject

#: Every door (API, walk upload, crew page) holds a caption to this many characters.
CAPTION_MAX = 200


def photo_purpose(actor: Actor, finding: Finding | None, purpose: str) -> str:
    """The purpose a member may store: crews only show the fix of a finding of their trade."""
    actor.need("fix", trade=finding.trade if finding is not None else None)
    if actor.member.role == Role.CREW:
        if finding is None:
            raise Reject({"finding": ["crew photos show the fix of a finding"]})
        return PhotoPurpose.FIX
    return purpose


def store_photo(
    actor: Actor,
    data: bytes,
    *,
    wall: Wall,
    finding: Finding | None = None,
    purpose: str = PhotoPurpose.DEFECT,
    photo_id: uuid.UUID | None = None,
    captured_at: datetime | None = None,
    caption: str = "",
    extra: dict | None = None,
) -> Photo:
    """Clean ``data`` and store it as a photo of ``wall`` (and ``finding``).

    The row is written before the files, inside one savepoint, so a replayed id that loses the race
    (IntegrityError on the primary key) leaves no orphan file behind. Raises
    :class:`qa.photos.PhotoError` for a file that is not an acceptable photo.
    """
    purpose = photo_purpose(actor, finding, purpose)
    if not isinstance(caption, str) or len(caption) > CAPTION_MAX:
        raise Reject({"caption": [f"must be text of at most {CAPTION_MAX} characters"]})
    clean = clean_photo(data)
    photo = Photo(
        job=actor.job,
        wall=wall,
        finding=finding,
        purpose=purpose,
        caption=caption,
        captured_at=captured_at or clean.captured_at,
        width=clean.width,
        height=clean.height,
        bytes=len(clean.image),
        thumbnail_bytes=len(clean.thumbnail),
        sha256=clean.sha256,
        received_sha256=clean.received_sha256,
        original_format=clean.original_format,
        uploaded_by=actor.user,
    )
    if photo_id is not None:
        photo.id = photo_id
    with transaction.atomic():
        photo.save(force_insert=True)  # claims the id first: a twin fails here, before any file
        photo.image.save("photo.jpg", ContentFile(clean.image), save=False)
        photo.thumbnail.save("thumb.jpg", ContentFile(clean.thumbnail), save=False)
        photo.save(update_fields=["image", "thumbnail"])
        actor.event(
            "photo.added",
            photo,
            {
                "finding": finding.id if finding is not None else None,
                "purpose": purpose,
                "sha256": photo.sha256,
                **(extra or {}),
            },
        )
    return photo
