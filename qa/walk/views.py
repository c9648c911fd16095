"""The walk: the shell page of the offline phone app and its endpoints (bundle, sync, uploads, conflicts).

Thin views: the access helper resolves the job (404 for a non-member, 403 without the right),
:mod:`.bundle`, :mod:`.sync` and :mod:`.uploads` do the work.
"""

from __future__ import annotations

from django.conf import settings
from django.contrib.auth.decorators import login_required
from django.db import transaction
from django.http import HttpResponse
from django.shortcuts import render
from django.views.decorators.csrf import ensure_csrf_cookie
from drf_spectacular.types import OpenApiTypes
from drf_spectacular.utils import extend_schema
from rest_framework import status
from rest_framework.exceptions import ValidationError
from rest_framework.parsers import BaseParser
from rest_framework.response import Response
from rest_framework.views import APIView

from ..access import membership, require
from ..actions import Actor, Reject
from ..api.parsers import BoundedJSONParser
from ..models import Conflict, Job
from ..photos import PhotoError
from .bundle import bundle_json
from .sync import apply_batch, conflict_data, resolve
from .uploads import (
    OffsetMismatch,
    UploadLimit,
    append_chunk,
    finish_upload,
    open_upload,
    photo_data,
    upload_state,
)

#: Largest chunk accepted in one request (the walk sends 256 KiB).
MAX_CHUNK = 2 * 1024 * 1024


@login_required
@ensure_csrf_cookie
def walk_shell(request):
    """The app shell. It holds no job data: the modules read everything from IndexedDB."""
    jobs = Job.objects.for_user(request.user).values("id", "name")
    return render(request, "qa/walk/shell.html", {"jobs_hint": list(jobs)})


def _bad(exc: Reject, code: int = status.HTTP_400_BAD_REQUEST) -> Response:
    return Response(exc.errors, status=code)


class WalkView(APIView):
    """Resolve the job for every request; ``right`` is what a write needs."""

    right = "view"

    def initial(self, request, *args, **kwargs):
        super().initial(request, *args, **kwargs)
        self.member = membership(request.user, kwargs.get("job_pk"))
        self.job = self.member.job
        require(self.member, "view" if request.method in ("GET", "HEAD", "OPTIONS") else self.right)

    def device_id(self) -> str:
        return str(self.request.headers.get("X-Device-Id", ""))[:64]


@extend_schema(request=OpenApiTypes.OBJECT, responses=OpenApiTypes.OBJECT, tags=["walk"])
class BundleView(WalkView):
    """GET the job bundle. Answers 304 when ``If-None-Match`` names the current version."""

    def get(self, request, job_pk: int):
        version, text = bundle_json(self.job, self.member, max_age=settings.LIST_MAX_AGE)
        etag = f'"{version}"'
        if request.headers.get("If-None-Match") == etag:
            return Response(status=status.HTTP_304_NOT_MODIFIED, headers={"ETag": etag})
        # Written once by bundle_json: a bundle is megabytes, and a second encoding doubled its cost.
        answer = HttpResponse(text, content_type="application/json")
        answer["ETag"], answer["Cache-Control"] = etag, "private, no-cache"
        return answer


@extend_schema(request=OpenApiTypes.OBJECT, responses=OpenApiTypes.OBJECT, tags=["walk"])
class SyncView(WalkView):
    """POST ``{"device_id": str, "ops": [...]}``: apply each operation exactly once, answer each."""

    right = "fix"  # inspectors and crews send operations; each one checks its own right
    parser_classes = [BoundedJSONParser]

    def post(self, request, job_pk: int):
        body = request.data if isinstance(request.data, dict) else {}
        device_id = body.get("device_id", self.device_id())
        results = apply_batch(self.job, self.member, body.get("ops"), device_id or "")
        counts: dict[str, int] = {}
        for r in results:
            counts[r.get("status", "rejected")] = counts.get(r.get("status", "rejected"), 0) + 1
        return Response({"results": results, "counts": counts})


