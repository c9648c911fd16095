from __future__ import annotations

import uuid

from django.conf import settings
from django.db import models

from ..choices import PhotoPurpose
from .findings import Finding
from .jobs import Job
from .walls import Wall


def photo_path(photo: Photo, filename: str) -> str:
    # Random names only: nothing about the job, wall or person leaks into storage keys.
    return f"photos/{photo.job_id}/{photo.id}.jpg"


def thumb_path(photo: Photo, filename: str) -> str:
    return f"photos/{photo.job_id}/{photo.id}-thumb.jpg"


class Photo(models.Model):
    """A photo of a defect, a fix or a check.

    ``id`` is made on the device, so a replayed upload is one photo, not two.
    """

    id = models.UUIDField(primary_key=True, default=uuid.uuid4)
    job = models.ForeignKey(Job, on_delete=models.CASCADE, related_name="photos")
    wall = models.ForeignKey(Wall, on_delete=models.CASCADE, related_name="photos")
    finding = models.ForeignKey(
        Finding, null=True, blank=True, on_delete=models.CASCADE, related_name="photos"
    )
    purpose = models.CharField(max_length=8, choices=PhotoPurpose.choices, default=PhotoPurpose.DEFECT)
    image = models.ImageField(upload_to=photo_path)
    thumbnail = models.ImageField(upload_to=thumb_path)
    width = models.PositiveIntegerField(default=0)
    height = models.PositiveIntegerField(default=0)
    bytes = models.PositiveIntegerField(default=0)
    thumbnail_bytes = models.PositiveIntegerField(default=0)
    sha256 = models.CharField(max_length=64, help_text="Of the stored (cleaned) image.")
    received_sha256 = models.CharField(
        max_length=64, blank=True, help_text="Of the file as the device sent it."
    )
    original_format = models.CharField(max_length=10, blank=True)
    captured_at = models.DateTimeField(null=True, blank=True)
    uploaded_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    uploaded_at = models.DateTimeField(auto_now_add=True)
    caption = models.CharField(max_length=200, blank=True)
    removed = models.BooleanField(default=False)

    class Meta:
        ordering = ["uploaded_at", "id"]

    def __str__(self) -> str:
        return f"photo {self.id}"
