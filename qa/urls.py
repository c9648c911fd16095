"""Site routes. Pages are namespaced ``qa:``; the API lives under /api/."""

from __future__ import annotations

from django.contrib import admin
from django.contrib.auth import views as auth_views
from django.urls import URLPattern, URLResolver, include, path

from . import converters  # noqa: F401  (registers <id:...>)
from .api import photo_views
from .views import pages

qa_patterns: list[URLPattern | URLResolver] = [
    path("", pages.job_list, name="job-list"),
    path("login/", pages.LoginView.as_view(), name="login"),
    path("logout/", auth_views.LogoutView.as_view(), name="logout"),
    path("jobs/<id:job_pk>/", pages.job_page, name="job"),
    path("jobs/<id:job_pk>/walls/<id:wall_pk>/", pages.wall_page, name="wall"),
    path(
        "jobs/<id:job_pk>/photos/<uuid:photo_id>/<str:kind>",
        photo_views.photo_file,
        name="photo-file",
    ),
]

qa_patterns += [
    path("", include("qa.walk.urls")),
    path("", include("qa.views.urls")),
]

urlpatterns = [
    path("", include((qa_patterns, "qa"))),
    path("api/", include(("qa.api.urls", "api"))),
    path("admin/", admin.site.urls),
]
