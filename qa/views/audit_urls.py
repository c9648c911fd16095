"""Routes of the leak-audit views, the crew list and the hand-over report."""

from __future__ import annotations

from django.urls import path

from .. import converters  # noqa: F401  (registers <id:...>)
from . import audit

urlpatterns: list = [
    path("jobs/<id:job_pk>/crew/", audit.crew_page, name="crew"),
    path("jobs/<id:job_pk>/check/", audit.check_page, name="check"),
    path("jobs/<id:job_pk>/findings/<id:finding_pk>/fixed/", audit.mark_fixed, name="finding-fixed"),
    path("jobs/<id:job_pk>/findings/<id:finding_pk>/check/", audit.check_finding, name="finding-check"),
    path("jobs/<id:job_pk>/report/", audit.report_page, name="report"),
    path("jobs/<id:job_pk>/report/handover.pdf", audit.report_pdf, name="report-pdf"),
    path("jobs/<id:job_pk>/report/punch-list.csv", audit.punch_list_csv, name="report-csv"),
    path("jobs/<id:job_pk>/report/sign/", audit.sign_off, name="report-sign"),
]
