"""Routes of the walk (the offline phone app) and its sync endpoints."""

from __future__ import annotations

urlpatterns: list = []
