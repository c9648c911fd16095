"""Field-rating API: a wall's rooms, junctions, field tests and field prediction; the job's test plan.

Job-scoped like every endpoint (:class:`qa.api.views.JobScopedMixin`): a non-member gets 404; the
inspector writes, every member reads. Each answer about a prediction carries the caution that a
prediction is not a field test.
"""

from __future__ import annotations

from django.db import transaction
from django.http import HttpResponse
from drf_spectacular.types import OpenApiTypes
from drf_spectacular.utils import extend_schema
from rest_framework import mixins, viewsets
from rest_framework.response import Response

from .. import actions
from ..field.plan import job_test_plan, plan_csv
from ..field.prediction import field_prediction
from ..models import FieldTest, JunctionOverride, RoomPair, Wall
from . import field_serializers as fs
from .views import JobScopedMixin, WallChildMixin


class _Recorded:
    """Create, change and delete through the one write path (with an event), in one transaction."""

    noun = ""

    @transaction.atomic
    def perform_create(self, serializer):
        actions.save_field_input(self.actor(), self.wall, self.noun, serializer)

    @transaction.atomic
    def perform_update(self, serializer):
        actions.save_field_input(self.actor(), self.wall, self.noun, serializer)

    @transaction.atomic
    def perform_destroy(self, obj):
        actions.remove_field_input(
            self.actor(), self.wall, self.noun, obj, dict(self.get_serializer(obj).data)
        )


class RoomPairViewSet(_Recorded, WallChildMixin, viewsets.ModelViewSet):
    """The rooms on the two faces of a wall (volumes m³, receiving reverberation time s, area m²)."""

    serializer_class = fs.RoomPairSerializer
    queryset = RoomPair.objects.none()  # for the schema only
    noun = "rooms"
    http_method_names = ["get", "post", "patch", "put", "delete", "head", "options"]

    def get_queryset(self):
        return RoomPair.objects.filter(wall=self.wall).order_by("id")


class JunctionOverrideViewSet(_Recorded, WallChildMixin, viewsets.ModelViewSet):
    """Junctions a consultant entered; positions without one default from the job's building kind."""

    serializer_class = fs.JunctionOverrideSerializer
    queryset = JunctionOverride.objects.none()
    noun = "junction"

    def get_queryset(self):
        return JunctionOverride.objects.filter(wall=self.wall).order_by("position")


class FieldTestViewSet(
    _Recorded,
    WallChildMixin,
    mixins.ListModelMixin,
    mixins.RetrieveModelMixin,
    mixins.CreateModelMixin,
    mixins.DestroyModelMixin,
    viewsets.GenericViewSet,
):
    """Field tests of a wall: POST JSON ``bands`` or a multipart CSV ``file`` (band_hz,l1,l2,b2,t2)."""

    serializer_class = fs.FieldTestSerializer
    queryset = FieldTest.objects.none()
    noun = "field_test"

    def get_queryset(self):
        return FieldTest.objects.filter(wall=self.wall, removed=False).order_by("-tested_on", "-id")

    @transaction.atomic
    def perform_create(self, serializer):
        serializer.instance = actions.add_field_test(self.actor(), self.wall, serializer.validated_data)

    @transaction.atomic
    def perform_destroy(self, obj):
        actions.remove_field_test(self.actor(), obj)


class FieldPredictionViewSet(WallChildMixin, viewsets.GenericViewSet):
    """GET the wall's predicted field rating (ISO 12354-1): as designed, as walked and now, per room pair."""

    queryset = Wall.objects.none()
    serializer_class = fs.FieldPredictionSerializer

    @extend_schema(responses={200: fs.FieldPredictionSerializer}, tags=["field rating"])
    def retrieve(self, request, *args, **kwargs):
        self.wall.job = self.job
        return Response(field_prediction(self.wall))


class TestPlanViewSet(JobScopedMixin, viewsets.GenericViewSet):
    """GET the job's test plan: walls ranked by predicted field margin and by what the walk found."""

    queryset = Wall.objects.none()
    serializer_class = fs.TestPlanSerializer

    def right_needed(self) -> str:
        return "view"

    @extend_schema(responses={200: fs.TestPlanSerializer}, tags=["field rating"])
    def retrieve(self, request, *args, **kwargs):
        return Response(job_test_plan(self.job))

    @extend_schema(responses={(200, "text/csv"): OpenApiTypes.STR}, tags=["field rating"])
    def csv(self, request, *args, **kwargs):
        response = HttpResponse(plan_csv(job_test_plan(self.job)), content_type="text/csv; charset=utf-8")
        response["Content-Disposition"] = f'attachment; filename="test-plan-job-{self.job.pk}.csv"'
        return response


class BuildingKindViewSet(JobScopedMixin, viewsets.GenericViewSet):
    """GET or PUT the job's building kind (sets the default junctions of every wall's prediction)."""

    serializer_class = fs.BuildingKindSerializer
    queryset = Wall.objects.none()

    def right_needed(self) -> str:
        return "view" if self.request.method in ("GET", "HEAD", "OPTIONS") else "edit"

    @extend_schema(responses={200: fs.BuildingKindSerializer}, tags=["field rating"])
    def retrieve(self, request, *args, **kwargs):
        return Response({"building_kind": self.job.building_kind})

    @extend_schema(responses={200: fs.BuildingKindSerializer}, tags=["field rating"])
    @transaction.atomic
    def update(self, request, *args, **kwargs):
        serializer = self.get_serializer(data=request.data)
        serializer.is_valid(raise_exception=True)
        self.job.building_kind = serializer.validated_data["building_kind"]
        self.job.save(update_fields=["building_kind", "updated_at"])
        self.record("job.building_kind", self.job, {"building_kind": self.job.building_kind})
        return Response({"building_kind": self.job.building_kind})


class FieldTargetsViewSet(JobScopedMixin, viewsets.GenericViewSet):
    """GET or PUT the job's field targets per kind of wall (the rule set's field side)."""

    serializer_class = fs.FieldTargetsSerializer
    queryset = Wall.objects.none()

    def right_needed(self) -> str:
        return "view" if self.request.method in ("GET", "HEAD", "OPTIONS") else "edit"

    @extend_schema(responses={200: fs.FieldTargetsSerializer}, tags=["field rating"])
    def retrieve(self, request, *args, **kwargs):
        return Response({"field_targets": self.job.field_targets})

    @extend_schema(responses={200: fs.FieldTargetsSerializer}, tags=["field rating"])
    @transaction.atomic
    def update(self, request, *args, **kwargs):
        serializer = self.get_serializer(
            data=request.data, context={**self.get_serializer_context(), "job": self.job}
        )
        serializer.is_valid(raise_exception=True)
        self.job.field_targets = serializer.validated_data["field_targets"]
        self.job.save(update_fields=["field_targets", "updated_at"])
        self.record("job.field_targets", self.job, {"field_targets": self.job.field_targets})
        return Response({"field_targets": self.job.field_targets})
