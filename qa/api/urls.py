"""API routes: /api/jobs/{job}/..., the schema and the docs page."""

from __future__ import annotations

from django.urls import include, path
from rest_framework.routers import SimpleRouter

from .. import converters  # noqa: F401  (registers <id:...>)
from . import audit_views, auth, docs, field, photo_views, views

jobs = SimpleRouter()
jobs.register("jobs", views.JobViewSet, basename="job")

in_job = SimpleRouter()
in_job.register("members", views.MemberViewSet, basename="member")
in_job.register("wall-types", views.WallTypeViewSet, basename="walltype")
in_job.register("walls", views.WallViewSet, basename="wall")
in_job.register("findings", views.FindingViewSet, basename="finding")
in_job.register("photos", photo_views.PhotoViewSet, basename="photo")
in_job.register("events", views.EventViewSet, basename="event")

in_wall = SimpleRouter()
in_wall.register("openings", views.OpeningViewSet, basename="opening")
in_wall.register("seal-points", views.SealPointViewSet, basename="sealpoint")
in_wall.register("rooms", field.RoomPairViewSet, basename="roompair")
in_wall.register("junctions", field.JunctionOverrideViewSet, basename="junction")
in_wall.register("field-tests", field.FieldTestViewSet, basename="fieldtest")

urlpatterns = [
    path("", include(jobs.urls)),
    path("jobs/<id:job_pk>/", include(in_job.urls)),
    path("jobs/<id:job_pk>/walls/<id:wall_pk>/", include(in_wall.urls)),
    path(
        "jobs/<id:job_pk>/walls/<id:wall_pk>/audit/",
        audit_views.WallAuditView.as_view(),
        name="wall-audit",
    ),
    path(
        "jobs/<id:job_pk>/walls/<id:wall_pk>/field-prediction/",
        field.FieldPredictionViewSet.as_view({"get": "retrieve"}),
        name="field-prediction",
    ),
    path("jobs/<id:job_pk>/test-plan/", field.TestPlanViewSet.as_view({"get": "retrieve"}), name="test-plan"),
    path(
        "jobs/<id:job_pk>/test-plan.csv", field.TestPlanViewSet.as_view({"get": "csv"}), name="test-plan-csv"
    ),
    path(
        "jobs/<id:job_pk>/building-kind/",
        field.BuildingKindViewSet.as_view({"get": "retrieve", "put": "update"}),
        name="building-kind",
    ),
    path(
        "jobs/<id:job_pk>/field-targets/",
        field.FieldTargetsViewSet.as_view({"get": "retrieve", "put": "update"}),
        name="field-targets",
    ),
    path("auth/token/", auth.ObtainToken.as_view(), name="token"),
    path("auth/token/revoke/", auth.RevokeToken.as_view(), name="token-revoke"),
    path("schema/", docs.schema_view, name="schema"),
    path("docs/", docs.docs_page, name="docs"),
]