@extend_schema(request=OpenApiTypes.OBJECT, responses=OpenApiTypes.OBJECT, tags=["walk"])
class ConflictListView(WalkView):
    def get(self, request, job_pk: int):
        require(self.member, "edit")
        conflicts = Conflict.objects.filter(finding__job=self.job).select_related("finding", "created_by")
        if request.query_params.get("open") == "1":
            conflicts = conflicts.filter(resolution="")
        return Response({"conflicts": [conflict_data(c, self.job) for c in conflicts]})


@extend_schema(request=OpenApiTypes.OBJECT, responses=OpenApiTypes.OBJECT, tags=["walk"])
class ConflictResolveView(WalkView):
    """POST ``{"keep": "server" | "device"}``: the inspector settles a conflict."""

    right = "edit"

    def post(self, request, job_pk: int, conflict_pk: int):
        try:
            with transaction.atomic():
                body = request.data if isinstance(request.data, dict) else {}
                actor = Actor(self.member, device_id=self.device_id())
                answer = resolve(actor, conflict_pk, body.get("keep"))
        except Reject as exc:
            return _bad(exc, status.HTTP_409_CONFLICT if "conflict" in exc.errors else 400)
        return Response(answer)


class RawBytesParser(BaseParser):
    media_type = "application/octet-stream"

    def parse(self, stream, media_type=None, parser_context=None):
        data = stream.read(MAX_CHUNK + 1) if stream is not None else b""
        if len(data) > MAX_CHUNK:
            raise ValidationError({"chunk": [f"at most {MAX_CHUNK} bytes per request"]})
        return data


@extend_schema(request=OpenApiTypes.OBJECT, responses=OpenApiTypes.OBJECT, tags=["walk"])
class UploadOpenView(WalkView):
    """POST ``{id, finding | wall, purpose, total_bytes, sha256, captured_at}`` → the upload's offset."""

    right = "fix"
    parser_classes = [BoundedJSONParser]

    def post(self, request, job_pk: int):
        try:
            answer, created = open_upload(self.member, request.data, self.device_id())
        except UploadLimit as exc:
            # Not the device's fault for good: it may open more once its open uploads finish.
            return _bad(exc, status.HTTP_429_TOO_MANY_REQUESTS)
        except Reject as exc:
            return _bad(exc)
        return Response(answer, status=status.HTTP_201_CREATED if created else status.HTTP_200_OK)


@extend_schema(request=OpenApiTypes.BINARY, responses=OpenApiTypes.OBJECT, tags=["walk"])
class UploadChunkView(WalkView):
    """GET the offset; PUT raw bytes with ``?offset=N`` (409 with the right offset when it is wrong)."""

    right = "fix"
    parser_classes = [RawBytesParser]

    def get(self, request, job_pk: int, photo_id):
        try:
            return Response(upload_state(self.member, photo_id))
        except Reject as exc:
            return _bad(exc, status.HTTP_404_NOT_FOUND)

    def put(self, request, job_pk: int, photo_id):
        raw = request.query_params.get("offset", "")
        if not (raw.isascii() and raw.isdigit() and len(raw) <= 12):
            return Response({"offset": ["give the chunk's start as ?offset=N"]}, status=400)
        chunk = request.data if isinstance(request.data, bytes) else b""
        if not chunk:
            return Response({"chunk": ["send the bytes as application/octet-stream"]}, status=400)
        try:
            return Response(append_chunk(self.member, photo_id, int(raw), chunk))
        except OffsetMismatch as exc:
            return Response({**exc.errors, "expected": exc.offset}, status=status.HTTP_409_CONFLICT)
        except Reject as exc:
            return _bad(exc, status.HTTP_404_NOT_FOUND if "id" in exc.errors else 400)


@extend_schema(request=OpenApiTypes.OBJECT, responses=OpenApiTypes.OBJECT, tags=["walk"])
class UploadFinishView(WalkView):
    right = "fix"

    def post(self, request, job_pk: int, photo_id):
        try:
            photo, created = finish_upload(self.member, photo_id)
        except Reject as exc:
            return _bad(exc, status.HTTP_404_NOT_FOUND if "id" in exc.errors else 400)
        except PhotoError as exc:
            field, _, rule = str(exc).partition(": ")
            return Response({field: [rule]}, status=400)
        return Response(photo_data(photo), status=status.HTTP_201_CREATED if created else status.HTTP_200_OK)
