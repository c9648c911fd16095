"""Routes of the leak-audit views, the crew list and the hand-over report."""

from __future__ import annotations

urlpatterns: list = []
