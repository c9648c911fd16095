"""The hand-over report: its content (hashed for sign-off), the PDF, the punch-list CSV, sign-off."""

from __future__ import annotations

from .content import content_sha256, file_stem, last_sign_off, punch_list_csv, report_content
from .pdf import cached_pdf, render_pdf

__all__ = [
    "content_sha256",
    "file_stem",
    "last_sign_off",
    "punch_list_csv",
    "cached_pdf",
    "render_pdf",
    "report_content",
]
