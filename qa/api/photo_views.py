"""Photo upload and the only route to photo files (membership checked on every request)."""

from __future__ import annotations

import uuid

from django.db import IntegrityError, transaction
from django.http import FileResponse, Http404
from django.views.decorators.http import require_GET
from rest_framework import mixins, status, viewsets
from rest_framework.exceptions import ValidationError
from rest_framework.parsers import FormParser, MultiPartParser
from rest_framework.response import Response

from .. import actions
from ..access import membership, require
from ..choices import PhotoPurpose
from ..models import Photo
from . import serializers as s
from .filters import apply_filters
from .views import JobScopedMixin


class PhotoViewSet(
    JobScopedMixin,
    mixins.ListModelMixin,
    mixins.RetrieveModelMixin,
    mixins.CreateModelMixin,
    mixins.DestroyModelMixin,
    viewsets.GenericViewSet,
):
    """Photos of a job. Upload as multipart with ``image``; the photo ``id`` is made on the device,
    so uploading the same id again returns the stored photo instead of a twin."""

    serializer_class = s.PhotoSerializer
    queryset = Photo.objects.none()  # for the schema only; get_queryset scopes to the job
    parser_classes = [MultiPartParser, FormParser]
    lookup_value_regex = "[0-9a-fA-F-]{36}"
    write_right = "fix"  # inspectors and crews add photos; owners do not

    def get_queryset(self):
        photos = Photo.objects.filter(job=self.job, removed=False).select_related("uploaded_by")
        return apply_filters(
            photos, self.request.query_params, {"finding": ("finding_id", "id"), "wall": ("wall_id", "id")}
        )

    def create(self, request, *args, **kwargs):
        photo_id = request.data.get("id") if hasattr(request.data, "get") else None
        if photo_id and _is_uuid(photo_id):
            existing = Photo.objects.filter(pk=photo_id).first()
            if existing is not None:
                if existing.job_id != self.job.id:
                    raise ValidationError({"id": ["is already used"]})
                return Response(self.get_serializer(existing).data, status=status.HTTP_200_OK)
        serializer = self.get_serializer(data=request.data)
        serializer.is_valid(raise_exception=True)
        data = serializer.validated_data
        try:
            photo = actions.store_photo(
                self.actor(),
                data["image"].read(),
                wall=data["wall"],
                finding=data.get("finding"),
                purpose=data.get("purpose", PhotoPurpose.DEFECT),
                photo_id=data.get("id"),
                captured_at=data.get("captured_at"),
                caption=data.get("caption", ""),
            )
        except IntegrityError:
            # The same photo id arrived twice at once; the other request stored it first.
            photo = Photo.objects.get(pk=data["id"], job=self.job)
            return Response(self.get_serializer(photo).data, status=status.HTTP_200_OK)
        return Response(self.get_serializer(photo).data, status=status.HTTP_201_CREATED)

    @transaction.atomic
    def perform_destroy(self, photo):
        require(self.member, "edit")
        photo.removed = True
        photo.save(update_fields=["removed"])
        self.record("photo.removed", photo)


def _is_uuid(value) -> bool:
    try:
        uuid.UUID(str(value))
    except ValueError:
        return False
    return True


@require_GET
def photo_file(request, job_pk, photo_id, kind):
    """Stream a photo or its thumbnail after checking the user is a member of its job."""
    membership(request.user, job_pk)
    try:
        photo = Photo.objects.get(pk=photo_id, job_id=job_pk, removed=False)
    except (Photo.DoesNotExist, ValueError):
        raise Http404("No such photo") from None
    field = photo.image if kind == "image" else photo.thumbnail
    response = FileResponse(field.open("rb"), content_type="image/jpeg")
    response["Cache-Control"] = "private, max-age=86400"
    response["X-Content-Type-Options"] = "nosniff"
    return response
