from __future__ import annotations

from django.apps import AppConfig


class QaConfig(AppConfig):
    name = "qa"
    verbose_name = "Sealwalk inspection record"
    default_auto_field = "django.db.models.BigAutoField"

    def ready(self) -> None:
        # Phones send HEIC; registering the opener lets Pillow read it everywhere.
        from pillow_heif import register_heif_opener

        register_heif_opener()
        from . import signals  # noqa: F401  (cache invalidation)
        from .field import stamps  # noqa: F401  (field-prediction cache invalidation)
