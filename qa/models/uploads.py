"""A photo upload in progress: the walk sends a photo in chunks and may resume after a cut-off."""

from __future__ import annotations

from django.conf import settings
from django.db import models

from ..choices import PhotoPurpose
from .findings import Finding
from .jobs import Job
from .walls import Wall


class PhotoUpload(models.Model):
    """Bytes received so far for one device-made photo id.

    The received bytes live in the database row rather than on disk so that any server
    process can take the next chunk (several stateless workers, media in a bucket); a
    downscaled phone photo is a few hundred kilobytes. The row is deleted once the photo
    is stored.
    """

    id = models.UUIDField(primary_key=True, help_text="The photo id made on the device.")
    job = models.ForeignKey(Job, on_delete=models.CASCADE, related_name="+")
    wall = models.ForeignKey(Wall, on_delete=models.CASCADE, related_name="+")
    finding = models.ForeignKey(Finding, null=True, blank=True, on_delete=models.CASCADE, related_name="+")
    purpose = models.CharField(max_length=8, choices=PhotoPurpose.choices, default=PhotoPurpose.DEFECT)
    captured_at = models.DateTimeField(null=True, blank=True)
    caption = models.CharField(max_length=200, blank=True)
    total_bytes = models.PositiveIntegerField()
    sha256 = models.CharField(max_length=64, help_text="Of the whole file, as the device will send it.")
    received = models.BinaryField(default=b"")
    user = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.CASCADE, related_name="+")
    device_id = models.CharField(max_length=64, blank=True)
    created_at = models.DateTimeField(auto_now_add=True)
    updated_at = models.DateTimeField(auto_now=True)

    class Meta:
        ordering = ["created_at"]

    def __str__(self) -> str:
        return f"upload {self.id} ({len(self.received)}/{self.total_bytes} bytes)"

    @property
    def offset(self) -> int:
        return len(self.received)
