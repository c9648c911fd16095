"""Routes of the walk (the offline phone app) and its sync endpoints."""

from __future__ import annotations

from django.urls import path

from .. import converters  # noqa: F401  (registers <id:...>)
from . import views as walk

urlpatterns = [
    path("walk/", walk.walk_shell, name="walk"),
    # /api/jobs/<job>/... : the walk's own endpoints (the REST resources live in qa/api/urls.py)
    path("api/jobs/<int:job_pk>/bundle/", walk.BundleView.as_view(), name="walk-bundle"),
    path("api/jobs/<int:job_pk>/sync/", walk.SyncView.as_view(), name="walk-sync"),
    path("api/jobs/<int:job_pk>/conflicts/", walk.ConflictListView.as_view(), name="walk-conflicts"),
    path(
        "api/jobs/<int:job_pk>/conflicts/<int:conflict_pk>/resolve/",
        walk.ConflictResolveView.as_view(),
        name="walk-conflict-resolve",
    ),
    path("api/jobs/<int:job_pk>/uploads/", walk.UploadOpenView.as_view(), name="walk-upload-open"),
    path(
        "api/jobs/<int:job_pk>/uploads/<uuid:photo_id>/", walk.UploadChunkView.as_view(), name="walk-upload"
    ),
    path(
        "api/jobs/<int:job_pk>/uploads/<uuid:photo_id>/finish/",
        walk.UploadFinishView.as_view(),
        name="walk-upload-finish",
    ),
]
