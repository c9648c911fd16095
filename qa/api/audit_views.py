"""The leak audit of one wall as JSON: ``GET /api/jobs/{job}/walls/{wall}/audit/``.

Read-only, for every member of the job (a non-member gets 404, as everywhere in the API). The body
comes from the wall's cached audit summary (:func:`qa.audit.audit_summary`), the same data the
pages and the hand-over report show; its shape is :func:`qa.audit.wall_json.audit_json`.
"""

from __future__ import annotations

from django.shortcuts import get_object_or_404
from drf_spectacular.types import OpenApiTypes
from drf_spectacular.utils import extend_schema
from rest_framework.response import Response
from rest_framework.views import APIView

from ..access import membership, require
from ..audit import audit_summary
from ..audit.wall_json import audit_json
from ..models import Wall


class WallAuditView(APIView):
    """The wall's leak audit: designed, as found, now, if the reported fixes hold; each finding's cost
    alone and in order and the path the whole-wall model priced; order, after, needed; validity flags
    and the engine version. Estimates, not a field test."""

    @extend_schema(responses={200: OpenApiTypes.OBJECT}, tags=["walls"])
    def get(self, request, job_pk, wall_pk):
        member = require(membership(request.user, job_pk), "view")
        wall = get_object_or_404(Wall.objects.live().select_related("wall_type"), pk=wall_pk, job=member.job)
        return Response(audit_json(audit_summary(wall), wall))
